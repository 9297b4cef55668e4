# ruff: noqa: F811 - the fixture fid is imported from tests/web/fieldbench.py
"""With external workers the page does not wait: a change queues the field's recompute, and the
page says a recompute is queued (with its job) and still shows the stored estimate."""

import re

import pytest

from server.services.jobs import runner
from server.settings import Settings
from tests.web.fieldbench import fid, giip_card, latest, surveys_of, text_of  # noqa: F401 - fid is a fixture


@pytest.fixture
def settings():
    return Settings(environment="test", secret_key="t" * 40, database_url="sqlite://", job_runner="external")


def test_change_with_external_workers_shows_the_queued_recompute(db, client, fid):
    before = latest(db, fid)
    target = surveys_of(db, fid)[-1]
    r = client.post(
        f"/fields/{fid}/surveys/{target.id}/exclusion", data={"action": "exclude", "reason": "gauge drift"}
    )
    assert r.status_code == 200
    notice = text_of(re.search(r'<div[^>]*id="pending"[^>]*>(.*?)</div>', r.text, re.S).group(1))
    assert "A recompute is running or queued" in notice and ": queued" in notice
    assert "shows the estimate stored before it, and shows the new one by itself" in notice
    assert latest(db, fid).id == before.id and giip_card(r.text) != "–"
    assert 'data-status="used"' in re.search(rf'<tr[^>]*id="survey-{target.id}"[^>]*>', r.text).group(0)
    assert runner.drain(db) == 1  # a worker elsewhere runs it
    page = client.get(f"/fields/{fid}").text
    assert 'id="pending"' not in page and latest(db, fid).id != before.id
    assert re.search(rf'id="survey-{target.id}" data-survey-id="{target.id}" data-status="excluded"', page)
