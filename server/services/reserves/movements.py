"""The year's movements of a review (issue 15): the waterfall from the last approved review's
booking to this one, fields ranked by their change, the reserves replacement ratio, and one
field's 2P over the reviews. Pure aggregation over the reconciliation lines and bookings [Bscf].

- Waterfall, per group (an asset, or the portfolio) and category: opening, then production
  (down), revisions, extensions and discoveries, improved recovery, acquisitions, disposals
  (down), closing: the reconciliation identity of :mod:`.reconcile` summed over the group.
- A field's change is its non-production change: revisions + extensions and discoveries +
  improved recovery + acquisitions - disposals = closing - opening + production. Fields are
  ranked by its size; production is shown beside it, never in it.
- Reserves replacement ratio (common practice; no single published definition):
  organic RRR = (revisions + extensions and discoveries + improved recovery) / production, and
  RRR with acquisitions and disposals = (organic additions + acquisitions - disposals) /
  production, both over the period between the two effective dates. Undefined (None) when the
  period's production is zero.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Booking, ReservesReview, ReviewField
from . import reconcile
from .booking import reserves_2p
from .rules import BALANCE_TOLERANCE_BSCF

PORTFOLIO = "portfolio"
HISTORY_REVIEWS = 10  # approved reviews before this one on the 2P history chart
#: (line column, words, sign in the roll-forward)
STEPS = (
    ("production_bscf", "production", -1),
    ("revisions_bscf", "revisions", +1),
    ("extensions_discoveries_bscf", "extensions and discoveries", +1),
    ("improved_recovery_bscf", "improved recovery", +1),
    ("acquisitions_bscf", "acquisitions", +1),
    ("disposals_bscf", "disposals", -1),
)
ORGANIC = ("revisions_bscf", "extensions_discoveries_bscf", "improved_recovery_bscf")
WORDS = {key: words for key, words, _ in STEPS}
SIGN = {key: sign for key, _, sign in STEPS}


@dataclass(frozen=True)
class Step:
    key: str
    label: str
    delta_bscf: float  # signed: production and disposals are negative


@dataclass(frozen=True)
class Waterfall:
    group: str  # "portfolio" or "asset NAME"
    category: str
    opening_bscf: float
    steps: tuple[Step, ...]
    closing_bscf: float
    imbalance_bscf: float  # closing - (opening + the steps); zero to rounding when the lines balance

    @property
    def balances(self) -> bool:
        return abs(self.imbalance_bscf) <= BALANCE_TOLERANCE_BSCF


def waterfalls(lines) -> list[Waterfall]:
    """One waterfall per asset and for the portfolio, per category (assets first)."""
    out = []
    for t in reconcile.totals(lines):
        steps = tuple(Step(k, w, s * getattr(t, k) + 0.0) for k, w, s in STEPS)  # + 0.0: no -0.0
        end = t.opening_bscf + sum(st.delta_bscf for st in steps)
        out.append(
            Waterfall(t.group, t.category, t.opening_bscf, steps, t.closing_bscf, t.closing_bscf - end)
        )
    return out


def change_bscf(line) -> float:
    """A line's non-production change [Bscf]: closing - opening + production."""
    return sum(SIGN[k] * getattr(line, k) for k in reconcile.ASSIGNABLE)


@dataclass(frozen=True)
class FieldChange:
    field_id: int
    field_name: str
    asset_name: str
    category: str
    presence: str  # both, new, left
    opening_bscf: float
    production_bscf: float
    change_bscf: float  # non-production change (see the module docstring)
    closing_bscf: float
    reason_key: str  # the largest non-production line ("" when nothing changed)
    reason: str  # the lines in words, largest first
    assigned: bool  # the engineer split the change; else the remainder went to revisions
    assigned_by_name: str
    justification: str


def _reason(line) -> tuple[str, str]:
    parts = sorted(
        ((k, SIGN[k] * getattr(line, k)) for k in reconcile.ASSIGNABLE),
        key=lambda kv: -abs(kv[1]),
    )
    parts = [(k, v) for k, v in parts if abs(v) > BALANCE_TOLERANCE_BSCF]
    if not parts:
        return "", "no change"
    words = ", ".join(f"{WORDS[k]} {v:+.3f}" for k, v in parts)
    if line.assigned:
        who = f" (assigned by {line.assigned_by_name})" if line.assigned_by_name else " (assigned)"
    else:
        who = " (not assigned yet: the remainder goes to revisions)"
    return parts[0][0], words + who


def ranked_changes(lines, justifications: dict[int, str] | None = None) -> list[FieldChange]:
    """Every field's line, largest non-production change first (by size), then by name."""
    justifications = justifications or {}
    out = []
    for ln in lines:
        key, reason = _reason(ln)
        out.append(
            FieldChange(
                ln.field_id,
                ln.field_name,
                ln.asset_name,
                ln.category,
                ln.presence,
                ln.opening_bscf,
                ln.production_bscf,
                change_bscf(ln),
                ln.closing_bscf,
                key,
                reason,
                bool(ln.assigned),
                ln.assigned_by_name or "",
                justifications.get(ln.field_id, ""),
            )
        )
    return sorted(out, key=lambda c: (c.category, -abs(c.change_bscf), c.field_name, c.field_id))


@dataclass(frozen=True)
class Replacement:
    group: str
    category: str
    production_bscf: float
    organic_additions_bscf: float  # revisions + extensions and discoveries + improved recovery
    net_acquisitions_bscf: float  # acquisitions - disposals
    organic_ratio: float | None  # None: no production in the period
    ratio_with_acquisitions: float | None


def replacement(lines) -> list[Replacement]:
    """The reserves replacement ratios of every asset and the portfolio, per category."""
    out = []
    for t in reconcile.totals(lines):
        organic = sum(getattr(t, k) for k in ORGANIC)
        net = t.acquisitions_bscf - t.disposals_bscf
        produced = t.production_bscf
        ok = produced > 0
        out.append(
            Replacement(
                t.group,
                t.category,
                produced,
                organic,
                net,
                organic / produced if ok else None,
                (organic + net) / produced if ok else None,
            )
        )
    return out


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
