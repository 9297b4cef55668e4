"""In Chromium: the portfolio chart is drawn, a flag chosen in the filter form leaves only the
flagged fields, a column header sorts, a flag's reason shows on keyboard focus, and the page
logs no console errors."""


def _numbers(page, col):
    texts = page.locator(f'#portfolio-table tbody td[data-col="{col}"]').all_inner_texts()
    return [float(t.replace(",", "")) for t in texts if t.strip() not in ("–", "")]


def test_portfolio_filter_sort_chart(page, live_server, console_errors, screenshot_dir):
    page.goto(live_server + "/")
    page.wait_for_selector("#chart-portfolio[data-drawn='true']", timeout=15000)
    assert page.locator("#chart-portfolio .scatterlayer .trace").count() >= 2
    all_rows = page.locator("#portfolio-table tbody tr").count()
    assert all_rows == 12
    page.screenshot(path=str(screenshot_dir / "portfolio.png"), full_page=True)

    # choose a flag through the form, as a person would
    select = page.get_by_label("Flag", exact=True)
    codes = [
        v
        for v in select.locator("option").evaluate_all("os => os.map(o => o.value)")
        if v not in ("", "any", "none")
    ]
    assert codes, "the demo portfolio has flagged fields"
    code = "compartment_signature" if "compartment_signature" in codes else codes[0]
    select.select_option(value=code)
    with page.expect_navigation():
        page.get_by_role("button", name="Apply").click()
    assert f"flag={code}" in page.url, page.url
    rows = page.locator("#portfolio-table tbody tr")
    n = rows.count()
    assert 1 <= n < all_rows
    for i in range(n):
        assert rows.nth(i).locator(f'li[data-code="{code}"]').count() == 1
    assert page.locator("#totals-filtered").is_visible()
    assert page.locator("#totals-table tr[data-total='volumetric'] td").first.inner_text() == str(n)

    # a flag's reason appears when its chip gets keyboard focus
    chip = page.locator(f'li[data-code="{code}"] .flag-chip').first
    chip.focus()
    reason = page.locator(f'li[data-code="{code}"] .flag-reason').first
    assert reason.is_visible() and len(reason.inner_text()) > 10
    page.screenshot(path=str(screenshot_dir / "portfolio-filtered.png"), full_page=True)

    # clear the filter, then sort by the dynamic best GIIP with the header link, both ways
    with page.expect_navigation():
        page.locator("#clear-filters").click()
    with page.expect_navigation():
        page.locator('a[data-sort="dynamic_best"]').click()
    th = page.locator('th:has(a[data-sort="dynamic_best"])')
    assert th.get_attribute("aria-sort") == "ascending"
    values = _numbers(page, "dynamic_best")
    assert len(values) >= 5 and values == sorted(values)
    with page.expect_navigation():
        page.locator('a[data-sort="dynamic_best"]').click()
    assert th.get_attribute("aria-sort") == "descending"
    assert _numbers(page, "dynamic_best") == sorted(values, reverse=True)
    page.wait_for_selector("#chart-portfolio[data-drawn='true']", timeout=15000)

    # printed: no navigation or form, the whole table, black on white
    page.emulate_media(media="print")
    assert (
        not page.locator("header.topbar").is_visible() and not page.locator("#portfolio-filters").is_visible()
    )
    scroll = page.locator("#portfolio-table").locator("xpath=..")  # every table has a scroll box now
    assert scroll.evaluate("e => getComputedStyle(e).overflowX") == "visible"
    colours = page.locator("#portfolio-table thead th").first.evaluate(
        "e => [getComputedStyle(e).color, getComputedStyle(e).backgroundColor]"
    )
    assert colours == ["rgb(0, 0, 0)", "rgb(255, 255, 255)"]
    page.screenshot(path=str(screenshot_dir / "portfolio-print.png"), full_page=True)
    page.emulate_media(media="screen")
    assert page.locator("#portfolio-filters").is_visible()
    assert console_errors == []
