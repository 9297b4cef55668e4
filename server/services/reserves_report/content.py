"""What the reserves report shows, as plain data built from ``views.review_detail``.

Every number comes from the review's read model (the frozen snapshots and bookings), in the
services' units: gas in Bscf (the stored separator-gas basis) and condensate in stb. The
only thing read outside the review is each field's p/z points, from the stored estimate the
snapshot froze (estimate rows are never changed once written): it is used only when its
input fingerprint is still the snapshot's, and the page says where the points come from.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Estimate, ReservesReview
from ..reserves.categories import CLASS_TITLES, STATUS_TITLES
from ..reserves.views import FieldBooking, ReviewDetail, review_detail
from ..timebase import date_from_days

RESERVES = ("1P", "2P", "3P")
CONTINGENT = ("1C", "2C", "3C")
#: The waterfall's steps: (title, sign, reconciliation columns added).
STEPS = (
    ("Production", -1, ("production_bscf",)),
    ("Revisions", 1, ("revisions_bscf",)),
    ("Extensions, discoveries", 1, ("extensions_discoveries_bscf",)),
    ("Improved recovery", 1, ("improved_recovery_bscf",)),
    ("Acquisitions − disposals", 1, ("acquisitions_bscf", "-disposals_bscf")),
)
CAUTIONS = (
    "This report supports, and does not replace, the judgement of qualified reservoir engineers. "
    "Bookings must follow the company's reserves rules and the rules of the regulators that apply, "
    "and must be made and approved by people entitled to do so.",
    "Categories follow SPE-PRMS (2018): 1P = proved, 2P = proved + probable, 3P = proved + probable "
    "+ possible (1C/2C/3C for contingent resources). The estimate's low/best/high cases map onto "
    "them; totals are arithmetic sums of the fields, not probabilistic aggregates.",
    "Gas volumes are the stored separator-gas basis in Bscf unless marked as sales gas. Sales gas is "
    "the booked separator gas times the share delivered for sale after fuel, flare and shrinkage "
    "(the team's factor, or the field's own, frozen with the review). The reconciliation is in "
    "separator gas. Condensate (stb) is the booked separator gas times the condensate-gas ratio "
    "produced to the effective date.",
    "Material-balance ranges hold the parts of the uncertainty that the basis names (data scatter, "
    "model spread, metering, gauge and z-factor errors), not every uncertainty.",
)


@dataclass(frozen=True)
class GroupSummary:
    """One group's booked volumes by category: separator gas and sales gas [Bscf], condensate [stb]."""

    group: str
    gas_bscf: dict[str, float]
    condensate_stb: dict[str, float]
    sales_gas_bscf: dict[str, float | None] = field(default_factory=dict)  # None: not stated


@dataclass(frozen=True)
class PzData:
    """What the field's p/z chart draws [Bscf, psia], and where it comes from."""

    source: str
    points: list[tuple[float, float, bool]] = field(default_factory=list)  # (Gp, p/z, used)
    line_intercept_psia: float | None = None
    line_giip_bscf: float | None = None
    surveys_used: int = 0
    surveys_set_aside: int = 0
    first_survey: dt.date | None = None
    last_survey: dt.date | None = None


@dataclass(frozen=True)
class FieldPage:
    booking: FieldBooking
    class_title: str
    status_title: str
    pz: PzData


@dataclass(frozen=True)
class Report:
    detail: ReviewDetail
    draft: bool
    generated_at: dt.datetime
    summary: list[GroupSummary]
    waterfalls: dict[str, list[tuple[str, float]]]  # category -> steps [Bscf], opening and closing too
    fields: list[FieldPage]
    cautions: tuple[str, ...] = CAUTIONS


