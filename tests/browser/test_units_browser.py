"""In Chromium: the header's unit switch changes what the pages show, for this user only."""

from tests.browser.conftest import BROWSER_USERS, log_in


def test_switch_units_from_the_header(anon_page, live_server, console_errors):
    page = anon_page
    # The approver's own browser: the engineer account other browser tests use keeps its units.
    log_in(page, live_server, BROWSER_USERS["approver"])
    page.goto(live_server + "/jobs")
    assert "oilfield" in page.locator("#units-now").inner_text()
    page.get_by_label("Units").select_option("si")
    with page.expect_navigation():
        page.get_by_role("button", name="Show").click()
    assert page.url.endswith("/jobs")  # back on the page it was switched from
    assert "SI" in page.locator("#units-now").inner_text()
    assert page.locator("#unit-system").input_value() == "si"
    page.get_by_label("Units").select_option("")
    with page.expect_navigation():
        page.get_by_role("button", name="Show").click()
    assert "oilfield" in page.locator("#units-now").inner_text()
    assert console_errors == []
