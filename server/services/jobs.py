"""A small job queue in the database: recompute one field, or the whole portfolio.

Works with several app or worker processes on both databases:

- Claiming: on PostgreSQL ``SELECT ... FOR UPDATE SKIP LOCKED`` hands each job to one
  worker; on SQLite the claim's first statement is a write (:func:`write_first`), so
  SQLite's single write lock serialises claims.
- A claimed job carries a heartbeat. A job still ``running`` whose heartbeat is older
  than ``stale_after`` belongs to a worker that died: the next claim takes it over,
  up to ``MAX_ATTEMPTS`` times, then it is marked failed with the reason.
- A field's recompute and its job's completion commit in one transaction with the
  field's row locked (PostgreSQL) or the write lock held (SQLite), and the estimate is
  keyed by its inputs' fingerprint, so a job run twice writes one estimate.
"""

from __future__ import annotations

import datetime as dt
import logging
import os
import socket
import time
from collections.abc import Callable
from dataclasses import dataclass

from sqlalchemy import func, or_, select, update
from sqlalchemy.exc import OperationalError
from sqlalchemy.orm import Session

from ..db.base import utcnow
from ..db.models import Field, Job
from ..db.session import Database
from .recompute import recompute_field

log = logging.getLogger(__name__)
STALE_AFTER = dt.timedelta(minutes=5)
MAX_ATTEMPTS = 3
FIELD_JOB = "recompute_field"
PORTFOLIO_JOB = "recompute_portfolio"


def worker_name() -> str:
    return f"{socket.gethostname()}:{os.getpid()}"


def enqueue_field_recompute(session: Session, field_ids, reason: str) -> list[Job]:
    """Queue a recompute for each field unless one is already waiting."""
    ids = sorted(set(field_ids))
    if not ids:
        return []
    write_first(session)
    waiting = set(
        session.execute(
            select(Job.field_id).where(Job.kind == FIELD_JOB, Job.status == "queued", Job.field_id.in_(ids))
        ).scalars()
    )
    jobs = [
        Job(kind=FIELD_JOB, field_id=i, reason=reason[:200], progress_total=1)
        for i in ids
        if i not in waiting
    ]
    session.add_all(jobs)
    session.flush()
    return jobs


def enqueue_portfolio_recompute(session: Session, reason: str, *, reuse_running: bool = True) -> Job:
    """Queue a recompute of every field, or return the one already queued (or running).

    ``reuse_running=False`` when what every field reads has just changed (team settings): a
    running job may already have passed some fields, so only a queued one will do."""
    write_first(session)
    reusable = ("queued", "running") if reuse_running else ("queued",)
    current = (
        session.execute(
            select(Job).where(Job.kind == PORTFOLIO_JOB, Job.status.in_(reusable)).order_by(Job.id)
        )
        .scalars()
        .first()
    )
    if current is not None:
        return current
    total = session.execute(select(func.count()).select_from(Field)).scalar_one()
    job = Job(kind=PORTFOLIO_JOB, reason=reason[:200], progress_total=total)
    session.add(job)
    session.flush()
    return job


def _is_postgresql(session: Session) -> bool:
    return session.get_bind().dialect.name == "postgresql"


def write_first(session: Session) -> None:
    """On SQLite, take the write lock before reading (a no-op write matching no row).

    A deferred SQLite transaction that reads and then writes fails at once ("database is
    locked") when another connection committed in between; one that writes first waits
    for the lock instead (busy timeout) and then reads the latest data."""
    if not _is_postgresql(session):
        session.execute(update(Job).where(Job.id < 0).values(status="queued"))


def has_work(session: Session, stale_after: dt.timedelta = STALE_AFTER) -> bool:
    """Whether a job is queued or was left by a dead worker (a read only)."""
    stale_before = utcnow() - stale_after
    dead = (Job.status == "running") & (Job.heartbeat_at < stale_before)
    return (
        session.execute(select(Job.id).where(or_(Job.status == "queued", dead)).limit(1)).first() is not None
    )


def claim_next(session: Session, worker: str, stale_after: dt.timedelta = STALE_AFTER) -> Job | None:
    """Mark the oldest runnable job as running by ``worker`` and return it."""
    now = utcnow()
    stale_before = now - stale_after
    write_first(session)
    dead = (Job.status == "running") & (Job.heartbeat_at < stale_before)
    session.execute(
        update(Job)
        .where(dead, Job.attempts >= MAX_ATTEMPTS)
        .values(
            status="failed",
            finished_at=now,
            error=f"its worker stopped responding {MAX_ATTEMPTS} times; the job was given up",
        )
    )
    stmt = (
        select(Job)
        .where(or_(Job.status == "queued", dead), Job.attempts < MAX_ATTEMPTS)
        .order_by(Job.id)
        .limit(1)
    )
    if _is_postgresql(session):
        stmt = stmt.with_for_update(skip_locked=True)
    job = session.execute(stmt).scalar_one_or_none()
    if job is None:
        return None
    if job.status == "running":
        log.warning("job %s: worker %s stopped responding; taken over by %s", job.id, job.claimed_by, worker)
    job.status = "running"
    job.claimed_by = worker
    job.heartbeat_at = now
    job.attempts += 1
    session.flush()
    return job