def summaries(detail: ReviewDetail) -> list[GroupSummary]:
    """Per asset and portfolio, every category (zero where no field books it)."""
    groups: dict[str, GroupSummary] = {}
    for t in detail.totals:
        g = groups.setdefault(
            t.group,
            GroupSummary(
                t.group,
                dict.fromkeys(RESERVES + CONTINGENT, 0.0),
                dict.fromkeys(RESERVES + CONTINGENT, 0.0),
                dict.fromkeys(RESERVES + CONTINGENT, 0.0),
            ),
        )
        g.gas_bscf[t.category] = t.gas_bscf
        g.condensate_stb[t.category] = t.condensate_stb
        g.sales_gas_bscf[t.category] = t.sales_gas_bscf
    return list(groups.values())


def waterfall_steps(detail: ReviewDetail, category: str) -> list[tuple[str, float]]:
    """Opening, each change (signed, Bscf) and closing of the portfolio in ``category``."""
    row = next(
        (t for t in detail.reconciliation_totals if t.group == "portfolio" and t.category == category), None
    )
    if row is None:
        return []
    steps = [("Opening", row.opening_bscf)]
    for title, sign, cols in STEPS:
        value = sum(-getattr(row, c[1:]) if c.startswith("-") else getattr(row, c) for c in cols)
        steps.append((title, sign * value))
    steps.append(("Closing", row.closing_bscf))
    return steps


def _date(t_days) -> dt.date | None:
    return None if t_days is None else date_from_days(float(t_days))


def pz_data(session: Session, fb: FieldBooking) -> PzData:
    """The field's p/z points and straight line from the estimate the snapshot froze."""
    if fb.estimate_id is None:
        return PzData("No estimate was frozen for this field: no p/z chart.")
    row = session.execute(
        select(Estimate.detail, Estimate.inputs_fingerprint).where(Estimate.id == fb.estimate_id)
    ).one_or_none()
    if row is None or row.inputs_fingerprint != fb.inputs_fingerprint:
        return PzData(
            f"The snapshot holds no p/z points and the estimate it froze (#{fb.estimate_id}) is no "
            "longer stored unchanged: no p/z chart."
        )
    detail = row.detail or {}
    prepared = (detail.get("prepared") or {}).get("points") or []
    status = {s.get("index"): s.get("status") for s in (detail.get("pz") or {}).get("points") or []}
    points = []
    for p in prepared:
        if p.get("gp_bscf") is None or p.get("pz_psia") is None:
            continue
        used = status.get(p.get("index"), "used" if p.get("included", True) else "excluded") == "used"
        points.append((float(p["gp_bscf"]), float(p["pz_psia"]), used))
    times = [p.get("t_days") for p in prepared if p.get("t_days") is not None]
    line = detail.get("pz") or {}
    if not points and line.get("giip_bscf") is None:
        return PzData(
            f"The estimate this review froze (#{fb.estimate_id}) holds no p/z points: no p/z chart."
        )
    return PzData(
        f"p/z points and the straight p/z line of stored estimate #{fb.estimate_id}, the estimate this "
        "review froze (same input fingerprint); the snapshot itself keeps no points.",
        points,
        line.get("intercept_psia"),
        line.get("giip_bscf"),
        sum(1 for p in points if p[2]),
        sum(1 for p in points if not p[2]),
        _date(min(times)) if times else None,
        _date(max(times)) if times else None,
    )


def build_report(
    session: Session, review: ReservesReview, asset_ids=None, now: dt.datetime | None = None
) -> Report:
    detail = review_detail(session, review, asset_ids)
    pages = [
        FieldPage(
            fb,
            CLASS_TITLES.get(fb.resource_class, fb.resource_class),
            STATUS_TITLES.get(fb.status, fb.status.replace("_", " ")),
            pz_data(session, fb),
        )
        for fb in detail.fields
    ]
    return Report(
        detail=detail,
        draft=review.status != "approved",
        generated_at=now or dt.datetime.now(dt.UTC),
        summary=summaries(detail),
        waterfalls={c: waterfall_steps(detail, c) for c in RESERVES},
        fields=pages,
    )
