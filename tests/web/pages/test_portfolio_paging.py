"""The portfolio table in pages (issue 17): sorting and filtering cover the whole portfolio,
the page shows one slice of it, links keep the query, and the totals and chart still add
every field that matches. Oracle: the same query without paging (one page of 5,000)."""

import re

from tests.web.pages.test_portfolio import _ids, _totals, portfolio  # noqa: F401 - the fixture


def _pager_links(html):
    nav = re.search(r'<nav class="pager" id="portfolio-pager".*?</nav>', html, re.S).group(0)
    return dict(re.findall(r'<a rel="(prev|next)" href="([^"]+)"', nav))


def test_pages_are_slices_of_the_whole_sorted_portfolio(portfolio, client):  # noqa: F811
    whole = _ids(client.get("/?sort=dynamic_best&order=desc&per_page=5000").text)
    assert len(whole) == 4
    first = client.get("/?sort=dynamic_best&order=desc&per_page=3").text
    assert _ids(first) == whole[:3]
    assert "Showing 1–3 of 4 fields, page 1 of 2." in first
    links = _pager_links(first)
    assert (
        "prev" not in links and links["next"] == "?sort=dynamic_best&amp;order=desc&amp;per_page=3&amp;page=2"
    )
    second = client.get("/?sort=dynamic_best&order=desc&per_page=3&page=2").text
    assert _ids(second) == whole[3:]
    assert _pager_links(second) == {"prev": "?sort=dynamic_best&amp;order=desc&amp;per_page=3"}
    # totals and chart cover all four fields on either page, as without paging
    everything = client.get("/").text
    for html in (first, second):
        assert "Totals of the 4 fields that match (every page)" in html
        assert _totals(html, "volumetric") == _totals(everything, "volumetric")
        assert _totals(html, "dynamic") == _totals(everything, "dynamic")


def test_filters_apply_before_paging_and_links_keep_the_page_size(portfolio, client):  # noqa: F811
    ids = portfolio
    html = client.get("/?asset=South&per_page=1").text
    assert _ids(html) == [ids["Wetfield"]]
    assert "Showing 1–1 of 2 fields (asset South; 4 in all), page 1 of 2." in html
    assert 'href="?asset=South&amp;sort=dynamic_best&amp;per_page=1" data-sort="dynamic_best"' in html
    assert '<input type="hidden" name="per_page" value="1">' in html
    assert _ids(client.get("/?asset=South&per_page=1&page=2").text) == [ids["Youngfield"]]


def test_the_default_page_holds_100_rows_and_old_urls_still_work(portfolio, client):  # noqa: F811
    html = client.get("/?sort=name&order=asc").text
    assert len(_ids(html)) == 4 and "Showing 4 of 4 fields." in html
    assert "Totals of the 4 fields shown" in html
    assert re.search(r'Rows per page: <a href="\?per_page=50" data-per-page="50">50</a> · <strong', html)


def test_a_page_past_the_last_or_a_bad_size_is_a_422_naming_it(portfolio, client):  # noqa: F811
    for query, parameter in (
        ("page=3&per_page=3", "page"),
        ("page=0", "page"),
        ("per_page=0", "per_page"),
        ("per_page=5001", "per_page"),
        ("page=x", "page"),
    ):
        r = client.get(f"/?{query}")
        assert r.status_code == 422 and f"query.{parameter}:" in r.text, query