def _touch(session: Session, job_id: int, **values) -> None:
    """Heartbeat (and any other values)."""
    session.execute(update(Job).where(Job.id == job_id).values(heartbeat_at=utcnow(), **values))


def _recompute_one(session: Session, field_id: int) -> bool:
    stmt = select(Field).where(Field.id == field_id)
    if _is_postgresql(session):
        stmt = stmt.with_for_update()  # two jobs for one field run one after the other
    field = session.execute(stmt).scalar_one_or_none()
    if field is None:
        return False
    _, written = recompute_field(session, field)
    return written


def run_job(db: Database, job_id: int, on_progress: Callable[[int, int], None] | None = None) -> None:
    """Run a claimed job to its end (or raise, leaving it to be retried)."""
    with db.session() as session:
        _touch(session, job_id)  # a write first (SQLite: the write lock before any read)
        job = session.get(Job, job_id)
        kind, field_id = job.kind, job.field_id
        if kind == PORTFOLIO_JOB:
            ids = list(session.execute(select(Field.id).order_by(Field.id)).scalars())
            _touch(session, job_id, progress_total=len(ids), progress_done=0)
    if kind == FIELD_JOB:
        with db.session() as session:
            _touch(session, job_id)
            if field_id is not None:
                _recompute_one(session, field_id)
            _touch(session, job_id, status="done", progress_done=1, progress_total=1, finished_at=utcnow())
        return
    if kind != PORTFOLIO_JOB:
        raise ValueError(f"unknown job kind {kind!r}")
    for done, fid in enumerate(ids, start=1):
        with db.session() as session:
            _touch(session, job_id)
            _recompute_one(session, fid)
            _touch(session, job_id, progress_done=done)
        if on_progress:
            on_progress(done, len(ids))
    with db.session() as session:
        _touch(session, job_id, status="done", finished_at=utcnow())


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
    _run_claimed(db, job_id)
    return True


def _run_claimed(db: Database, job_id: int) -> None:
    """Run a job this process claimed; a failure leaves it queued for another attempt."""
    try:
        run_job(db, job_id)
    except Exception as exc:
        log.exception("job %s failed", job_id)
        with db.session() as session:
            _touch(session, job_id, error=f"{type(exc).__name__}: {exc}"[:2000])
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
        _run_claimed(db, job_id)
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


@dataclass(frozen=True)
class JobView:
    id: int
    kind: str
    status: str
    field_id: int | None
    reason: str
    progress_done: int
    progress_total: int
    attempts: int
    error: str | None
    created_at: dt.datetime
    finished_at: dt.datetime | None

    @property
    def progress_frac(self) -> float:
        if self.status == "done":
            return 1.0
        return self.progress_done / self.progress_total if self.progress_total else 0.0

    @property
    def finished(self) -> bool:
        return self.status in ("done", "failed")


def job_view(job: Job) -> JobView:
    return JobView(
        job.id,
        job.kind,
        job.status,
        job.field_id,
        job.reason,
        job.progress_done,
        job.progress_total,
        job.attempts,
        job.error,
        job.created_at,
        job.finished_at,
    )


def _visible(stmt, asset_ids: frozenset[int] | None):
    """Portfolio jobs, and field jobs of the given assets (None: every asset)."""
    if asset_ids is None:
        return stmt
    return stmt.outerjoin(Field, Job.field_id == Field.id).where(
        or_(Job.field_id.is_(None), Field.asset_id.in_(sorted(asset_ids)))
    )


def get_job(session: Session, job_id: int, asset_ids: frozenset[int] | None = None) -> JobView | None:
    """A job, or None if there is none or it belongs to a field outside ``asset_ids``."""
    job = session.execute(_visible(select(Job).where(Job.id == job_id), asset_ids)).scalar_one_or_none()
    return None if job is None else job_view(job)


def recent_jobs(session: Session, limit: int = 20, asset_ids: frozenset[int] | None = None) -> list[JobView]:
    rows = session.execute(_visible(select(Job), asset_ids).order_by(Job.id.desc()).limit(limit)).scalars()
    return [job_view(j) for j in rows]
