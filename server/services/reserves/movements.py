"""The year's movements of a review (issue 15): the waterfall from the last approved review's
booking to this one, fields ranked by their change, the reserves replacement ratio (all three
summed from the reconciliation lines in :mod:`.rollforward`), and one field's 2P over the
reviews [Bscf].
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Booking, ReservesReview, ReviewField
from . import reconcile
from .booking import reserves_2p
from .rollforward import FieldChange, Replacement, Waterfall, ranked_changes, replacement, waterfalls

__all__ = [
    "HISTORY_REVIEWS",
    "PORTFOLIO",
    "FieldChoice",
    "HistoryPoint",
    "Movements",
    "default_field",
    "field_choices",
    "field_history",
    "history_reviews",
    "movements",
    "ranked_changes",
    "replacement",
    "waterfalls",
]

PORTFOLIO = "portfolio"
HISTORY_REVIEWS = 10  # approved reviews before this one on the 2P history chart


@dataclass(frozen=True)
class HistoryPoint:
    review_id: int
    review_name: str
    revision: int
    effective_date: dt.date
    status: str
    this_review: bool
    in_review: bool  # the field was booked in that review
    resource_class: str
    reserves_2p_bscf: float | None  # None when the field was not in that review


def history_reviews(session: Session, review: ReservesReview, limit: int = HISTORY_REVIEWS) -> list:
    """The newest approved revision of each earlier effective date (at most ``limit``, oldest
    first), then ``review`` itself whatever its status."""
    rows = session.execute(
        select(ReservesReview)
        .where(ReservesReview.status == "approved", ReservesReview.effective_date < review.effective_date)
        .order_by(ReservesReview.effective_date.desc(), ReservesReview.revision.desc(), ReservesReview.id)
    ).scalars()
    picked: dict[dt.date, ReservesReview] = {}
    for r in rows:
        if r.effective_date not in picked and len(picked) < limit:
            picked.setdefault(r.effective_date, r)
    return sorted(picked.values(), key=lambda r: r.effective_date) + [review]


def _booked_fields(session: Session, review_ids) -> list[tuple[ReviewField, Booking]]:
    return list(
        session.execute(
            select(ReviewField, Booking)
            .join(Booking, Booking.review_field_id == ReviewField.id)
            .where(ReviewField.review_id.in_(list(review_ids)))
        ).all()
    )


def field_history(session: Session, reviews: list, field_id: int) -> list[HistoryPoint]:
    """The field's booked 2P reserves in each of ``reviews`` (the last one is this review)."""
    got = {
        snap.review_id: (snap, b)
        for snap, b in _booked_fields(session, [r.id for r in reviews])
        if snap.field_id == field_id
    }
    out = []
    for i, r in enumerate(reviews):
        snap, b = got.get(r.id, (None, None))
        out.append(
            HistoryPoint(
                r.id,
                r.name,
                r.revision,
                r.effective_date,
                r.status,
                i == len(reviews) - 1,
                b is not None,
                b.resource_class if b is not None else "",
                reserves_2p(b) if b is not None else None,
            )
        )
    return out


@dataclass(frozen=True)
class FieldChoice:
    field_id: int
    field_name: str
    asset_name: str


def field_choices(session: Session, reviews: list, asset_ids=None) -> list[FieldChoice]:
    """Every field booked in any of ``reviews`` that the user may see (its newest name)."""
    newest: dict[int, tuple[dt.date, ReviewField]] = {}
    dates = {r.id: (r.effective_date, r.revision) for r in reviews}
    for snap, _ in _booked_fields(session, dates):
        if asset_ids is not None and snap.asset_id not in asset_ids:
            continue
        when = dates[snap.review_id]
        if snap.field_id not in newest or when > newest[snap.field_id][0]:
            newest[snap.field_id] = (when, snap)
    return sorted(
        (FieldChoice(s.field_id, s.field_name, s.asset_name) for _, s in newest.values()),
        key=lambda c: (c.field_name, c.field_id),
    )


@dataclass(frozen=True)
class Movements:
    review_id: int
    review_name: str
    revision: int
    status: str
    effective_date: dt.date
    previous_id: int | None  # the last approved review (None: nothing to compare with)
    previous_name: str
    previous_effective_date: dt.date | None
    groups: list[str]  # "portfolio" then "asset NAME" in name order
    waterfalls: list[Waterfall]
    ranking: list[FieldChange]
    replacement: list[Replacement]
    fields: list[FieldChoice]  # for the 2P history


def movements(session: Session, review: ReservesReview, asset_ids=None) -> Movements:
    """Everything the dashboard shows but the history of one field. A user limited to some assets
    sees only their fields, and the "portfolio" is then the sum of those."""
    prev = reconcile.last_approved(session, review)
    pairs = reconcile.bookings_of(session, review.id)
    before = reconcile.bookings_of(session, prev.id) if prev is not None else {}
    visible = {
        fid for fid, (snap, _) in (before | pairs).items() if asset_ids is None or snap.asset_id in asset_ids
    }
    lines = [ln for ln in reconcile.lines_of(session, review.id) if ln.field_id in visible]
    if prev is None:
        lines = []  # no earlier approved review: every line would be "opening zero", not a movement
    justifications = {fid: b.justification for fid, (_, b) in pairs.items()}
    falls = waterfalls(lines)
    return Movements(
        review.id,
        review.name,
        review.revision,
        review.status,
        review.effective_date,
        prev.id if prev else None,
        prev.name if prev else "",
        prev.effective_date if prev else None,
        [PORTFOLIO] + sorted({w.group for w in falls} - {PORTFOLIO}),
        falls,
        ranked_changes(lines, justifications),
        replacement(lines),
        field_choices(session, history_reviews(session, review), asset_ids),
    )


def default_field(m: Movements, category: str = "2P") -> FieldChoice | None:
    """The field the history shows when none is asked for: the largest change in ``category``,
    else the first field."""
    by_id = {c.field_id: c for c in m.fields}
    for ch in m.ranking:
        if ch.category == category and ch.field_id in by_id:
            return by_id[ch.field_id]
    return m.fields[0] if m.fields else None
