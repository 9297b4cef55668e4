"""A small job queue in the database: one pending recompute per field, claimed safely.

On PostgreSQL a job is claimed with ``SELECT ... FOR UPDATE SKIP LOCKED`` so several
app processes can drain the queue; SQLite has a single writer, so a plain claim is
enough there. A job left ``running`` by a worker that died is picked up again once
its heartbeat is older than ``STALE_AFTER``.
"""

from __future__ import annotations

import datetime as dt
import logging
import os
import socket

from sqlalchemy import or_, select
from sqlalchemy.orm import Session

from ..db.base import utcnow
from ..db.models import Field, Job
from ..db.session import Database
from .recompute import recompute_field

log = logging.getLogger(__name__)
STALE_AFTER = dt.timedelta(minutes=5)
MAX_ATTEMPTS = 3


def worker_name() -> str:
    return f"{socket.gethostname()}:{os.getpid()}"


def enqueue_field_recompute(session: Session, field_ids, reason: str) -> list[Job]:
    """Queue a recompute for each field unless one is already waiting."""
    ids = sorted(set(field_ids))
    if not ids:
        return []
    waiting = set(
        session.execute(
            select(Job.field_id).where(
                Job.kind == "recompute_field", Job.status == "queued", Job.field_id.in_(ids)
            )
        ).scalars()
    )
    jobs = [Job(kind="recompute_field", field_id=i, reason=reason) for i in ids if i not in waiting]
    session.add_all(jobs)
    session.flush()
    return jobs


def claim_next(session: Session, worker: str) -> Job | None:
    """Mark the oldest runnable job as running by ``worker`` and return it."""
    stale_before = utcnow() - STALE_AFTER
    stmt = (
        select(Job)
        .where(
            or_(
                Job.status == "queued",
                (Job.status == "running") & (Job.heartbeat_at < stale_before),
            ),
            Job.attempts < MAX_ATTEMPTS,
        )
        .order_by(Job.id)
        .limit(1)
    )
    if session.get_bind().dialect.name == "postgresql":
        stmt = stmt.with_for_update(skip_locked=True)
    job = session.execute(stmt).scalar_one_or_none()
    if job is None:
        return None
    job.status = "running"
    job.claimed_by = worker
    job.heartbeat_at = utcnow()
    job.attempts += 1
    session.flush()
    return job


def run_one(db: Database, worker: str | None = None) -> bool:
    """Claim and run one job; return False when the queue is empty."""
    worker = worker or worker_name()
    with db.session() as session:
        job = claim_next(session, worker)
        if job is None:
            return False
        job_id = job.id
    try:
        with db.session() as session:
            job = session.get(Job, job_id)
            if job.kind == "recompute_field" and job.field_id is not None:
                field = session.get(Field, job.field_id)
                if field is not None:
                    recompute_field(session, field)
                job.progress_done = job.progress_total = 1
            job.status = "done"
            job.finished_at = utcnow()
    except Exception as exc:
        log.exception("job %s failed", job_id)
        with db.session() as session:
            job = session.get(Job, job_id)
            job.status = "failed" if job.attempts >= MAX_ATTEMPTS else "queued"
            job.error = f"{type(exc).__name__}: {exc}"
    return True


def drain(db: Database, worker: str | None = None, limit: int | None = None) -> int:
    """Run jobs until the queue is empty (or ``limit`` jobs ran); return how many ran."""
    n = 0
    while (limit is None or n < limit) and run_one(db, worker):
        n += 1
    return n
