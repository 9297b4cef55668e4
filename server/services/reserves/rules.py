"""Errors, the reserves team settings and the lock that keeps submitted and approved reviews unchanged.

Team settings (stored in ``team_setting`` like the others, set through
:func:`set_reserves_settings`, audited):

- ``reserves.four_eyes`` (default true): nobody approves a review they prepared (created,
  refreshed, booked, reconciled or submitted);
- ``reserves.justify_2p_change_frac`` (default 0.10): a field whose booked 2P changes by more
  than this fraction of last year's 2P needs a written justification.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from sqlalchemy import event, select
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import Booking, Field, ReconciliationLine, ReservesReview, ReviewField, TeamSetting
from .. import audit

FOUR_EYES_KEY = "reserves.four_eyes"
JUSTIFY_KEY = "reserves.justify_2p_change_frac"
JUSTIFY_RANGE = (0.0, 10.0)  # exclusive above 0, inclusive below 10 (a fraction of last year's 2P)
BALANCE_TOLERANCE_BSCF = 0.0005  # half the 0.001 Bscf the review shows: "balances to rounding"


class ReservesError(ValueError):
    """A reserves action that cannot be done as asked; the message says why."""


class ReviewLockedError(ReservesError):
    """The review is submitted or approved and cannot be changed."""


class ReviewNotFoundError(ReservesError):
    """No review with that id (or not one the user may see)."""


class FourEyesError(ReservesError, PermissionError):
    """The approver prepared this review and the team asks for four eyes."""


@dataclass(frozen=True)
class ReservesSettings:
    four_eyes: bool = True
    justify_2p_change_frac: float = 0.10


def reserves_settings(session: Session) -> ReservesSettings:
    rows = dict(
        session.execute(
            select(TeamSetting.key, TeamSetting.value).where(
                TeamSetting.key.in_([FOUR_EYES_KEY, JUSTIFY_KEY])
            )
        ).all()
    )
    default = ReservesSettings()
    return ReservesSettings(
        four_eyes=bool(rows.get(FOUR_EYES_KEY, default.four_eyes)),
        justify_2p_change_frac=float(rows.get(JUSTIFY_KEY, default.justify_2p_change_frac)),
    )


def set_reserves_settings(
    session: Session, actor: audit.Actor, *, four_eyes: bool | None = None, justify_2p_change_frac=None
) -> ReservesSettings:
    """Change the reserves settings (administrators); checks every value first, changes nothing on error."""
    problems = {}
    if four_eyes is not None and not isinstance(four_eyes, bool):
        problems[FOUR_EYES_KEY] = "must be true or false"
    if justify_2p_change_frac is not None:
        try:
            v = float(justify_2p_change_frac)
        except (TypeError, ValueError):
            v = math.nan
        lo, hi = JUSTIFY_RANGE
        if not (math.isfinite(v) and lo < v <= hi):
            problems[JUSTIFY_KEY] = f"must be a fraction above {lo:g} and at most {hi:g} (0.1 is 10 %)"
    if problems:
        raise ReservesError("; ".join(f"{k}: {v}" for k, v in problems.items()))
    before = reserves_settings(session)
    for key, value in ((FOUR_EYES_KEY, four_eyes), (JUSTIFY_KEY, justify_2p_change_frac)):
        if value is None:
            continue
        row = session.get(TeamSetting, key) or TeamSetting(key=key)
        row.value = bool(value) if key == FOUR_EYES_KEY else float(value)
        row.updated_at = utcnow()
        row.updated_by_id = actor.user_id
        session.add(row)
    session.flush()
    after = reserves_settings(session)
    old, new = audit.changed(before.__dict__, after.__dict__)
    if new:
        audit.record(
            session,
            actor,
            "update",
            "team_setting",
            before=old,
            after=new,
            summary="reserves settings: " + ", ".join(f"{k} {old[k]} → {new[k]}" for k in new),
        )
    return after


def require_draft(review: ReservesReview) -> None:
    """Refuse any change to a review that is not a draft."""
    if review.status != "draft":
        how = (
            "reopen it with a reason to make a new revision"
            if review.status == "approved"
            else ("return it to draft first")
        )
        raise ReviewLockedError(
            f"review {review.name!r} revision {review.revision} is {review.status}: "
            f"it cannot be changed; {how}"
        )


# The last line of defence: whatever code path flushes a change, a row of an approved review
# (or the approved review itself) is never updated or deleted through the ORM.
_CHILDREN = (ReviewField, ReconciliationLine)


def _stored_status(session: Session, review_id: int) -> str | None:
    with session.no_autoflush:
        return session.execute(
            select(ReservesReview.status).where(ReservesReview.id == review_id)
        ).scalar_one_or_none()


def _guard(session: Session, flush_context, instances) -> None:
    kinds = (ReservesReview, Booking, *_CHILDREN)
    touched = [o for o in session.deleted if isinstance(o, kinds)]
    touched += [o for o in session.dirty if isinstance(o, kinds) and session.is_modified(o)]
    touched += [o for o in session.new if isinstance(o, (Booking, *_CHILDREN))]
    for obj in touched:
        if isinstance(obj, ReservesReview):
            review_id = obj.id
        elif isinstance(obj, _CHILDREN):
            review_id = obj.review_id
        elif isinstance(obj, Booking):
            with session.no_autoflush:
                review_id = session.execute(
                    select(ReviewField.review_id).where(ReviewField.id == obj.review_field_id)
                ).scalar_one_or_none()
        else:
            continue
        if review_id is not None and _stored_status(session, review_id) == "approved":
            raise ReviewLockedError(f"reserves review {review_id} is approved: its rows cannot be changed")


event.listen(Session, "before_flush", _guard)


def field_ref(session: Session, field_id: int) -> int | None:
    """The field id for an audit event, or None when the field no longer exists (it left the portfolio)."""
    with session.no_autoflush:
        return field_id if session.execute(select(Field.id).where(Field.id == field_id)).first() else None
