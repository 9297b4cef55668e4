"""A small job queue in the database: recompute one field, or the whole portfolio.

A portfolio recompute is split into parts of a few fields each when a worker takes it up
(:mod:`.parts`); any worker claims parts, so every worker shares one portfolio recompute.

This module queues, claims and describes jobs; :mod:`.runner` runs them.

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
from dataclasses import dataclass

from sqlalchemy import func, or_, select, text, update
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import Field, Job

log = logging.getLogger(__name__)
# A running job's worker beats every STALE_AFTER / 5 (runner.Heartbeat), so a job silent for
# STALE_AFTER has lost its worker (killed, machine gone) and is taken over within seconds.
STALE_AFTER = dt.timedelta(seconds=15)
MAX_ATTEMPTS = 3
FIELD_JOB = "recompute_field"
PORTFOLIO_JOB = "recompute_portfolio"
PART_JOB = "recompute_part"  # a few fields of a portfolio recompute (``parent_id``, ``field_ids``)


def worker_name() -> str:
    return f"{socket.gethostname()}:{os.getpid()}"


ENQUEUE_LOCK = 7285  # PostgreSQL advisory lock class (with the field id) for enqueueing


def enqueue_field_recompute(session: Session, field_ids, reason: str) -> list[Job]:
    """Queue a recompute for each field unless one is already waiting."""
    ids = sorted(set(field_ids))
    if not ids:
        return []
    write_first(session)
    if is_postgresql(session):  # two requests must not both find no job waiting and add one each
        for i in ids:
            session.execute(
                text("SELECT pg_advisory_xact_lock(CAST(:k AS integer), CAST(:f AS integer))"),
                {"k": ENQUEUE_LOCK, "f": i},
            )
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


def is_postgresql(session: Session) -> bool:
    return session.get_bind().dialect.name == "postgresql"


def write_first(session: Session) -> None:
    """On SQLite, take the write lock before reading (a no-op write matching no row).

    A deferred SQLite transaction that reads and then writes fails at once ("database is
    locked") when another connection committed in between; one that writes first waits
    for the lock instead (busy timeout) and then reads the latest data."""
    if not is_postgresql(session):
        session.execute(update(Job).where(Job.id < 0).values(status="queued"))


def has_work(session: Session, stale_after: dt.timedelta = STALE_AFTER) -> bool:
    """Whether a job is queued or was left by a dead worker (a read only)."""
    stale_before = utcnow() - stale_after
    dead = (Job.status == "running") & (Job.heartbeat_at < stale_before)
    return (
        session.execute(select(Job.id).where(or_(Job.status == "queued", dead)).limit(1)).first() is not None
    )


def claim_next(
    session: Session, worker: str, stale_after: dt.timedelta = STALE_AFTER, *, parent_id: int | None = None
) -> Job | None:
    """Mark the oldest runnable job as running by ``worker`` and return it.

    Jobs of their own (a field's, a portfolio's) come before the parts of a portfolio
    recompute, so a field queued by a user is not kept waiting behind thousands of fields;
    ``parent_id``: only the parts of that portfolio job."""
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
        .order_by(Job.parent_id.is_not(None), Job.id)
        .limit(1)
    )
    if parent_id is not None:
        stmt = stmt.where(Job.parent_id == parent_id)
    if is_postgresql(session):
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


def touch(session: Session, job_id: int, **values) -> None:
    """Heartbeat (and any other values)."""
    session.execute(update(Job).where(Job.id == job_id).values(heartbeat_at=utcnow(), **values))


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
    """The latest jobs people queued (a portfolio recompute's parts are its own business)."""
    stmt = _visible(select(Job).where(Job.parent_id.is_(None)), asset_ids)
    rows = session.execute(stmt.order_by(Job.id.desc()).limit(limit)).scalars()
    return [job_view(j) for j in rows]
