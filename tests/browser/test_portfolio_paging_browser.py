"""In Chromium (issue 17): the portfolio table in pages. With five rows a page, the demo's
twelve fields take three pages; Next and Previous keep the sort, the pages together list
every field once in the sorted order, and the totals count all twelve on every page."""


def test_pages_follow_the_sort_and_cover_every_field(page, live_server, console_errors, screenshot_dir):
    page.goto(live_server + "/?sort=dynamic_best&order=desc&per_page=12")
    whole = page.eval_on_selector_all("#portfolio-table tbody tr", "rs => rs.map(r => r.dataset.fieldId)")
    assert len(whole) == 12
    page.goto(live_server + "/?sort=dynamic_best&order=desc&per_page=5")
    seen = []
    for number in (1, 2, 3):
        assert page.locator("#portfolio-pager .page-of").inner_text() == f"Page {number} of 3"
        assert page.locator("#totals-h").inner_text().startswith("Totals of the 12 fields")
        seen += page.eval_on_selector_all("#portfolio-table tbody tr", "rs => rs.map(r => r.dataset.fieldId)")
        if number == 2:
            page.screenshot(path=str(screenshot_dir / "portfolio-page-2.png"), full_page=True)
        if number < 3:
            page.locator("#portfolio-pager a.next-page").click()
            page.wait_for_url(f"**page={number + 1}")
    assert seen == whole
    page.locator("#portfolio-pager a.prev-page").click()
    page.wait_for_url("**page=2")
    assert page.locator("th[aria-sort='descending'] a").get_attribute("data-sort") == "dynamic_best"
    page.get_by_role("link", name="all", exact=True).click()
    assert page.locator("#portfolio-table tbody tr").count() == 12
    assert console_errors == []
