"""Running the queued jobs: a field's recompute, or the whole portfolio's (see :mod:`.queue`)."""

from __future__ import annotations

import datetime as dt
import logging
import threading
import time
from collections.abc import Callable

from sqlalchemy import select, update
from sqlalchemy.exc import DBAPIError, OperationalError
from sqlalchemy.orm import Session, joinedload

from ...db.base import utcnow
from ...db.models import Field, Fluid, Job
from ...db.session import Database
from . import parts
from .failures import clear_failure, describe, record_failure
from .queue import (
    FIELD_JOB,
    MAX_ATTEMPTS,
    PART_JOB,
    PORTFOLIO_JOB,
    STALE_AFTER,
    claim_next,
    has_work,
    is_postgresql,
    touch,
    worker_name,
    write_first,
)
from .recompute import recompute_field

log = logging.getLogger(__name__)
PART_WAIT_SECONDS = 0.25  # how often a portfolio job's worker looks at the other workers' parts


def _recompute_one(session: Session, field_id: int, job_id: int | None = None) -> str | None:
    """Recompute one field; return None, or the reason it failed.

    A failure other than the database's (which leaves the whole job to be retried) is
    kept beside the field (its estimate is then stale, and its page says why) and does
    not stop the job: the field's work is rolled back to a savepoint."""
    stmt = (
        select(Field)
        .where(Field.id == field_id)
        # what the recompute reads of the field in the same statement (issue 17: each lazy load
        # is a round trip; the lab points follow in one more)
        .options(joinedload(Field.fluid).selectinload(Fluid.lab_points), joinedload(Field.settings))
    )
    if is_postgresql(session):
        stmt = stmt.with_for_update(of=Field)  # two jobs for one field run one after the other
    field = session.execute(stmt).scalar_one_or_none()
    if field is None:
        return None
    try:
        with session.begin_nested():
            recompute_field(session, field)
    except DBAPIError:
        raise
    except Exception as exc:
        log.exception("recompute of field %s failed", field_id)
        error = describe(exc)
        record_failure(session, field_id, job_id, error)
        return f"{field.name}: {error}"
    clear_failure(session, field_id)
    return None


def run_job(
    db: Database,
    job_id: int,
    on_progress: Callable[[int, int], None] | None = None,
    stale_after: dt.timedelta = STALE_AFTER,
) -> None:
    """Run a claimed job to its end (or raise, leaving it to be retried).

    A portfolio job is split into parts that every worker may claim (:mod:`.parts`); this
    worker works on them too and ends the job when every part has ended. A field that fails
    does not stop a portfolio job: the others are recomputed, and the job ends "done" with
    the failures listed in its ``error`` (a field job ends "failed")."""
    with db.session() as session:
        touch(session, job_id)  # a write first (SQLite: the write lock before any read)
        job = session.get(Job, job_id)
        kind, field_id, worker = job.kind, job.field_id, job.claimed_by
    if kind == PORTFOLIO_JOB:
        _run_portfolio(db, job_id, worker or worker_name(), on_progress, stale_after)
    elif kind == PART_JOB:
        _run_part(db, job_id, on_progress)
    elif kind == FIELD_JOB:
        with db.session() as session:
            touch(session, job_id)
            failure = _recompute_one(session, field_id, job_id) if field_id is not None else None
            touch(
                session,
                job_id,
                status="failed" if failure else "done",
                error=failure,
                progress_done=1,
                progress_total=1,
                finished_at=utcnow(),
            )
    else:
        raise ValueError(f"unknown job kind {kind!r}")


def _run_portfolio(db, job_id, worker, on_progress, stale_after) -> None:
    """Split the portfolio job, run its parts that no other worker has taken, then wait for
    the others' and end the job (a dead worker's part is taken over here too)."""
    with db.session() as session:
        touch(session, job_id)
        parts.split(session, job_id)
    while True:
        with db.session() as session:
            claimable, open_parts = parts.progress(session, job_id, stale_after)
        if claimable:
            with db.session() as session:
                part = claim_next(session, worker, stale_after, parent_id=job_id)
                part_id = part.id if part is not None else None
            if part_id is not None:
                _run_claimed(db, part_id, worker, stale_after, on_progress)
            continue
        if not open_parts:
            with db.session() as session:
                write_first(session)
                if parts.settle(session, job_id) is not None:
                    return
        time.sleep(PART_WAIT_SECONDS)  # the last parts are another worker's


def _run_part(db: Database, part_id: int, on_progress: Callable[[int, int], None] | None) -> None:
    """Recompute a part's fields from where it stopped, one transaction a field."""
    with db.session() as session:
        touch(session, part_id)
        part = session.get(Job, part_id)
        ids, done, error = list(part.field_ids or []), part.progress_done, part.error
        parent_id, worker = part.parent_id, part.claimed_by
    for k in range(done, len(ids)):
        with db.session() as session:
            parts.hold(session, part_id, worker, k)
            failure = _recompute_one(session, ids[k], parent_id)
            if failure:
                error = f"{error}; {failure}" if error else failure
            portfolio_done, portfolio_total = parts.field_done(session, part_id, parent_id, k + 1, error)
        if on_progress:
            on_progress(portfolio_done, portfolio_total)
    with db.session() as session:
        parts.finish_part(session, part_id, worker, len(ids))


