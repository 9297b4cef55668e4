"""Two workers share one portfolio recompute (issue 17), on SQLite and PostgreSQL.

A portfolio recompute used to be one job whose fields ran one after another in the worker
that claimed it; the second worker had nothing to do. Now the job is split into parts that
any worker claims (services/jobs/parts.py). Checked here with two worker threads, each with
its own Database (its own connections), as two `tankbook worker` processes would run:
every field is recomputed exactly once, both workers recompute some, the portfolio job ends
"done" with its progress counted from its parts, and a field that fails is isolated and
reported on the portfolio job as before."""

import datetime as dt
import threading
import time
from collections import Counter

import pytest
from sqlalchemy import func, select, update

from server.db.base import utcnow
from server.db.models import Estimate, Field, Job, RecomputeFailure
from server.db.session import Database
from server.services.jobs import parts, recompute, runner
from server.services.jobs import queue as jobs
from server.services.jobs.worker import Worker
from tests.factories import add_volumetric_history, make_field
from tests.services.jobs.test_failure_isolation import _boom_for

FIELDS = 16  # besides the fixture's Upland; parts of one field each (parts.part_size)
BAD_DATUM_FT = 10001.0  # the field the injected failure picks (test_failure_isolation._boom_for)


def test_two_workers_share_one_portfolio_recompute(real_db, monkeypatch):
    db, url = real_db
    with db.session() as s:
        for k in range(FIELDS):
            f = make_field(s, name=f"Shared {k:02d}", datum_ft=BAD_DATUM_FT if k == 5 else 10000.0)
            add_volumetric_history(s, f)
        field_ids = list(s.execute(select(Field.id)).scalars())
        bad_id = s.execute(select(Field.id).where(Field.datum_depth_ft == BAD_DATUM_FT)).scalar_one()
        job_id = jobs.enqueue_portfolio_recompute(s, reason="test").id
    assert parts.part_size(len(field_ids)) == 1

    calls: list[tuple[int, int]] = []  # (thread, field) of every recompute started
    real = runner.recompute_field

    def recorded(session, field):
        calls.append((threading.get_ident(), field.id))
        return real(session, field)

    real_hold = parts.hold

    def paused_hold(session, *args):
        # A pause before each field's transaction begins: on SQLite a worker that commits and
        # at once begins again keeps the write lock from the other, which sleeps between its
        # tries (busy timeout); the pause gives it its turn, as slower fields would.
        time.sleep(0.15)
        return real_hold(session, *args)

    monkeypatch.setattr(runner, "recompute_field", recorded)
    monkeypatch.setattr(parts, "hold", paused_hold)
    monkeypatch.setattr(recompute, "analyse_field", _boom_for("Shared 05", recompute.analyse_field))
    databases = [Database(url), Database(url)]
    workers = [Worker(d, poll_seconds=0.05, name=f"worker-{k}") for k, d in enumerate(databases)]
    try:
        for w in workers:
            w.start()
        deadline = time.monotonic() + 300
        while time.monotonic() < deadline:
            with db.session() as s:
                if s.get(Job, job_id).status in ("done", "failed"):
                    break
            time.sleep(0.1)
    finally:
        for w in workers:
            w.stop()
        for d in databases:
            d.dispose()

    assert Counter(fid for _, fid in calls) == Counter(field_ids)  # every field, exactly once
    by_thread = Counter(thread for thread, _ in calls)
    assert set(by_thread) == {w._thread.ident for w in workers}, by_thread  # both workers did some
    with db.session() as s:
        view = jobs.get_job(s, job_id)
        assert (view.status, view.progress_done, view.progress_total) == (
            "done",
            len(field_ids),
            len(field_ids),
        )
        assert view.progress_frac == 1.0
        assert view.error.startswith(f"1 of {len(field_ids)} fields could not be recomputed")
        assert "Shared 05: ZeroDivisionError: injected failure" in view.error
        failure = s.get(RecomputeFailure, bad_id)
        assert failure is not None and failure.job_id == job_id
        part_rows = s.execute(select(Job).where(Job.parent_id == job_id)).scalars().all()
        assert len(part_rows) == len(field_ids)
        assert {p.status for p in part_rows} == {"done"} and {p.attempts for p in part_rows} == {1}
        assert {p.claimed_by for p in part_rows} == {"worker-0", "worker-1"}
        assert sum(p.progress_done for p in part_rows) == len(field_ids)
        (bad_part,) = [p for p in part_rows if p.field_ids == [bad_id]]
        assert "ZeroDivisionError" in bad_part.error  # the part that held it says so too
        assert [v.id for v in jobs.recent_jobs(s)] == [job_id]  # the jobs page lists the portfolio job only
        with_estimate = s.execute(select(func.count(func.distinct(Estimate.field_id)))).scalar_one()
        assert with_estimate == len(field_ids) - 1  # all but the failed field (it had none before)


