"""The job queue: exclusive claims, a dead worker's job taken over, progress, repeats harmless."""

import datetime as dt
import textwrap
import time

from sqlalchemy import func, select, update

from server.db.models import Estimate, Field, Job
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.services.jobs.worker import Worker
from tests.factories import add_volumetric_history, make_field
from tests.services.conftest import kill_when


def _estimates(session):
    return session.execute(select(func.count()).select_from(Estimate)).scalar_one()


def test_a_stale_claim_is_taken_over_and_finished_once(db, session):
    f = make_field(session, name="Upland")
    add_volumetric_history(session, f)
    (job,) = jobs.enqueue_field_recompute(session, [f.id], reason="test")
    session.commit()
    with db.session() as s:
        assert jobs.claim_next(s, "worker-a").id == job.id  # worker A claims it, then dies
    with db.session() as s:
        assert jobs.claim_next(s, "worker-b") is None  # its heartbeat is fresh: nobody else takes it
        s.execute(update(Job).values(heartbeat_at=dt.datetime.now(dt.UTC) - dt.timedelta(minutes=10)))
    assert runner.drain(db, "worker-b") == 1
    session.expire_all()
    done = session.get(Job, job.id)
    assert (done.status, done.claimed_by, done.attempts) == ("done", "worker-b", 2)
    assert _estimates(session) == 1
    jobs.enqueue_field_recompute(session, [f.id], reason="again")
    session.commit()
    assert runner.drain(db) == 1
    assert _estimates(session) == 1  # same inputs, same fingerprint: no new estimate


def test_a_job_whose_workers_keep_dying_is_given_up(db, session):
    f = make_field(session, name="Upland")
    (job,) = jobs.enqueue_field_recompute(session, [f.id], reason="test")
    session.commit()
    for k in range(jobs.MAX_ATTEMPTS):
        with db.session() as s:
            assert jobs.claim_next(s, f"w{k}", stale_after=dt.timedelta(0)).id == job.id
    with db.session() as s:
        assert jobs.claim_next(s, "last", stale_after=dt.timedelta(0)) is None
    session.expire_all()
    failed = session.get(Job, job.id)
    assert failed.status == "failed" and "stopped responding 3 times" in failed.error


def test_portfolio_recompute_reports_progress(real_db):
    """A real database: the portfolio job's parts run with their heartbeat threads."""
    db, _ = real_db
    with db.session() as s:  # and the fixture's Upland
        for name in ("A", "B", "C"):
            add_volumetric_history(s, make_field(s, name=name))
        job = jobs.enqueue_portfolio_recompute(s, reason="test")
        assert jobs.enqueue_portfolio_recompute(s, reason="twice").id == job.id  # one at a time
        job_id = job.id
    seen = []
    with db.session() as s:
        jobs.claim_next(s, "w")
    runner.run_job(db, job_id, on_progress=lambda done, total: seen.append((done, total)))
    assert seen == [(1, 4), (2, 4), (3, 4), (4, 4)]
    with db.session() as s:
        view = jobs.get_job(s, job_id)
        assert view.status == "done" and view.progress_frac == 1.0 and view.finished
        assert _estimates(s) == 4


def test_the_worker_thread_runs_what_is_queued(real_db):
    db, _ = real_db
    worker = Worker(db, poll_seconds=0.05, name="thread-test")
    worker.start()
    try:
        with db.session() as s:
            job_id = jobs.enqueue_portfolio_recompute(s, reason="test").id
        worker.wake()
        deadline = time.monotonic() + 60
        while time.monotonic() < deadline:
            with db.session() as s:
                if s.get(Job, job_id).status == "done":
                    break
            time.sleep(0.05)
    finally:
        worker.stop()
    with db.session() as s:
        assert s.get(Job, job_id).status == "done"
        assert _estimates(s) == s.execute(select(func.count()).select_from(Field)).scalar_one()


KILLED_WORKER = textwrap.dedent(
    """
    import sys, time
    from server.db.session import Database
    from server.services.jobs import runner

    real = runner.recompute_field
    calls = []

    def slow(session, field):
        calls.append(field.id)
        if len(calls) == 2:  # the second field: say so, then hang inside its transaction
            print("IN SECOND FIELD", flush=True)
            time.sleep(120)
        return real(session, field)

    runner.recompute_field = slow
    runner.drain(Database(sys.argv[1]), "doomed")
    """
)


def test_a_killed_worker_process_is_replaced_without_duplicates(real_db):
    db, url = real_db
    with db.session() as s:
        for name in ("B", "C"):
            add_volumetric_history(s, make_field(s, name=name))
        job_id = jobs.enqueue_portfolio_recompute(s, reason="test").id
    kill_when(KILLED_WORKER, [url], "IN SECOND FIELD")
    db.dispose()
    with db.session() as s:
        job = s.get(Job, job_id)
        assert (job.status, job.claimed_by, job.progress_done) == ("running", "doomed", 1)
        assert _estimates(s) == 1  # the first field's estimate was committed before the kill
    assert runner.drain(db, "rescuer", stale_after=dt.timedelta(0)) == 1
    with db.session() as s:
        job = s.get(Job, job_id)
        assert (job.status, job.claimed_by, job.attempts) == ("done", "rescuer", 2)
        assert _estimates(s) == 3  # one per field: the first was not computed again