class Heartbeat:
    """Keeps a claimed job's heartbeat fresh from a thread of its own while the job runs, so
    the stale limit can be seconds: only a worker that is gone stops beating (issue 18).

    Each beat is its own short write transaction. While the job's own transaction holds the
    job row (PostgreSQL: a row lock, skipped by claims; SQLite: the write lock, which claims
    wait for) a beat waits for it, and nobody can take the job over meanwhile either."""

    def __init__(self, db: Database, job_id: int, worker: str, every_seconds: float):
        self.db, self.job_id, self.worker, self.every = db, job_id, worker, max(every_seconds, 0.05)
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._run, name=f"heartbeat-{job_id}", daemon=True)

    def _run(self) -> None:
        while not self._stop.wait(self.every):
            try:
                with self.db.session(write=True) as session:
                    session.execute(
                        update(Job)
                        .where(Job.id == self.job_id, Job.status == "running", Job.claimed_by == self.worker)
                        .values(heartbeat_at=utcnow())
                    )
            except Exception:  # a busy or lost database: the next beat tries again
                log.info("heartbeat of job %s missed", self.job_id, exc_info=True)

    def __enter__(self) -> Heartbeat:
        self._thread.start()
        return self

    def __exit__(self, *exc) -> None:
        self._stop.set()
        self._thread.join(timeout=60)


def run_one(db: Database, worker: str | None = None, stale_after: dt.timedelta = STALE_AFTER) -> bool:
    """Claim and run one job; return False when there is nothing to run."""
    worker = worker or worker_name()
    try:
        # An idle worker only reads: on SQLite every commit can spoil a concurrent request's
        # read-then-write transaction, so the claim (a write) happens only when there is work.
        with db.session() as session:
            if not has_work(session, stale_after):
                return False
        with db.session() as session:
            job = claim_next(session, worker, stale_after)
            if job is None:
                return False
            job_id = job.id
    except OperationalError:
        log.info("queue busy; trying again")  # SQLite: another writer held the lock too long
        return True
    _run_claimed(db, job_id, worker, stale_after)
    return True


def _run_claimed(
    db: Database,
    job_id: int,
    worker: str,
    stale_after: dt.timedelta = STALE_AFTER,
    on_progress: Callable[[int, int], None] | None = None,
) -> None:
    """Run a job this process claimed, beating its heart; a failure leaves it queued for
    another attempt."""
    try:
        with Heartbeat(db, job_id, worker, stale_after.total_seconds() / 5):
            run_job(db, job_id, on_progress, stale_after)
    except parts.LostClaimError:
        log.warning("job %s was taken over by another worker; %s stops it", job_id, worker)
    except Exception as exc:
        log.exception("job %s failed", job_id)
        with db.session() as session:
            touch(session, job_id, error=f"{type(exc).__name__}: {exc}"[:2000])
            job = session.get(Job, job_id)
            job.status = "failed" if job.attempts >= MAX_ATTEMPTS else "queued"
            job.finished_at = utcnow() if job.status == "failed" else None


def run_now(db: Database, job_id: int, *, wait_seconds: float = 30.0, worker: str | None = None) -> str:
    """Run one queued job in the caller's thread (a page that shows its own recompute's
    result), or, if a worker has already claimed it, wait up to ``wait_seconds`` for it.

    Returns the job's status at the end ("done", "failed", or still "queued"/"running")."""
    worker = worker or worker_name()
    with db.session() as session:
        write_first(session)
        claimed = session.execute(
            update(Job)
            .where(Job.id == job_id, Job.status == "queued", Job.attempts < MAX_ATTEMPTS)
            .values(status="running", claimed_by=worker, heartbeat_at=utcnow(), attempts=Job.attempts + 1)
        ).rowcount
    if claimed:
        _run_claimed(db, job_id, worker)
    deadline = time.monotonic() + wait_seconds
    while True:
        with db.session() as session:
            status = session.execute(select(Job.status).where(Job.id == job_id)).scalar_one()
        if status in ("done", "failed") or time.monotonic() >= deadline:
            return status
        time.sleep(0.1)


def drain(
    db: Database, worker: str | None = None, limit: int | None = None, stale_after: dt.timedelta = STALE_AFTER
) -> int:
    """Run jobs until the queue is empty (or ``limit`` jobs ran); return how many ran."""
    n = 0
    while (limit is None or n < limit) and run_one(db, worker, stale_after):
        n += 1
    return n
