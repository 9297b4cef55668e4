"""Several app and worker processes on one PostgreSQL database (issue 17, docs/deployment.md):
two `tankbook serve` processes and two `tankbook worker` processes, started as an operator
would start them. The demo portfolio queues one recompute per field; a portfolio recompute
is queued through the first app, and the second app, asked for the same, answers with the
same job (both see one queue); the workers share it by its parts (issue 17). Every job must
run exactly once (one claim each, done) and every field must end with exactly one estimate:
a field recomputed by its own job and by the portfolio job, perhaps at the same moment in the
two workers, is locked row by row and fingerprinted, so the second recompute writes nothing."""

from __future__ import annotations

import json
import os
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

import pytest
import sqlalchemy as sa

from server.db.base import utcnow
from server.db.migrate import upgrade
from server.db.models import Estimate, Field, Job, User
from server.db.session import Database
from server.services.access import credentials
from server.services.demo import PORTFOLIO, load_demo
from tests.conftest import create_pg_database, drop_pg_database, require_postgres

ROOT = Path(__file__).resolve().parents[1]
pytestmark = pytest.mark.postgres
FIELDS = 6  # half the demo: enough for both workers to be busy at once, quick under load


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _start(args: list[str], env: dict, log: Path) -> subprocess.Popen:
    with log.open("w") as out:  # the child keeps its own copy of the file descriptor
        return subprocess.Popen(  # noqa: S603 - this interpreter, our own command
            [sys.executable, "-m", "server.cli", *args],
            cwd=ROOT,
            env=env,
            stdout=out,
            stderr=subprocess.STDOUT,
        )


def _call(method: str, url: str, headers: dict | None = None) -> tuple[int, dict]:
    """(status, JSON body) of one request (the standard library: no test client in between)."""
    req = urllib.request.Request(
        url, method=method, headers=headers or {}, data=b"" if method == "POST" else None
    )
    try:
        with urllib.request.urlopen(req, timeout=30) as r:  # noqa: S310 - a local test server
            return r.status, json.loads(r.read() or b"{}")
    except urllib.error.HTTPError as e:
        return e.code, json.loads(e.read() or b"{}")


def _wait_healthy(base: str, proc: subprocess.Popen, log: Path, timeout_s: float = 90.0) -> None:
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        assert proc.poll() is None, f"{base} stopped:\n{log.read_text()}"
        try:
            if _call("GET", base + "/api/health")[0] == 200:
                return
        except OSError:  # not listening yet
            pass
        time.sleep(0.3)
    raise AssertionError(f"{base} did not answer within {timeout_s} s:\n{log.read_text()}")


@pytest.fixture
def database():
    require_postgres()
    url = create_pg_database()
    try:
        yield url
    finally:
        drop_pg_database(url)


def test_two_apps_and_two_workers_run_every_job_once(database, tmp_path):
    upgrade(database)
    db = Database(database)
    with db.session() as s:
        field_ids = load_demo(s, PORTFOLIO[:FIELDS])  # queues one recompute per field
        user = User(
            username="ops",
            display_name="Ops",
            role="engineer",
            is_active=True,
            failed_logins=0,
            password_hash="x",
            all_assets=True,
        )
        s.add(user)
        s.flush()
        token, _ = credentials.create_api_token(
            s, user, name="test", scopes=["read", "analyse"], now=utcnow()
        )
    env = {
        **os.environ,
        "TANKBOOK_DATABASE_URL": database,
        "TANKBOOK_JOB_RUNNER": "external",
        "TANKBOOK_ENVIRONMENT": "production",
        "TANKBOOK_SECRET_KEY": "several-processes-share-this-secret-key-0123456789",
        "TANKBOOK_JOB_POLL_SECONDS": "0.2",
    }
    procs: list[subprocess.Popen] = []
    try:
        apps = []
        for k in (1, 2):
            port = _free_port()
            log = tmp_path / f"app{k}.log"
            procs.append(_start(["serve", "--port", str(port)], env, log))
            apps.append((f"http://127.0.0.1:{port}", procs[-1], log))
        for base, proc, log in apps:
            _wait_healthy(base, proc, log)
        headers = {"Authorization": f"Bearer {token}"}
        first = _call("POST", apps[0][0] + "/api/jobs/recompute-portfolio", headers)
        second = _call("POST", apps[1][0] + "/api/jobs/recompute-portfolio", headers)
        assert first[0] == 202 and second[0] == 202, (first, second)
        assert first[1]["id"] == second[1]["id"]  # one queue: the second app reuses the job
        for k in (1, 2):  # the workers start after the queue is full, so both find work at once
            procs.append(_start(["worker"], env, tmp_path / f"worker{k}.log"))
        deadline = time.monotonic() + 600
        while True:
            with db.session() as s:
                left = s.execute(
                    sa.select(sa.func.count()).where(Job.status.in_(("queued", "running")))
                ).scalar()
            if not left:
                break
            assert time.monotonic() < deadline, "jobs still waiting after 10 minutes"
            assert all(p.poll() is None for p in procs), "a process stopped"
            time.sleep(0.5)
        code, job = _call("GET", f"{apps[1][0]}/api/jobs/{first[1]['id']}", headers)
        assert code == 200 and job["status"] == "done"  # the other app reports the job's end
    finally:
        for p in procs:
            p.terminate()
        for p in procs:
            try:
                p.wait(timeout=30)
            except subprocess.TimeoutExpired:
                p.kill()
    with db.session() as s:
        jobs = s.execute(
            sa.select(Job.kind, Job.status, Job.attempts, Job.claimed_by, Job.error).where(
                Job.parent_id.is_(None)
            )
        ).all()
        # the portfolio job's parts (issue 17): each claimed once, and together every field once
        parts = s.execute(
            sa.select(Job.status, Job.attempts, Job.field_ids).where(Job.parent_id.isnot(None))
        ).all()
        per_field = dict(
            s.execute(sa.select(Estimate.field_id, sa.func.count()).group_by(Estimate.field_id)).all()
        )
        fields = list(s.execute(sa.select(Field.id)).scalars())
    db.dispose()
    assert len(jobs) == FIELDS + 1
    assert [(k, st, a, e) for k, st, a, _, e in jobs if (st, a, e) != ("done", 1, None)] == []
    assert len({w for *_, w, _ in jobs}) == 2, "both workers ran jobs"
    assert [(st, a) for st, a, _ in parts if (st, a) != ("done", 1)] == []
    assert sorted(i for *_, ids in parts for i in ids) == sorted(field_ids)
    assert sorted(fields) == sorted(field_ids)
    assert per_field == {fid: 1 for fid in field_ids}
