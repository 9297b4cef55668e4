"""A portfolio recompute in parts that every worker shares (issue 17).

The worker that claims a portfolio job splits it into parts of a few fields each (one
``recompute_part`` job per part, ``parent_id`` the portfolio job, ``field_ids`` its fields)
and then works on them like any other worker; the other workers claim parts too
(:func:`.queue.claim_next`). The portfolio job's progress is the sum of its parts' fields
(each field's commit adds one), its failures are its fields' failures (``RecomputeFailure``
rows that name it), and it ends when every part has ended (:func:`settle`).

A part resumes where it stopped: its ``progress_done`` is committed with each field's
estimate, so a part taken over from a dead worker does not recompute the fields already
done, and each field's commit first checks that the part is still this worker's
(:func:`hold`), so a worker presumed dead that wakes up stops instead of counting twice.
"""

from __future__ import annotations

import datetime as dt
import math

from sqlalchemy import func, or_, select, update
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import Field, Job, RecomputeFailure
from ...db.statistics import refresh_statistics
from .queue import MAX_ATTEMPTS, PART_JOB, STALE_AFTER

# Parts of at most 10 fields: a claim costs a few transactions, about 1 % of ten fields'
# analyses; smaller parts for small portfolios, so that at least 32 parts spread over the
# workers (the last part is what the other workers wait for at the end).
MAX_PART_FIELDS = 10
MIN_PARTS = 32


class LostClaimError(RuntimeError):
    """This worker's part was taken over (its heartbeat went stale): stop without writing."""


def part_size(n_fields: int) -> int:
    return max(1, min(MAX_PART_FIELDS, math.ceil(n_fields / MIN_PARTS)))


def split(session: Session, parent_id: int) -> None:
    """Split the portfolio job into parts of the fields there are now (once: a job taken
    over from a dead worker keeps its parts)."""
    if session.execute(select(Job.id).where(Job.parent_id == parent_id).limit(1)).first() is not None:
        return
    refresh_statistics(session)  # every field is read next: plans from current statistics
    parent = session.get(Job, parent_id)
    ids = list(session.execute(select(Field.id).order_by(Field.id)).scalars())
    size = part_size(len(ids))
    session.add_all(
        Job(
            kind=PART_JOB,
            parent_id=parent_id,
            field_ids=ids[k : k + size],
            reason=parent.reason,
            progress_total=len(ids[k : k + size]),
        )
        for k in range(0, len(ids), size)
    )
    parent.progress_total, parent.progress_done, parent.error = len(ids), 0, None
    session.flush()


def hold(session: Session, part_id: int, worker: str, done: int) -> None:
    """Begin a field's transaction: beat the part's heart if it is still this worker's and
    still at ``done`` fields (a write first: SQLite's write lock; PostgreSQL's row lock,
    which claims skip), or raise :class:`LostClaimError`."""
    held = session.execute(
        update(Job)
        .where(
            Job.id == part_id, Job.status == "running", Job.claimed_by == worker, Job.progress_done == done
        )
        .values(heartbeat_at=utcnow())
    ).rowcount
    if not held:
        raise LostClaimError(f"part {part_id} is no longer {worker}'s")


def field_done(
    session: Session, part_id: int, parent_id: int, done: int, part_error: str | None
) -> tuple[int, int]:
    """In the field's transaction: count the field in its part (with the part's failures so
    far) and in the portfolio job (listing its failures there when this part has some);
    return the portfolio job's (fields done so far, fields)."""
    session.execute(update(Job).where(Job.id == part_id).values(progress_done=done, error=part_error))
    # Last, so that the portfolio job's row is locked only until this commit.
    parent = session.execute(
        update(Job)
        .where(Job.id == parent_id)
        .values(progress_done=Job.progress_done + 1)
        .returning(Job.progress_done, Job.progress_total)
    ).one()
    if part_error:
        error = failures_text(session, parent_id, parent.progress_total)
        session.execute(update(Job).where(Job.id == parent_id).values(error=error))
    return parent.progress_done, parent.progress_total


def finish_part(session: Session, part_id: int, worker: str, done: int) -> None:
    hold(session, part_id, worker, done)
    session.execute(update(Job).where(Job.id == part_id).values(status="done", finished_at=utcnow()))


def failures_text(session: Session, parent_id: int, total: int) -> str | None:
    """The portfolio job's failed fields, as people read them on the jobs page."""
    rows = session.execute(
        select(Field.name, RecomputeFailure.error)
        .join(Field, Field.id == RecomputeFailure.field_id)
        .where(RecomputeFailure.job_id == parent_id)
        .order_by(Field.id)
    ).all()
    return failures_head([f"{name}: {error}" for name, error in rows], total)


def failures_head(failures: list[str], total: int) -> str | None:
    if not failures:
        return None
    head = f"{len(failures)} of {total} fields could not be recomputed (their estimates are stale): "
    return (head + "; ".join(failures))[:2000]


def progress(session: Session, parent_id: int, stale_after: dt.timedelta = STALE_AFTER) -> tuple[bool, int]:
    """(whether a claim has a part to take or to give up, how many parts have not ended) -
    reads only. A dead worker's part counts however often it was tried: the claim marks it
    failed when it has been tried too often (:func:`.queue.claim_next`)."""
    stale_before = utcnow() - stale_after
    dead = (Job.status == "running") & (Job.heartbeat_at < stale_before)
    parts = select(Job.id).where(Job.parent_id == parent_id)
    claimable = session.execute(
        parts.where(or_((Job.status == "queued") & (Job.attempts < MAX_ATTEMPTS), dead)).limit(1)
    ).first()
    open_parts = session.execute(
        select(func.count()).select_from(parts.where(Job.status.in_(("queued", "running"))).subquery())
    ).scalar_one()
    return claimable is not None, open_parts


def settle(session: Session, parent_id: int) -> str | None:
    """End the portfolio job if every part has ended: "done", or "failed" when a part was
    given up (its fields were not all recomputed); None while parts are still open."""
    parent = session.execute(select(Job).where(Job.id == parent_id).with_for_update()).scalar_one()
    if parent.status in ("done", "failed"):
        return parent.status
    parts = session.execute(
        select(Job.status, Job.progress_done, Job.progress_total, Job.error).where(Job.parent_id == parent_id)
    ).all()
    if any(p.status in ("queued", "running") for p in parts):
        return None
    given_up = [p for p in parts if p.status == "failed"]
    parent.progress_done = sum(p.progress_done for p in parts)
    errors = [failures_text(session, parent_id, parent.progress_total)]
    if given_up:
        missed = sum(p.progress_total - p.progress_done for p in given_up)
        errors.insert(0, f"fields not recomputed: {missed} (a part was given up: {given_up[0].error})")
    parent.error = "; ".join(e for e in errors if e)[:2000] or None
    parent.status = "failed" if given_up else "done"
    parent.finished_at = utcnow()
    session.flush()
    return parent.status
