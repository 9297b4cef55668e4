# ruff: noqa: F811 - the fixture fid is imported from tests/web/fieldbench.py
"""The field page says when its estimate is stale and why (issue 18, point 1): the last
recompute failed in a way the engine did not foresee, so the numbers are from before."""

import re

from server.db.models import PressureSurvey
from server.services.jobs import queue as jobs
from server.services.jobs import recompute, runner
from tests.web.fieldbench import fid, latest, text_of  # noqa: F401 - fid is a fixture


def test_the_page_says_the_estimate_is_stale_and_why(db, client, fid, monkeypatch):
    before = latest(db, fid)
    page = client.get(f"/fields/{fid}").text
    assert 'id="stale-estimate"' not in page

    def broken(inputs):
        raise ZeroDivisionError("injected <b>failure</b>")

    monkeypatch.setattr(recompute, "analyse_field", broken)
    with db.session() as s:  # new data, so the recompute runs the engine
        s.execute(PressureSurvey.__table__.update().values(pressure_psia=PressureSurvey.pressure_psia - 1))
        (job,) = jobs.enqueue_field_recompute(s, [fid], reason="test")
        job_id = job.id
    runner.drain(db)
    page = client.get(f"/fields/{fid}").text
    notice = re.search(r'<p[^>]*id="stale-estimate"[^>]*>(.*?)</p>', page, re.S)
    assert notice, "no stale notice"
    text = text_of(notice.group(1))
    assert "This estimate is out of date" in text and f"job {job_id}" in text
    assert "ZeroDivisionError: injected <b>failure</b>" in text  # escaped in the page, read back as text
    assert "<b>failure</b>" not in notice.group(1)
    assert latest(db, fid).id == before.id

    monkeypatch.undo()
    with db.session() as s:
        jobs.enqueue_field_recompute(s, [fid], reason="again")
    runner.drain(db)
    assert 'id="stale-estimate"' not in client.get(f"/fields/{fid}").text
