"""Recomputes that failed unexpectedly: which field, when, why (its estimate is then stale).

An engine refusal (``EngineError``) is an answer and is stored as an estimate row; anything
else (a defect, a numerical failure the engine did not foresee) must not stop the
portfolio: the field keeps its last estimate, marked stale with the reason, and the job
goes on with the next field (issue 18).
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from sqlalchemy import delete, select
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import RecomputeFailure


@dataclass(frozen=True)
class StaleEstimate:
    """Why a field's stored estimate is older than its data."""

    error: str
    failed_at: dt.datetime
    job_id: int | None


def describe(exc: BaseException) -> str:
    """One line for people: the exception's kind and message, cut to a readable length."""
    text = f"{type(exc).__name__}: {exc}".strip()
    return text if len(text) <= 500 else text[:497] + "..."


def record_failure(session: Session, field_id: int, job_id: int | None, error: str) -> None:
    """Remember (replacing any earlier one) that this field's recompute failed."""
    row = session.get(RecomputeFailure, field_id)
    if row is None:
        session.add(RecomputeFailure(field_id=field_id, job_id=job_id, error=error, failed_at=utcnow()))
    else:
        row.job_id, row.error, row.failed_at = job_id, error, utcnow()
    session.flush()


def clear_failure(session: Session, field_id: int) -> None:
    """A recompute finished: the field's estimate is current again."""
    session.execute(delete(RecomputeFailure).where(RecomputeFailure.field_id == field_id))


def stale_estimate(session: Session, field_id: int) -> StaleEstimate | None:
    """The field's last unexpected recompute failure, if its estimate is stale because of it."""
    row = session.execute(
        select(RecomputeFailure.error, RecomputeFailure.failed_at, RecomputeFailure.job_id).where(
            RecomputeFailure.field_id == field_id
        )
    ).first()
    return None if row is None else StaleEstimate(row.error, row.failed_at, row.job_id)
