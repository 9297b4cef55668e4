"""Reconciliation against the last approved review, per field and category (1P/2P/3P reserves).

closing = opening - production + revisions + extensions and discoveries + improved recovery
+ acquisitions - disposals [Bscf]. Opening is last year's booked reserves, closing this year's,
production the stored gas of the months between the two effective dates. Until the engineer
assigns a field's change, the remainder goes to revisions; an engineer's assignment is kept
as given, so a booking changed afterwards can leave it out of balance, and the review cannot be
submitted until every field, asset and the portfolio balance to rounding.
A field new since last year opens at zero (presence "new"); a field booked last year and not
in this review closes at zero (presence "left").
"""

from __future__ import annotations

import math
from collections import defaultdict
from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Booking, ReconciliationLine, ReservesReview, ReviewField
from .. import audit
from .booking import booked
from .rules import BALANCE_TOLERANCE_BSCF, ReservesError, field_ref, require_draft
from .snapshot import produced_between

CATEGORIES = ("1P", "2P", "3P")
ASSIGNABLE = (
    "revisions_bscf",
    "extensions_discoveries_bscf",
    "improved_recovery_bscf",
    "acquisitions_bscf",
    "disposals_bscf",
)
NON_NEGATIVE = ASSIGNABLE[1:]


def expected_closing(line) -> float:
    """Opening carried forward through every line of the change [Bscf]."""
    return (
        line.opening_bscf
        - line.production_bscf
        + line.revisions_bscf
        + line.extensions_discoveries_bscf
        + line.improved_recovery_bscf
        + line.acquisitions_bscf
        - line.disposals_bscf
    )


def balance_problems(lines, tolerance_bscf: float = BALANCE_TOLERANCE_BSCF) -> list[str]:
    """Every field, asset and portfolio total (per category) whose lines do not balance."""
    problems = []
    sums: dict[tuple[str, str], list[float]] = defaultdict(lambda: [0.0, 0.0])
    for ln in lines:
        gap = ln.closing_bscf - expected_closing(ln)
        if not math.isfinite(gap) or abs(gap) > tolerance_bscf:
            problems.append(f"{ln.field_name} {ln.category}: out of balance by {gap:+.4f} Bscf")
        for key in (("asset " + ln.asset_name, ln.category), ("portfolio", ln.category)):
            sums[key][0] += ln.closing_bscf
            sums[key][1] += expected_closing(ln)
    for (who, cat), (closing, expected) in sorted(sums.items()):
        gap = closing - expected
        if not math.isfinite(gap) or abs(gap) > tolerance_bscf:
            problems.append(f"{who} {cat}: out of balance by {gap:+.4f} Bscf")
    return problems


def last_approved(session: Session, review: ReservesReview) -> ReservesReview | None:
    """The newest approved review with an earlier effective date."""
    return session.execute(
        select(ReservesReview)
        .where(ReservesReview.status == "approved", ReservesReview.effective_date < review.effective_date)
        .order_by(ReservesReview.effective_date.desc(), ReservesReview.revision.desc())
        .limit(1)
    ).scalar_one_or_none()


def bookings_of(session: Session, review_id: int) -> dict[int, tuple[ReviewField, Booking]]:
    rows = session.execute(
        select(ReviewField, Booking)
        .join(Booking, Booking.review_field_id == ReviewField.id)
        .where(ReviewField.review_id == review_id)
    ).all()
    return {snap.field_id: (snap, b) for snap, b in rows}


def _reserves(pair) -> tuple[float, float, float]:
    if pair is None or pair[1].resource_class != "reserves":
        return (0.0, 0.0, 0.0)
    return tuple(v or 0.0 for v in booked(pair[1]))


def lines_of(session: Session, review_id: int) -> list[ReconciliationLine]:
    return list(
        session.execute(
            select(ReconciliationLine)
            .where(ReconciliationLine.review_id == review_id)
            .order_by(
                ReconciliationLine.asset_name, ReconciliationLine.field_name, ReconciliationLine.category
            )
        ).scalars()
    )


def rebuild(session: Session, review: ReservesReview) -> list[ReconciliationLine]:
    """Bring a draft's lines up to date with its bookings (keeping the engineer's assignments)."""
    require_draft(review)
    prev = last_approved(session, review)
    now = bookings_of(session, review.id)
    before = bookings_of(session, prev.id) if prev is not None else {}
    produced = produced_between(session, prev.effective_date if prev else None, review.effective_date)
    existing = {(ln.field_id, ln.category): ln for ln in lines_of(session, review.id)}
    seen = set()
    for fid in sorted(set(now) | set(before)):
        snap = (now.get(fid) or before.get(fid))[0]
        presence = "both" if fid in now and fid in before else ("new" if fid in now else "left")
        opening, closing = _reserves(before.get(fid)), _reserves(now.get(fid))
        gas = produced.get(fid, (0.0, 0.0, None))[0] if prev is not None else 0.0
        for i, cat in enumerate(CATEGORIES):
            ln = existing.get((fid, cat))
            if ln is None:
                ln = ReconciliationLine(review_id=review.id, field_id=fid, category=cat, assigned=False)
                for k in ASSIGNABLE:
                    setattr(ln, k, 0.0)
                session.add(ln)
            ln.field_name, ln.asset_name, ln.presence = snap.field_name, snap.asset_name, presence
            ln.opening_bscf, ln.closing_bscf = opening[i], closing[i]
            # No earlier review: production before the first review is not part of any change.
            ln.production_bscf = gas if (opening[i] > 0 or closing[i] > 0) else 0.0
            if not ln.assigned:
                for k in NON_NEGATIVE:
                    setattr(ln, k, 0.0)
                ln.revisions_bscf = 0.0
                ln.revisions_bscf = ln.closing_bscf - expected_closing(ln)
            seen.add((fid, cat))
    for key, ln in existing.items():
        if key not in seen:
            session.delete(ln)
    session.flush()
    return lines_of(session, review.id)


