"""In Chromium: the portfolio shows flags; a compartmented field shows its flag, the model
comparison and the model-fit chart drawn, with no console errors."""


def test_flags_and_model_comparison_in_the_browser(page, live_server, console_errors, screenshot_dir):
    page.goto(live_server + "/")
    row = page.locator("#portfolio-table tbody tr", has_text="Gorsewick")
    assert row.locator("li.flag[data-code='compartment_signature']").count() == 1
    page.get_by_role("link", name="Gorsewick").click()
    page.wait_for_selector("#chart-models[data-drawn='true']", timeout=15000)
    assert page.locator("#chart-models .scatterlayer .trace").count() >= 3
    flag = page.locator("#flags li[data-code='compartment_signature']")
    assert "GRW-3" in flag.inner_text()
    assert page.locator("#model-comparison tbody tr").first.get_attribute("data-model") == "two_tank"
    page.locator("#diagnosis").screenshot(path=str(screenshot_dir / "diagnosis.png"))
    page.goto(live_server + "/")
    page.get_by_role("link", name="Fallowmere").click()
    page.wait_for_selector("#chart-cole[data-drawn='true']", timeout=15000)
    assert page.locator("#chart-cole .scatterlayer .trace").count() >= 2
    page.locator("#diagnosis").screenshot(path=str(screenshot_dir / "diagnosis_aquifer.png"))
    assert console_errors == []
