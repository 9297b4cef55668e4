"""Read models of reviews (plain dataclasses for pages and the JSON API) and the booked totals.

Totals add the categories field by field (arithmetic summation, the usual reporting rule):
the portfolio 1P is the sum of the fields' 1P, not the P90 of the portfolio.
"""

from __future__ import annotations

import datetime as dt
from collections import defaultdict
from dataclasses import dataclass

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ...db.models import ReservesReview, ReviewField
from . import reconcile
from .aggregate import ProbabilisticTotal, probabilistic_totals
from .booking import booked, booked_condensate_stb, booked_sales_gas_bscf, reasons_against_last, reserves_2p
from .categories import category_names
from .rules import reserves_settings
from .workflow import newer_estimates, submission_blockers


@dataclass(frozen=True)
class ReviewSummary:
    id: int
    name: str
    effective_date: dt.date
    status: str
    revision: int
    reopened_from_id: int | None
    reopen_reason: str
    created_by_name: str
    created_at: dt.datetime
    submitted_by_name: str
    submitted_at: dt.datetime | None
    approved_by_name: str
    approved_at: dt.datetime | None
    approval_comment: str
    field_count: int


def _summary(r: ReservesReview, n: int) -> ReviewSummary:
    return ReviewSummary(
        r.id,
        r.name,
        r.effective_date,
        r.status,
        r.revision,
        r.reopened_from_id,
        r.reopen_reason,
        r.created_by_name,
        r.created_at,
        r.submitted_by_name,
        r.submitted_at,
        r.approved_by_name,
        r.approved_at,
        r.approval_comment,
        n,
    )


def list_reviews(session: Session) -> list[ReviewSummary]:
    counts = dict(
        session.execute(select(ReviewField.review_id, func.count()).group_by(ReviewField.review_id)).all()
    )
    rows = session.execute(
        select(ReservesReview).order_by(ReservesReview.effective_date.desc(), ReservesReview.revision.desc())
    ).scalars()
    return [_summary(r, counts.get(r.id, 0)) for r in rows]


@dataclass(frozen=True)
class FieldBooking:
    field_id: int
    field_name: str
    asset_id: int
    asset_name: str
    estimate_id: int | None
    estimate_status: str
    estimate_computed_at: dt.datetime | None
    inputs_fingerprint: str
    engine_version: str
    basis_model: str
    basis_title: str
    basis_source: str
    volume_source: str  # "forecast": the forecast's cases to the commercial limit; "basis": basis EUR
    giip_low_bscf: float | None
    giip_best_bscf: float | None
    giip_high_bscf: float | None
    eur_low_bscf: float | None
    eur_best_bscf: float | None
    eur_high_bscf: float | None
    forecast: dict | None
    produced_gas_bscf: float
    produced_condensate_stb: float
    production_last_month: dt.date | None
    flags: list
    has_alert: bool
    resource_class: str
    status: str
    categories: tuple[str, str, str]
    computed_low_bscf: float | None
    computed_best_bscf: float | None
    computed_high_bscf: float | None
    override_low_bscf: float | None
    override_best_bscf: float | None
    override_high_bscf: float | None
    override_reason: str
    booked_low_bscf: float | None
    booked_best_bscf: float | None
    booked_high_bscf: float | None
    condensate_gas_ratio_stb_per_mmscf: float | None
    booked_condensate_low_stb: float | None
    booked_condensate_best_stb: float | None
    booked_condensate_high_stb: float | None
    justification: str
    justification_required: list[str]
    last_2p_bscf: float | None
    change_2p_bscf: float | None
    newer_estimate_id: int | None
    updated_by_name: str
    # The frozen share of separator gas sold (None: a review frozen before the factor existed),
    # "team" or "field", and the booked sales gas of each case [Bscf].
    sales_gas_frac: float | None = None
    sales_gas_frac_source: str = ""
    booked_sales_low_bscf: float | None = None
    booked_sales_best_bscf: float | None = None
    booked_sales_high_bscf: float | None = None


@dataclass(frozen=True)
class CategoryTotal:
    """Arithmetic sum over the fields of one group (an asset, or the portfolio) [Bscf, stb]."""

    group: str
    category: str  # 1P..3P, 1C..3C
    gas_bscf: float
    condensate_stb: float
    fields: int
    sales_gas_bscf: float | None = None  # None when some field of the group states no sales gas


@dataclass(frozen=True)
class ReviewDetail:
    review: ReviewSummary
    last_approved_id: int | None
    fields: list[FieldBooking]
    totals: list[CategoryTotal]
    probabilistic_totals: list[ProbabilisticTotal]  # shown apart, never booked (aggregate.py)
    reconciliation: list
    reconciliation_totals: list
    blockers: list[str]