def test_a_part_taken_over_resumes_and_its_first_worker_stops(db, session, monkeypatch):
    """A part whose worker stopped beating is taken over; it goes on from the fields already
    committed, and the first worker, if it was only slow, cannot commit into it any more."""
    monkeypatch.setattr(parts, "MIN_PARTS", 1)  # one part of all three fields
    ids = []
    for name in ("A", "B", "C"):
        f = make_field(session, name=name)
        add_volumetric_history(session, f)
        ids.append(f.id)
    parent_id = jobs.enqueue_portfolio_recompute(session, reason="test").id
    session.commit()
    with db.session() as s:
        assert jobs.claim_next(s, "driver").id == parent_id
        parts.split(s, parent_id)
    with db.session() as s:
        part = jobs.claim_next(s, "slow", parent_id=parent_id)
        part_id = part.id
        assert part.field_ids == ids
    with db.session() as s:  # "slow" commits its part's first field ...
        parts.hold(s, part_id, "slow", 0)
        assert runner._recompute_one(s, ids[0], parent_id) is None
        assert parts.field_done(s, part_id, parent_id, 1, None) == (1, 3)
    with db.session() as s:  # ... and then goes silent
        old = utcnow() - dt.timedelta(minutes=10)
        s.execute(update(Job).where(Job.id == part_id).values(heartbeat_at=old))
        taken = jobs.claim_next(s, "rescuer", parent_id=parent_id)
        assert (taken.id, taken.progress_done, taken.attempts) == (part_id, 1, 2)
    with pytest.raises(parts.LostClaimError), db.session() as s:
        parts.hold(s, part_id, "slow", 1)  # woken up: the part is no longer its own
    runner.run_job(db, part_id)  # the rescuer goes on from the second field
    session.expire_all()
    per_field = dict(
        session.execute(select(Estimate.field_id, func.count()).group_by(Estimate.field_id)).all()
    )
    assert per_field == {i: 1 for i in ids}
    done = session.get(Job, part_id)
    assert (done.status, done.progress_done, done.claimed_by) == ("done", 3, "rescuer")
    with db.session() as s:
        assert parts.settle(s, parent_id) == "done"
    session.expire_all()
    assert session.get(Job, parent_id).progress_done == 3  # from the part, counted once


def test_a_part_given_up_ends_the_portfolio_job_failed_after_the_other_parts(real_db):
    """A part whose workers keep dying is given up (as any job is); the other parts still
    run, and the portfolio job then ends "failed", saying how many fields were missed.
    (A real database: the parts run with their heartbeat threads.)"""
    db, _ = real_db
    with db.session() as s:
        for name in ("A", "B"):
            add_volumetric_history(s, make_field(s, name=name))
        parent_id = jobs.enqueue_portfolio_recompute(s, reason="test").id
    with db.session() as s:
        assert jobs.claim_next(s, "driver").id == parent_id
        parts.split(s, parent_id)
    for k in range(jobs.MAX_ATTEMPTS):  # one part's workers die, one after the other
        with db.session() as s:
            doomed_id = jobs.claim_next(s, f"w{k}", dt.timedelta(0), parent_id=parent_id).id
    runner.run_job(db, parent_id, stale_after=dt.timedelta(0))
    with db.session() as s:
        assert s.get(Job, doomed_id).status == "failed"
        others = s.execute(select(Job).where(Job.parent_id == parent_id, Job.id != doomed_id)).scalars()
        assert {(p.status, p.claimed_by) for p in others} == {("done", "driver")}
        parent = s.get(Job, parent_id)
        assert (parent.status, parent.progress_done, parent.progress_total) == ("failed", 2, 3)
        assert parent.error.startswith("fields not recomputed: 1 (a part was given up: its worker stopped")
