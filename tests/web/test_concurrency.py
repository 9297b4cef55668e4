"""Concurrent clients on a live server (issue 18, points 2 and 3), on SQLite and PostgreSQL.

Point 3: logins, setting surveys aside and making API tokens while other connections
commit (a running job's heartbeats, an upload being stored) used to fail on SQLite with
"database is locked" (a deferred transaction that read before another connection's
commit cannot then write); transactions that will write now begin IMMEDIATE and wait.
Point 2: a hundred simultaneous page and API reads used to freeze the server (each request
held a connection while the display units opened a second one, the pool ran dry); now
one session per request. No test here times anything: zero errors is the assertion.
"""

from __future__ import annotations

import datetime as dt
import threading
from concurrent.futures import ThreadPoolExecutor

import pytest
from sqlalchemy import select, update

from server.db.models import Job, PressureSurvey, Well
from server.services.jobs import queue as jobs
from tests.web.conftest import TEST_PASSWORD
from tests.web.live import live_server

BACKENDS = ["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)]


class Committer:
    """Another process's short write transactions, a hundred a second (what running jobs do
    with their heartbeats and per-field commits, only more often), until stopped."""

    def __init__(self, db):
        self.db = db
        with db.session() as s:
            job = jobs.enqueue_portfolio_recompute(s, reason="stress")
            self.job_id = job.id
        self.stop = threading.Event()
        self.commits = 0
        self.thread = threading.Thread(target=self._run, daemon=True)

    def _run(self):
        while not self.stop.is_set():
            with self.db.session() as s:  # a write first, as the job runner's are
                s.execute(
                    update(Job).where(Job.id == self.job_id).values(heartbeat_at=dt.datetime.now(dt.UTC))
                )
            self.commits += 1
            self.stop.wait(0.01)

    def __enter__(self):
        self.thread.start()
        return self

    def __exit__(self, *exc):
        self.stop.set()
        self.thread.join(timeout=30)


def _production_csv(field: str, well: str, months: int) -> bytes:
    lines = ["field,well,month,gas_mscf"]
    start = dt.date(1950, 1, 1)
    for k in range(months):
        y, m = divmod(start.month - 1 + k, 12)
        lines.append(f"{field},{well},{start.year + y:04d}-{m + 1:02d},{1000 + k}")
    return ("\n".join(lines) + "\n").encode()


@pytest.mark.parametrize("backend", BACKENDS)
def test_logins_set_asides_and_tokens_while_others_commit(backend, tmp_path):
    with live_server(backend, tmp_path, job_runner="external") as live:
        engineer = live.logged_in("engineer")
        csrf = live.csrf(engineer)
        engineer.close()
        fid = live.field_ids[0]
        with live.db.session() as s:
            surveys = list(
                s.execute(
                    select(PressureSurvey.id)
                    .join(Well)
                    .where(Well.field_id == fid)
                    .order_by(PressureSurvey.id)
                ).scalars()
            )

        def login(_):
            with live.client() as c:
                r = c.post("/login", data={"username": "viewer", "password": TEST_PASSWORD, "next": "/"})
            return r.status_code, r.text[-300:] if r.status_code != 303 else ""

        def set_aside(k):
            sid = surveys[k % len(surveys)]
            with live.client(cookies=engineer.cookies) as c:
                r = c.post(
                    f"/fields/{fid}/surveys/{sid}/exclusion",
                    data={"action": "exclude", "reason": f"gauge check {k}"},
                    headers={"X-CSRF-Token": csrf},
                )
            return r.status_code, r.text[-300:] if r.status_code >= 400 else ""

        def token(k):
            with live.client(cookies=engineer.cookies) as c:
                r = c.post(
                    "/account/tokens",
                    data={"name": f"script {k}", "scopes": ["read"]},
                    headers={"X-CSRF-Token": csrf},
                )
            return r.status_code, r.text[-300:] if r.status_code >= 400 else ""

        def upload(_):
            body = _production_csv("Field C", "W-2", 600)
            with live.client(headers={"Authorization": f"Bearer {live.token}"}) as c:
                r = c.post("/api/uploads/production", files={"file": ("production.csv", body, "text/csv")})
            return r.status_code, r.text[-300:] if r.status_code >= 400 else ""

        calls = [(login, k) for k in range(9)] + [(set_aside, k) for k in range(12)]
        calls += [(token, k) for k in range(6)] + [(upload, 0)]
        with Committer(live.db) as committer, ThreadPoolExecutor(len(calls)) as pool:
            results = list(pool.map(lambda c: (c[0].__name__, *c[0](c[1])), calls))
        failed = [r for r in results if r[1] >= 500 or r[1] == 0]
        assert not failed, failed
        assert committer.commits > 0
        assert all(code in (200, 303) for _, code, _ in results), results


PAGES = ["/", "/fields/{fid}", "/fields/{fid}/surveys", "/jobs"]
API = ["/api/portfolio", "/api/fields/{fid}", "/api/health", "/api/portfolio/totals"]


@pytest.mark.parametrize("backend", BACKENDS)
def test_a_hundred_simultaneous_page_and_api_reads_all_answer(backend, tmp_path):
    """Bounded: 100 requests at once over loopback, each with a two-minute client timeout;
    before the fix the pool ran dry and requests failed after the pool's 30 s wait."""
    with live_server(backend, tmp_path, fields=2) as live:
        engineer = live.logged_in("engineer")
        engineer.close()
        start = threading.Barrier(100)

        def read(k):
            fid = live.field_ids[k % len(live.field_ids)]
            if k % 2:
                c = live.client(headers={"Authorization": f"Bearer {live.token}"})
                path = API[k // 2 % len(API)].format(fid=fid)
            else:
                c = live.client(cookies=engineer.cookies)
                path = PAGES[k // 2 % len(PAGES)].format(fid=fid)
            with c:
                start.wait()
                try:
                    r = c.get(path)
                except Exception as exc:  # a timeout or a dropped connection is an error too
                    return path, 0, repr(exc)
            return path, r.status_code, "" if r.status_code == 200 else r.text[-200:]

        with ThreadPoolExecutor(100) as pool:
            results = list(pool.map(read, range(100)))
        errors = [r for r in results if r[1] != 200]
        assert not errors, errors


def test_a_tight_pool_never_runs_dry_under_many_reads(tmp_path):
    """Three route threads and four pooled connections (one ticket fewer than the pool), fifty
    reads at once. Each read's dependencies and route run in separate thread calls; without the
    admission tickets (web/deps.py get_session) the requests waiting for a thread held the
    connections the running threads needed, and reads failed after the pool's wait. The pool
    wait is cut to 5 s here so that a regression fails quickly rather than slowly."""
    with live_server(
        "sqlite", tmp_path, fields=2, threads=3, db_pool_size=4, db_pool_timeout_seconds=5
    ) as live:
        start = threading.Barrier(50)

        def read(k):
            fid = live.field_ids[k % len(live.field_ids)]
            path = API[k % len(API)].format(fid=fid)
            with live.client(headers={"Authorization": f"Bearer {live.token}"}) as c:
                start.wait()
                try:
                    r = c.get(path)
                except Exception as exc:
                    return path, 0, repr(exc)
            return path, r.status_code, "" if r.status_code == 200 else r.text[-200:]

        with ThreadPoolExecutor(50) as pool:
            results = list(pool.map(read, range(50)))
        errors = [r for r in results if r[1] != 200]
        assert not errors, errors


def test_open_event_streams_do_not_hold_the_admission_tickets(tmp_path):
    """One route thread, so one admission ticket: three pages following a queued job's live
    progress (server-sent events, open for minutes) must leave it free for everyone else.
    A stream that kept its request session (and ticket) would make the reads below wait."""
    with live_server("sqlite", tmp_path, fields=1, threads=1, job_runner="external") as live:
        with live.db.session() as s:
            job_id = jobs.enqueue_portfolio_recompute(s, reason="waits for a worker").id
        auth = {"Authorization": f"Bearer {live.token}"}
        streams, opened = [], []
        try:
            for _ in range(3):
                c = live.client(headers=auth)
                streams.append(c)
                cm = c.stream("GET", f"/api/jobs/{job_id}/events")
                r = cm.__enter__()
                opened.append(cm)
                assert r.status_code == 200
                assert "progress" in next(r.iter_lines())  # the first event has arrived
            with live.client(headers=auth) as c:
                for path in ("/api/health", f"/api/fields/{live.field_ids[0]}", "/api/portfolio"):
                    assert c.get(path).status_code == 200, path
        finally:
            for cm in opened:
                cm.__exit__(None, None, None)
            for c in streams:
                c.close()
