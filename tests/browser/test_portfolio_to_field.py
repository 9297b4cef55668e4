"""In Chromium: open the portfolio, go to a field, see the p/z chart drawn, no console errors."""


def test_portfolio_to_field_chart(page, live_server, console_errors, screenshot_dir):
    page.goto(live_server + "/")
    assert page.locator("h1").inner_text() == "Portfolio"
    assert page.locator("#portfolio-table tbody tr").count() == 12
    page.screenshot(path=str(screenshot_dir / "portfolio.png"), full_page=True)
    page.get_by_role("link", name="Amberlode").click()
    page.wait_for_selector("#chart-pz[data-drawn='true']", timeout=15000)
    assert page.locator("#chart-pz .scatterlayer .trace").count() >= 3
    assert page.locator("h1").inner_text() == "Amberlode"
    page.screenshot(path=str(screenshot_dir / "field.png"), full_page=True)
    assert console_errors == []
