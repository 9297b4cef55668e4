"""In Chromium: the chart library crosses the network once, gzipped, and a second page with
charts takes it from the browser's cache without asking the server (issue 16, point 3)."""

from __future__ import annotations

from tests.browser.conftest import BROWSER_USERS, log_in

RESOURCE = """(part) => performance.getEntriesByType('resource')
    .filter((e) => e.name.includes(part))
    .map((e) => ({url: e.name, sent: e.transferSize, size: e.decodedBodySize}))"""


def test_chart_library_is_fetched_once_compressed_then_cached(anon_page, live_server, console_errors):
    page = anon_page  # a fresh browser profile: nothing cached yet
    requests: list[str] = []
    page.on("request", lambda r: requests.append(r.url) if "plotly" in r.url else None)
    log_in(page, live_server, BROWSER_USERS["engineer"])  # lands on the portfolio, which has a chart
    assert page.url == live_server + "/"
    page.wait_for_selector("#chart-portfolio[data-drawn='true']")
    (first,) = page.evaluate(RESOURCE, "plotly")
    assert "/assets/" in first["url"]
    assert first["size"] > 4_000_000 and 0 < first["sent"] < 2_000_000  # gzipped on the wire
    page.locator("#portfolio-table tbody th a").first.click()
    page.wait_for_selector("#chart-pz[data-drawn='true']")
    (second,) = page.evaluate(RESOURCE, "plotly")
    assert second["url"] == first["url"] and second["size"] == first["size"]
    assert second["sent"] == 0  # from the browser's cache: the server was not asked
    page.goto(live_server + "/jobs")
    assert page.evaluate(RESOURCE, "plotly") == []  # a page without charts does not load it
    assert len(requests) == 2 and requests[0] == requests[1]  # the second came from the cache
    assert console_errors == []
