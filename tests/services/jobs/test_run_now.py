"""runner.run_now: a page runs its own field's recompute, or waits for the worker that took it."""

import threading

from sqlalchemy import func, select

from server.db.models import Estimate, Field, Job
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from tests.factories import add_volumetric_history, make_field


def _queued(session):
    f = make_field(session, name="Upland")
    add_volumetric_history(session, f)
    (job,) = jobs.enqueue_field_recompute(session, [f.id], reason="test")
    session.commit()
    return job.id


def test_run_now_runs_a_queued_job_in_the_callers_thread(db, session):
    job_id = _queued(session)
    assert runner.run_now(db, job_id, worker="page") == "done"
    session.expire_all()
    job = session.get(Job, job_id)
    assert (job.status, job.claimed_by, job.attempts) == ("done", "page", 1)
    assert session.execute(select(func.count(Estimate.id))).scalar_one() == 1
    assert runner.run_now(db, job_id) == "done"  # already done: nothing runs twice
    assert session.execute(select(func.count(Estimate.id))).scalar_one() == 1
    assert runner.drain(db) == 0


def test_run_now_waits_for_the_worker_that_claimed_the_job(real_db):
    """Two threads, so a real database (the rolled-back test connection is one connection)."""
    db, _ = real_db
    with db.session() as s:
        f = s.execute(select(Field)).scalar_one()
        add_volumetric_history(s, f)
        (job,) = jobs.enqueue_field_recompute(s, [f.id], reason="test")
        job_id = job.id
    with db.session() as s:
        assert jobs.claim_next(s, "worker-a").id == job_id
    assert runner.run_now(db, job_id, wait_seconds=0.3) == "running"  # not ours to run; not done yet
    finishing = threading.Timer(0.3, lambda: runner.run_job(db, job_id))
    finishing.start()
    assert runner.run_now(db, job_id, wait_seconds=30) == "done"
    finishing.join()
    with db.session() as s:
        assert s.get(Job, job_id).claimed_by == "worker-a"
        assert s.execute(select(func.count(Estimate.id))).scalar_one() == 1