def _line(session: Session, review: ReservesReview, field_id: int, category: str) -> ReconciliationLine:
    """The review's line of one field and category; ReservesError when there is none."""
    ln = session.execute(
        select(ReconciliationLine).where(
            ReconciliationLine.review_id == review.id,
            ReconciliationLine.field_id == field_id,
            ReconciliationLine.category == category,
        )
    ).scalar_one_or_none()
    if ln is None:
        raise ReservesError(f"no reconciliation line for field {field_id} in category {category!r}")
    return ln


def assign(
    session: Session, actor: audit.Actor, review: ReservesReview, field_id: int, category: str, values: dict
) -> ReconciliationLine:
    """Set how a field's change in one category splits (``values``: any of ASSIGNABLE; the rest
    keep their value). Nothing changes on error; :func:`reset` gives the line back to the default."""
    require_draft(review)
    ln = _line(session, review, field_id, category)
    problems = {}
    for k, v in values.items():
        if k not in ASSIGNABLE:
            problems[k] = f"not one of {', '.join(ASSIGNABLE)}"
        elif not (
            isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v) and abs(v) < 1e6
        ):
            problems[k] = "must be a finite number of Bscf"
        elif k in NON_NEGATIVE and v < 0:
            problems[k] = "cannot be negative (disposals are entered as a positive amount)"
    if problems:
        raise ReservesError(
            f"{ln.field_name} {category}: " + "; ".join(f"{k}: {m}" for k, m in problems.items())
        )
    before = audit.snapshot(ln, ASSIGNABLE)
    for k, v in values.items():
        setattr(ln, k, float(v))
    ln.assigned, ln.assigned_by_name = True, actor.name[:120]
    old, new = audit.changed(before, audit.snapshot(ln, ASSIGNABLE))
    gap = ln.closing_bscf - expected_closing(ln)
    audit.record(
        session,
        actor,
        "reconcile",
        "reserves_review",
        review.id,
        before=old,
        after=new,
        field_id=field_ref(session, field_id),
        summary=f"review {review.name!r} revision {review.revision}: "
        f"{ln.field_name} {category} change assigned "
        + ", ".join(f"{k} {old[k]:.3f} → {new[k]:.3f}" for k in new)
        + ("" if abs(gap) <= BALANCE_TOLERANCE_BSCF else f" (out of balance by {gap:+.4f} Bscf)"),
    )
    session.flush()
    return ln


def reset(session: Session, actor: audit.Actor, review: ReservesReview, field_id: int, category: str) -> None:
    """Give a line back to the default split (the remainder to revisions)."""
    require_draft(review)
    ln = _line(session, review, field_id, category)
    ln.assigned = False
    audit.record(
        session,
        actor,
        "reconcile",
        "reserves_review",
        review.id,
        field_id=field_ref(session, field_id),
        summary=f"review {review.name!r}: {ln.field_name} {category} back to the default split",
    )
    rebuild(session, review)


@dataclass(frozen=True)
class LineTotals:
    """Sums of the lines of one group (an asset, or the portfolio) in one category [Bscf]."""

    group: str
    category: str
    opening_bscf: float
    production_bscf: float
    revisions_bscf: float
    extensions_discoveries_bscf: float
    improved_recovery_bscf: float
    acquisitions_bscf: float
    disposals_bscf: float
    closing_bscf: float


def totals(lines) -> list[LineTotals]:
    """Per asset and for the portfolio, per category, by arithmetic summation."""
    cols = ("opening_bscf", "production_bscf", *ASSIGNABLE, "closing_bscf")
    acc: dict[tuple[str, str], dict[str, float]] = defaultdict(lambda: dict.fromkeys(cols, 0.0))
    for ln in lines:
        for group in ("asset " + ln.asset_name, "portfolio"):
            for c in cols:
                acc[(group, ln.category)][c] += getattr(ln, c)
    return [
        LineTotals(g, cat, **v)
        for (g, cat), v in sorted(acc.items(), key=lambda kv: (kv[0][0] == "portfolio", kv[0]))
    ]