def field_bookings(session: Session, review: ReservesReview, asset_ids=None) -> list[FieldBooking]:
    settings = reserves_settings(session)
    prev = reconcile.last_approved(session, review)
    last = reconcile.bookings_of(session, prev.id) if prev else {}
    newer = newer_estimates(session, review) if review.status == "draft" else {}
    out = []
    pairs = sorted(
        reconcile.bookings_of(session, review.id).values(), key=lambda p: (p[0].asset_name, p[0].field_name)
    )
    for snap, b in pairs:
        if asset_ids is not None and snap.asset_id not in asset_ids:
            continue
        last_2p = reserves_2p(last[snap.field_id][1]) if snap.field_id in last else None
        low, best, high = booked(b)
        c_low, c_best, c_high = booked_condensate_stb(b)
        sales = booked_sales_gas_bscf(b, snap.sales_gas_frac)
        out.append(
            FieldBooking(
                snap.field_id,
                snap.field_name,
                snap.asset_id,
                snap.asset_name,
                snap.estimate_id,
                snap.estimate_status,
                snap.estimate_computed_at,
                snap.inputs_fingerprint,
                snap.engine_version,
                snap.basis_model,
                snap.basis_title,
                snap.basis_source,
                snap.volume_source,
                snap.giip_low_bscf,
                snap.giip_best_bscf,
                snap.giip_high_bscf,
                snap.eur_low_bscf,
                snap.eur_best_bscf,
                snap.eur_high_bscf,
                snap.forecast,
                snap.produced_gas_bscf,
                snap.produced_condensate_stb,
                snap.production_last_month,
                list(snap.flags),
                snap.has_alert,
                b.resource_class,
                b.status,
                category_names(b.resource_class),
                b.computed_low_bscf,
                b.computed_best_bscf,
                b.computed_high_bscf,
                b.override_low_bscf,
                b.override_best_bscf,
                b.override_high_bscf,
                b.override_reason,
                low,
                best,
                high,
                b.condensate_gas_ratio_stb_per_mmscf,
                c_low,
                c_best,
                c_high,
                b.justification,
                reasons_against_last(snap, b, last.get(snap.field_id), settings),
                last_2p,
                None if last_2p is None else reserves_2p(b) - last_2p,
                newer.get(snap.field_id),
                b.updated_by_name,
                snap.sales_gas_frac,
                snap.sales_gas_frac_source,
                *sales,
            )
        )
    return out


def category_totals(rows: list[FieldBooking]) -> list[CategoryTotal]:
    """Per asset and portfolio, per category: sums of the booked volumes (arithmetic)."""
    acc: dict[tuple[str, str], list] = defaultdict(lambda: [0.0, 0.0, 0, 0.0])
    for r in rows:
        gas = (r.booked_low_bscf, r.booked_best_bscf, r.booked_high_bscf)
        cond = (r.booked_condensate_low_stb, r.booked_condensate_best_stb, r.booked_condensate_high_stb)
        sales = (r.booked_sales_low_bscf, r.booked_sales_best_bscf, r.booked_sales_high_bscf)
        for cat, g, c, sg in zip(r.categories, gas, cond, sales, strict=True):
            for group in ("asset " + r.asset_name, "portfolio"):
                a = acc[(group, cat)]
                a[0] += g or 0.0
                a[1] += c or 0.0
                a[2] += 1
                # a field with gas but no stated factor leaves the group's sales gas unknown
                a[3] = None if a[3] is None or (sg is None and g is not None) else a[3] + (sg or 0.0)
    keys = sorted(acc, key=lambda k: (k[0] == "portfolio", k[0], k[1]))
    return [CategoryTotal(g, c, *acc[(g, c)]) for g, c in keys]


def review_detail(session: Session, review: ReservesReview, asset_ids=None) -> ReviewDetail:
    rows = field_bookings(session, review, asset_ids)
    lines = [
        ln
        for ln in reconcile.lines_of(session, review.id)
        if asset_ids is None or ln.field_id in {r.field_id for r in rows}
    ]
    prev = reconcile.last_approved(session, review)
    n = len(rows)
    return ReviewDetail(
        review=_summary(review, n),
        last_approved_id=prev.id if prev else None,
        fields=rows,
        totals=category_totals(rows),
        probabilistic_totals=probabilistic_totals(rows),
        reconciliation=[line_dict(ln) for ln in lines],
        reconciliation_totals=reconcile.totals(lines),
        blockers=submission_blockers(session, review) if review.status == "draft" else [],
    )


LINE_COLUMNS = (
    "field_id",
    "field_name",
    "asset_name",
    "category",
    "presence",
    "opening_bscf",
    "production_bscf",
    *reconcile.ASSIGNABLE,
    "closing_bscf",
    "assigned",
    "assigned_by_name",
)


def line_dict(ln) -> dict:
    d = {c: getattr(ln, c) for c in LINE_COLUMNS}
    d["imbalance_bscf"] = ln.closing_bscf - reconcile.expected_closing(ln)
    return d
