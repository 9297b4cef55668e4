"""One event stream for the jobs a page waits for (``/api/jobs/events?id=..``): a progress event
per job and change until every job has finished; unknown or other assets' jobs are 404."""

from __future__ import annotations

import json

from server.services.jobs import queue as jobs
from server.services.jobs import runner
from tests.factories import make_field


def _events(client, ids) -> list[dict]:
    query = "&".join(f"id={i}" for i in ids)
    with client.stream("GET", f"/api/jobs/events?{query}") as r:
        assert r.status_code == 200 and r.headers["content-type"].startswith("text/event-stream")
        text = "".join(r.iter_text())
    return [json.loads(line[5:]) for line in text.splitlines() if line.startswith("data:")]


def test_one_stream_follows_several_jobs_until_all_have_finished(db, client):
    with db.session() as s:
        ids = [make_field(s, name=n).id for n in ("Alder", "Birch")]
        job_ids = [j.id for j in jobs.enqueue_field_recompute(s, ids, reason="test")]
    runner.drain(db)
    events = _events(client, job_ids)
    assert {e["id"] for e in events} == set(job_ids)  # the stream ends by itself: both are done
    assert all(e["status"] in ("done", "failed") for e in events)
    assert _events(client, [job_ids[0], job_ids[0]]) == events[:1]  # a repeated id is one job


def test_unknown_jobs_and_other_assets_jobs_are_refused(db, client, login_as):
    with db.session() as s:
        mine = make_field(s, name="Mine", asset="North")
        theirs = make_field(s, name="Theirs", asset="South")
        north = mine.asset_id
        job_mine, job_theirs = (j.id for j in jobs.enqueue_field_recompute(s, [mine.id, theirs.id], "test"))
    assert client.get("/api/jobs/events?id=999999").status_code == 404
    assert client.get("/api/jobs/events").status_code == 422
    limited = login_as("viewer", assets=[north])
    assert limited.get(f"/api/jobs/events?id={job_mine}&id={job_theirs}").status_code == 404
    runner.drain(db)
    assert [e["id"] for e in _events(limited, [job_mine])] == [job_mine]
