"""In Chromium: check a file, read the preview, confirm it; recompute the portfolio and watch
the progress bar fill through server-sent events (no inline scripts: the page's CSP)."""

from server.services.jobs import runner
from tests.browser.conftest import log_in


def test_upload_preview_then_store(page, live_server, console_errors, screenshot_dir, tmp_path):
    data = tmp_path / "surveys.csv"
    data.write_text("Field;Well;Survey Date;Pressure (barg)\nAmberlode;AMB-1;2026-11-02;150,5\n")
    page.goto(live_server + "/upload")
    page.select_option("#kind", "surveys")
    page.set_input_files("#file", str(data))
    page.click("#check")
    page.wait_for_selector("#summary")
    assert "Would add" in page.locator("#summary").inner_text()
    assert "bar gauge" in page.locator("#columns-read").inner_text()
    page.screenshot(path=str(screenshot_dir / "upload-preview.png"), full_page=True)
    if page.locator("#confirm-form input[name=accept_warnings]").count():
        page.check("#confirm-form input[name=accept_warnings]")
    page.click("#commit")
    page.wait_for_selector("#upload-result")
    assert "Stored upload" in page.locator("#upload-result").inner_text()
    assert console_errors == []


def test_portfolio_recompute_progress(page, live_server, console_errors, screenshot_dir):
    page.goto(live_server + "/jobs")
    page.click("#recompute-all")
    page.wait_for_selector("#job[data-finished='true']", timeout=60000)
    assert page.locator("#job-status").inner_text() == "done"
    bar = page.locator("#job-progress")
    assert bar.get_attribute("value") == bar.get_attribute("max") == "12"
    page.screenshot(path=str(screenshot_dir / "job-progress.png"), full_page=True)
    assert console_errors == []


def test_progress_bar_follows_a_running_job(anon_page, server_without_worker, console_errors):
    base, db = server_without_worker
    page = anon_page
    log_in(page, base, "runner")
    page.goto(base + "/jobs")
    page.click("#recompute-all")
    page.wait_for_selector("#job[data-finished='false']")
    assert page.locator("#job-status").inner_text() == "queued"
    runner.drain(db)  # a worker elsewhere does the work; the page learns of it by server-sent events
    page.wait_for_selector("#job[data-finished='true']", timeout=30000)
    assert page.locator("#job-status").inner_text() == "done"
    assert page.locator("#job-progress").get_attribute("value") == "3"
    assert page.locator("#job-count").inner_text() == "3 / 3"
    assert console_errors == []
