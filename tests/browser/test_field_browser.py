"""In Chromium: work on a field from its page (set a survey aside through the form and see the
fit change: the GIIP number and the point's style on the drawn chart), add a note, and upload a
survey file through the upload page and see the field's estimate change. No console errors on
any page visited."""

import json
import time


def _figure(page, name: str) -> dict:
    return json.loads(page.locator(f"script#{name}").text_content())


def _drawn_trace(page, chart_id: str, name: str):
    """A trace of the chart as plotly drew it in the page (None when there is none)."""
    return page.evaluate(
        """([id, name]) => {
            const t = (document.getElementById(id).data || []).find((d) => d.name === name);
            return t ? {n: t.x.length, symbol: t.marker.symbol, ids: t.customdata || []} : null;
        }""",
        [chart_id, name],
    )


def _open_field(page, base: str, name: str) -> None:
    page.goto(base + "/")
    page.get_by_role("link", name=name).click()
    page.wait_for_selector("#chart-pz[data-drawn='true']")
    for chart in ("chart-pressure", "chart-production", "chart-history"):
        page.wait_for_selector(f"#{chart}[data-drawn='true']")
    if page.locator("#surveys-fold[open]").count() == 0:
        page.locator("#surveys-fold > summary").click()  # the survey table is folded (issue 16)


def test_set_a_survey_aside_and_see_the_fit_change(page, live_server, console_errors, screenshot_dir):
    _open_field(page, live_server, "Brackenhold")
    giip_before = page.locator("#giip-best").inner_text()
    row = page.locator("#survey-table tbody tr[data-status='used']").last
    survey_id = row.get_attribute("data-survey-id")
    well, date = (row.locator("td").nth(i).inner_text() for i in (0, 1))
    before = _drawn_trace(page, "chart-pz", "set aside by the engineer")
    assert before is None or int(survey_id) not in before["ids"]
    # the reason field is found by its label, as a screen reader announces it
    page.get_by_label(f"Reason for setting aside the survey of {well} on {date}").fill(
        "gauge drift suspected"
    )
    with page.expect_navigation():
        page.get_by_role("button", name=f"Set aside the survey of {well} on {date}").click()
    page.wait_for_selector("#chart-pz[data-drawn='true']")
    assert "gauge drift suspected" in page.locator("#flash").inner_text()
    assert page.locator("#giip-best").inner_text() != giip_before
    row = page.locator(f"#survey-{survey_id}")
    assert row.get_attribute("data-status") == "excluded"
    assert "set aside by the engineer: gauge drift suspected" in row.inner_text()
    drawn = _drawn_trace(page, "chart-pz", "set aside by the engineer")
    assert drawn["symbol"] == "x-thin-open" and int(survey_id) in drawn["ids"]
    used_symbols = {_drawn_trace(page, "chart-pz", w)["symbol"] for w in ("BRK-1", "BRK-2")}
    assert "x-thin-open" not in used_symbols
    history = _figure(page, "history-figure")["data"][0]
    assert len(history["y"]) >= 2 and "set aside survey" in history["text"][-1]
    assert "gauge drift suspected" in page.locator("#field-audit").text_content()  # folded
    page.screenshot(path=str(screenshot_dir / "field.png"), full_page=True)

    # a note, then take the survey back: the first number returns
    page.get_by_label("Add a note").fill("BRK-2's last survey read low; gauge to be re-run.")
    with page.expect_navigation():
        page.get_by_role("button", name="Add note").click()
    assert "gauge to be re-run" in page.locator("#notes").inner_text()
    with page.expect_navigation():
        page.get_by_role("button", name=f"Take the survey of {well} on {date} back into the fit").click()
    page.wait_for_selector("#chart-pz[data-drawn='true']")
    assert page.locator("#giip-best").inner_text() == giip_before
    assert page.locator(f"#survey-{survey_id}").get_attribute("data-status") == "used"
    page.screenshot(path=str(screenshot_dir / "field-workbench.png"), full_page=True)
    # printed, the page keeps the numbers, charts and choices and drops the forms
    page.emulate_media(media="print")
    assert page.locator("#choices-form").is_hidden() and page.locator("#note-form").is_hidden()
    assert page.locator("#choices-read").is_visible() and page.locator("#chart-pz").is_visible()
    assert page.locator("#survey-table .action-col").first.is_hidden()
    page.emulate_media(media="screen")
    assert console_errors == []


def test_upload_a_survey_file_and_see_the_estimate_change(page, live_server, console_errors, tmp_path):
    _open_field(page, live_server, "Kettlebrook")
    field_url = page.url
    giip_before = page.locator("#giip-best").inner_text()
    n_before = len(page.locator("#survey-table tbody tr").all())
    data = tmp_path / "kettlebrook-surveys.csv"
    data.write_text("field,well,survey_date,pressure_psia\nKettlebrook,KTB-1,2026-11-20,1250\n")
    page.goto(live_server + "/upload")
    page.select_option("#kind", "surveys")
    page.set_input_files("#file", str(data))
    page.click("#check")
    page.wait_for_selector("#summary")
    if page.locator("#confirm-form input[name=accept_warnings]").count():
        page.check("#confirm-form input[name=accept_warnings]")
    page.click("#commit")
    page.wait_for_selector("#upload-result")
    assert "Stored upload" in page.locator("#upload-result").inner_text()
    # the app's worker thread recomputes the field; the page shows the stored estimate
    deadline = time.time() + 60
    while True:
        page.goto(field_url)
        page.wait_for_selector("#chart-pz[data-drawn='true']")
        if page.locator("#pending").count() == 0 and page.locator("#giip-best").inner_text() != giip_before:
            break
        assert time.time() < deadline, "the estimate did not change after the upload"
        time.sleep(0.5)
    assert len(page.locator("#survey-table tbody tr").all()) == n_before + 1
    new_row = page.locator("#survey-table tbody tr", has_text="2026-11-20")
    assert new_row.get_attribute("data-status") == "used" and "KTB-1" in new_row.inner_text()
    history = _figure(page, "history-figure")["data"][0]
    assert "<br>upload " in history["text"][-1]  # the newest estimate was triggered by the upload
    assert console_errors == []
