"""In Chromium: from a field page through its data pages by the "Field data" links, paging and
searching without scripts of our own, the fluid charts drawn, and no console errors."""

import re


def _data_link(page, name):
    with page.expect_navigation():
        page.get_by_role("navigation", name="Field data").get_by_role("link", name=name).click()


def test_field_data_pages(page, live_server, console_errors, screenshot_dir):
    page.goto(live_server + "/")
    page.get_by_role("link", name="Amberlode").click()
    assert page.locator("h1").inner_text() == "Amberlode"

    _data_link(page, "Wells")
    assert page.locator("#wells-table tbody tr").count() == 3
    assert page.locator("#wells-table tbody th").all_inner_texts() == ["AMB-1", "AMB-2", "AMB-3"]
    page.screenshot(path=str(screenshot_dir / "data-wells.png"), full_page=True)

    _data_link(page, "Pressure surveys")
    assert page.locator("#showing-top").inner_text() == "Showing 1–50 of 70 surveys, page 1 of 2"
    with page.expect_navigation():
        page.get_by_role("link", name="Next page (page 2)").first.click()
    assert page.locator("#showing-top").inner_text() == "Showing 51–70 of 70 surveys, page 2 of 2"
    assert page.locator("#surveys-table tbody tr").count() == 20
    page.get_by_label("Well name contains").fill("amb-2")
    page.get_by_label("Rows per page").select_option("25")
    with page.expect_navigation():
        page.get_by_role("button", name="Search").click()
    assert "well=amb-2" in page.url and not re.search(r"[?&]page=", page.url)  # a new search: page 1
    assert page.locator("#showing-top").inner_text() == "Showing 1–25 of 25 surveys, page 1 of 1"
    assert set(page.locator("#surveys-table tbody th").all_inner_texts()) == {"AMB-2"}
    page.screenshot(path=str(screenshot_dir / "data-surveys.png"), full_page=True)

    _data_link(page, "Production")
    page.get_by_label("Months from").fill("2020-01-01")
    page.get_by_label("Months to").fill("2020-12-31")
    with page.expect_navigation():
        page.get_by_role("button", name="Search").click()
    assert page.locator("#showing-top").inner_text() == "Showing 1–36 of 36 production months, page 1 of 1"
    months = set(page.locator("#production-table tbody td:first-child").all_inner_texts())
    assert months == {f"2020-{m:02d}" for m in range(1, 13)}
    assert re.search(r"separator gas [\d,.]+ Bscf", page.locator("#production-totals").inner_text())

    _data_link(page, "Fluid and PVT")
    page.wait_for_selector("#chart-z[data-drawn='true']", timeout=15000)
    page.wait_for_selector("#chart-bg[data-drawn='true']", timeout=15000)
    assert page.locator("#chart-z .scatterlayer .trace").count() >= 1
    assert page.locator("#no-lab").count() == 1  # the demo's fields have no lab table
    page.screenshot(path=str(screenshot_dir / "data-fluid.png"), full_page=True)

    _data_link(page, "Volumetric estimates")
    assert page.locator("#volumetric-table tbody tr").count() >= 1
    assert "Current dynamic GIIP" in page.locator("#dynamic-giip").inner_text()
    page.screenshot(path=str(screenshot_dir / "data-volumetric.png"), full_page=True)

    with page.expect_navigation():
        page.locator("#crumb-field").click()
    assert page.locator("h1").inner_text() == "Amberlode"
    assert console_errors == []


def test_unit_switch_on_a_searched_data_page(anon_page, live_server, console_errors):
    from tests.browser.conftest import BROWSER_USERS, log_in

    page = anon_page
    log_in(page, live_server, BROWSER_USERS["viewer"])  # not the engineer other tests use
    page.goto(live_server + "/fields/1/surveys?well=AMB-3&per_page=25")
    assert "psia" in page.locator("#surveys-table thead").inner_text()
    page.get_by_label("Units").select_option("si")
    with page.expect_navigation():
        page.get_by_role("button", name="Show").click()
    try:
        assert page.url.endswith("/fields/1/surveys?well=AMB-3&per_page=25")  # the search is kept
        head = page.locator("#surveys-table thead").inner_text()
        assert "kPa" in head and "psia" not in head and "\nm\t" in head
        assert page.locator("#showing-top").inner_text() == "Showing 1–21 of 21 surveys, page 1 of 1"
    finally:
        page.get_by_label("Units").select_option("")
        with page.expect_navigation():
            page.get_by_role("button", name="Show").click()
    assert console_errors == []
