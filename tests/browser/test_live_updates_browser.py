"""In Chromium, with a worker that only the test runs (job_runner=external): pages that wait for
a job follow it by server-sent events and update by themselves when it finishes: the field page
shows the new estimate (unless the person is typing), the upload result and the jobs list show
each recompute done (issue 16, point 2)."""

from __future__ import annotations

from sqlalchemy import select

from server.db.models import Field
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from tests.browser.conftest import log_in


def _field_id(db, name: str) -> int:
    with db.session() as s:
        return s.execute(select(Field.id).where(Field.name == name)).scalar_one()


def _queue(db, *names: str) -> list[int]:
    with db.session() as s:
        ids = [s.execute(select(Field.id).where(Field.name == n)).scalar_one() for n in names]
        return [j.id for j in jobs.enqueue_field_recompute(s, ids, reason="test")]


def test_the_field_page_shows_the_new_estimate_when_its_recompute_finishes(
    anon_page, server_without_worker, console_errors
):
    base, db = server_without_worker
    page = anon_page
    log_in(page, base, "runner")
    (job,) = _queue(db, "Alpha")
    page.goto(f"{base}/fields/{_field_id(db, 'Alpha')}")
    pending = page.locator("#pending")
    assert f"job {job}: queued" in pending.inner_text() and "by itself" in pending.inner_text()
    assert page.locator("#giip-best").inner_text() == "–"  # nothing computed yet
    page.wait_for_function("() => typeof EventSource !== 'undefined'")
    with page.expect_navigation(timeout=30000):  # the page reloads itself; nobody presses a key
        runner.drain(db)
    assert page.locator("#pending").count() == 0
    assert page.locator("#giip-best").inner_text() != "–"
    assert console_errors == []


def test_the_field_page_does_not_reload_over_what_someone_is_typing(anon_page, server_without_worker):
    base, db = server_without_worker
    page = anon_page
    log_in(page, base, "runner")
    _queue(db, "Bravo")
    page.goto(f"{base}/fields/{_field_id(db, 'Bravo')}")
    page.evaluate("() => { window.stillHere = true; }")
    page.get_by_label("Add a note").fill("half a thought about BRAVO's last survey")
    runner.drain(db)
    page.wait_for_selector("#pending-done", state="visible", timeout=30000)
    assert page.evaluate("() => window.stillHere") is True  # not reloaded
    assert page.get_by_label("Add a note").input_value().startswith("half a thought")
    assert page.locator("#pending [data-job-status]").inner_text() == "done"
    with page.expect_navigation():
        page.locator("#show-new-estimate").click()
    assert page.locator("#giip-best").inner_text() != "–"


def test_the_upload_result_follows_the_recomputes_it_queued(anon_page, server_without_worker, tmp_path):
    base, db = server_without_worker
    page = anon_page
    log_in(page, base, "runner")
    data = tmp_path / "charlie.csv"
    data.write_text("field,well,survey_date,pressure_psia\nCharlie,W-1,2017-02-01,1500\n")
    page.goto(base + "/upload")
    page.select_option("#kind", "surveys")
    page.set_input_files("#file", str(data))
    page.click("#check")
    page.wait_for_selector("#summary")
    if page.locator("#confirm-form input[name=accept_warnings]").count():
        page.check("#confirm-form input[name=accept_warnings]")
    page.click("#commit")
    row = page.locator("#recomputes li").first
    assert "Charlie" in row.inner_text() and row.get_attribute("data-status") == "queued"
    assert page.locator("#recomputes-done").is_hidden()
    runner.drain(db)
    page.wait_for_selector("#recomputes[data-finished='true']", timeout=30000)
    assert row.get_attribute("data-status") == "done" and "done" in row.inner_text()
    assert page.locator("#recomputes-done").is_visible()


def test_the_jobs_list_updates_by_itself(anon_page, server_without_worker):
    base, db = server_without_worker
    page = anon_page
    log_in(page, base, "runner")
    ids = _queue(db, "Alpha", "Bravo")
    page.goto(base + "/jobs")
    rows = [page.locator(f"#jobs tr[data-job-id='{i}']") for i in ids]
    assert [r.get_attribute("data-status") for r in rows] == ["queued", "queued"]
    runner.drain(db)
    page.wait_for_selector("#jobs[data-finished='true']", timeout=30000)
    assert [r.locator("[data-job-status]").inner_text() for r in rows] == ["done", "done"]
    assert [r.locator("[data-job-count]").inner_text() for r in rows] == ["1 / 1", "1 / 1"]
