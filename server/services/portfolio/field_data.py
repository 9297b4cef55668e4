"""Read models of a field's data pages (wells, surveys, production, volumetric estimates):
plain dataclasses in stored units, with server-side paging and search.

The fluid page's read model (z and Bg curves) is in ``services/portfolio/fluid_data.py``.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass
from typing import Literal

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ...db.models import Field, PressureSurvey, ProductionMonth, VolumetricEstimate, Well
from .rows import latest_estimates

SurveyStatus = Literal["all", "included", "excluded"]


@dataclass(frozen=True)
class FieldRef:
    """What every data page needs to name its field (crumbs, title)."""

    id: int
    name: str
    asset: str


@dataclass(frozen=True)
class Paging:
    """One page of a list: ``page`` counts from 1; indices are 1-based and inclusive."""

    page: int
    per_page: int
    total: int

    @property
    def n_pages(self) -> int:
        return max(1, math.ceil(self.total / self.per_page))

    @property
    def offset(self) -> int:
        return (self.page - 1) * self.per_page

    @property
    def first_index(self) -> int:
        return 0 if self.total == 0 else min(self.offset + 1, self.total)

    @property
    def last_index(self) -> int:
        return min(self.offset + self.per_page, self.total)

    @property
    def prev_page(self) -> int | None:
        return self.page - 1 if self.page > 1 else None

    @property
    def next_page(self) -> int | None:
        return self.page + 1 if self.page < self.n_pages else None

    @property
    def beyond_end(self) -> bool:
        return self.page > self.n_pages


@dataclass(frozen=True)
class ListFilter:
    """Search shared by the survey and production lists (dates inclusive)."""

    well: str | None = None  # case-insensitive substring of the well name; "in quotes": the whole name
    date_from: dt.date | None = None
    date_to: dt.date | None = None
    status: SurveyStatus = "all"  # surveys only
    quality: str | None = None  # surveys only


@dataclass(frozen=True)
class WellRow:
    id: int
    name: str
    compartment: str | None
    gauge_reference_depth_ft: float | None
    n_surveys: int
    first_survey_date: dt.date | None
    last_survey_date: dt.date | None
    cumulative_gas_mscf: float  # separator gas, as produced
    cumulative_condensate_stb: float = 0.0


@dataclass(frozen=True)
class SurveyRow:
    id: int
    well: str
    compartment: str | None
    survey_date: dt.date
    pressure_psia: float  # at the gauge, absolute
    gauge_depth_ft: float
    kind: str
    quality: str
    excluded: bool
    exclusion_reason: str | None
    datum_pressure_psia: float | None  # from the current estimate's stage 1, if it saw this survey
    pz_psia: float | None


@dataclass(frozen=True)
class ProductionRow:
    id: int
    well: str
    month: dt.date
    gas_mscf: float
    condensate_stb: float
    water_stb: float


@dataclass(frozen=True)
class ProductionTotals:
    """Sums over every row that matches the search (not only the page shown)."""

    gas_mscf: float
    condensate_stb: float
    water_stb: float


@dataclass(frozen=True)
class SurveyList:
    rows: list[SurveyRow]
    paging: Paging
    filter: ListFilter


@dataclass(frozen=True)
class ProductionList:
    rows: list[ProductionRow]
    paging: Paging
    filter: ListFilter
    totals: ProductionTotals


@dataclass(frozen=True)
class DynamicGiip:
    """The current (newest) stored estimate's GIIP, when it has one."""

    giip_low_bscf: float | None
    giip_best_bscf: float
    giip_high_bscf: float | None
    computed_at: dt.datetime


@dataclass(frozen=True)
class VolumetricRow:
    id: int
    estimate_date: dt.date
    author: str
    method: str
    giip_low_bscf: float
    giip_best_bscf: float
    giip_high_bscf: float
    inputs: dict | None  # Monte Carlo ranges as stored: {"porosity_frac": {"low":..,"best":..,"high":..}}
    dynamic_to_best: float | None  # current dynamic best GIIP / this best
    dynamic_position: Literal["below", "within", "above"] | None  # against this low-high range


@dataclass(frozen=True)
class VolumetricView:
    rows: list[VolumetricRow]  # newest first; the first is the one the flags compare with
    dynamic: DynamicGiip | None


def field_ref(session: Session, field_id: int) -> FieldRef | None:
    f = session.get(Field, field_id)
    return None if f is None else FieldRef(f.id, f.name, f.asset.name)


def field_names(session: Session, field_ids) -> dict[int, str]:
    """Names of the given fields by id (in one query)."""
    ids = sorted(field_ids)
    return dict(session.execute(select(Field.id, Field.name).where(Field.id.in_(ids))).all()) if ids else {}


def wells_statement(field_id: int):
    """The wells view's query. Each aggregate reads only the field's own wells (joined and
    filtered inside the subquery), so PostgreSQL looks rows up by the (well_id, ...) keys instead
    of aggregating the whole survey and production tables first (issue 18: 15-20 s with a
    million production rows)."""
    surveys = (
        select(
            PressureSurvey.well_id,
            func.count(PressureSurvey.id).label("n"),
            func.min(PressureSurvey.survey_date).label("first"),
            func.max(PressureSurvey.survey_date).label("last"),
        )
        .join(Well, Well.id == PressureSurvey.well_id)
        .where(Well.field_id == field_id)
        .group_by(PressureSurvey.well_id)
        .subquery()
    )
    gas = (
        select(
            ProductionMonth.well_id,
            func.sum(ProductionMonth.gas_mscf).label("gas"),
            func.sum(ProductionMonth.condensate_stb).label("condensate"),
        )
        .join(Well, Well.id == ProductionMonth.well_id)
        .where(Well.field_id == field_id)
        .group_by(ProductionMonth.well_id)
        .subquery()
    )
    return (
        select(Well, surveys.c.n, surveys.c.first, surveys.c.last, gas.c.gas, gas.c.condensate)
        .outerjoin(surveys, surveys.c.well_id == Well.id)
        .outerjoin(gas, gas.c.well_id == Well.id)
        .where(Well.field_id == field_id)
        .order_by(Well.name)
    )


def wells(session: Session, field_id: int) -> list[WellRow]:
    """The field's wells by name, each with its survey count and dates, and its cumulative
    separator gas and condensate."""
    rows = session.execute(wells_statement(field_id)).all()
    return [
        WellRow(
            w.id,
            w.name,
            w.compartment,
            w.gauge_reference_depth_ft,
            n or 0,
            first,
            last,
            float(g or 0),
            float(c or 0),
        )
        for w, n, first, last, g, c in rows
    ]


def _well_match(stmt, flt: ListFilter):
    """Part of a well name, or the whole name when the search is in double quotes ("W-1")."""
    if flt.well and len(flt.well) > 2 and flt.well[0] == flt.well[-1] == '"':
        stmt = stmt.where(func.lower(Well.name) == flt.well[1:-1].lower())
    elif flt.well:
        escaped = flt.well.lower().replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_")
        stmt = stmt.where(func.lower(Well.name).like(f"%{escaped}%", escape="\\"))
    return stmt


def _survey_where(stmt, field_id: int, flt: ListFilter):
    stmt = _well_match(stmt.where(Well.field_id == field_id), flt)
    if flt.date_from is not None:
        stmt = stmt.where(PressureSurvey.survey_date >= flt.date_from)
    if flt.date_to is not None:
        stmt = stmt.where(PressureSurvey.survey_date <= flt.date_to)
    if flt.status != "all":
        stmt = stmt.where(PressureSurvey.excluded.is_(flt.status == "excluded"))
    if flt.quality:
        stmt = stmt.where(PressureSurvey.quality == flt.quality)
    return stmt


def _stage1_points(session: Session, field_id: int) -> dict[int, tuple[float, float]]:
    """survey id -> (datum pressure, p/z) from the current estimate's prepared points."""
    est = latest_estimates(session, [field_id]).get(field_id)
    points = ((est.detail or {}).get("prepared") or {}).get("points") or [] if est else []
    return {
        p["survey_id"]: (p["p_datum_psia"], p["pz_psia"]) for p in points if p.get("survey_id") is not None
    }


def surveys(session: Session, field_id: int, flt: ListFilter, page: int, per_page: int) -> SurveyList:
    """Surveys matching ``flt``, newest first (then by well), one page of them."""
    total = session.execute(
        _survey_where(select(func.count(PressureSurvey.id)).join(Well), field_id, flt)
    ).scalar_one()
    paging = Paging(page, per_page, total)
    if paging.beyond_end:
        return SurveyList([], paging, flt)
    stage1 = _stage1_points(session, field_id)
    found = session.execute(
        _survey_where(select(PressureSurvey, Well).join(Well), field_id, flt)
        .order_by(PressureSurvey.survey_date.desc(), Well.name, PressureSurvey.id)
        .offset(paging.offset)
        .limit(per_page)
    ).all()
    rows = [
        SurveyRow(
            s.id,
            w.name,
            w.compartment,
            s.survey_date,
            s.pressure_psia,
            s.gauge_depth_ft,
            s.kind,
            s.quality,
            s.excluded,
            s.exclusion_reason,
            *stage1.get(s.id, (None, None)),
        )
        for s, w in found
    ]
    return SurveyList(rows, paging, flt)


def _production_where(stmt, field_id: int, flt: ListFilter):
    stmt = _well_match(stmt.where(Well.field_id == field_id), flt)
    if flt.date_from is not None:
        stmt = stmt.where(ProductionMonth.month >= flt.date_from)
    if flt.date_to is not None:
        stmt = stmt.where(ProductionMonth.month <= flt.date_to)
    return stmt


def production(session: Session, field_id: int, flt: ListFilter, page: int, per_page: int) -> ProductionList:
    """Monthly volumes matching ``flt`` (months whose first day is in the date range), newest first."""
    total, gas, cond, water = session.execute(
        _production_where(
            select(
                func.count(ProductionMonth.id),
                func.sum(ProductionMonth.gas_mscf),
                func.sum(ProductionMonth.condensate_stb),
                func.sum(ProductionMonth.water_stb),
            ).join(Well),
            field_id,
            flt,
        )
    ).one()
    paging = Paging(page, per_page, total)
    totals = ProductionTotals(float(gas or 0.0), float(cond or 0.0), float(water or 0.0))
    if paging.beyond_end:
        return ProductionList([], paging, flt, totals)
    found = session.execute(
        _production_where(select(ProductionMonth, Well.name).join(Well), field_id, flt)
        .order_by(ProductionMonth.month.desc(), Well.name, ProductionMonth.id)
        .offset(paging.offset)
        .limit(per_page)
    ).all()
    rows = [
        ProductionRow(p.id, name, p.month, p.gas_mscf, p.condensate_stb, p.water_stb) for p, name in found
    ]
    return ProductionList(rows, paging, flt, totals)


def _position(g: float, low: float, high: float) -> Literal["below", "within", "above"]:
    return "below" if g < low else "above" if g > high else "within"


def volumetrics(session: Session, field_id: int) -> VolumetricView:
    """Every volumetric estimate, newest first, each held against the current dynamic GIIP."""
    est = latest_estimates(session, [field_id]).get(field_id)
    dynamic = (
        DynamicGiip(est.giip_low_bscf, est.giip_best_bscf, est.giip_high_bscf, est.computed_at)
        if est is not None
        and est.status == "ok"
        and est.giip_best_bscf is not None
        # a headline resting on the volumetric estimate is no dynamic estimate to compare with
        and est.basis_model != "volumetric"
        else None
    )
    found = session.execute(
        select(VolumetricEstimate)
        .where(VolumetricEstimate.field_id == field_id)
        .order_by(VolumetricEstimate.estimate_date.desc(), VolumetricEstimate.id.desc())
    ).scalars()
    rows = []
    for v in found:
        g = dynamic.giip_best_bscf if dynamic else None
        rows.append(
            VolumetricRow(
                v.id,
                v.estimate_date,
                v.author,
                v.method,
                v.giip_low_bscf,
                v.giip_best_bscf,
                v.giip_high_bscf,
                dict(v.inputs) if v.inputs else None,
                None if g is None else g / v.giip_best_bscf,
                None if g is None else _position(g, v.giip_low_bscf, v.giip_high_bscf),
            )
        )
    return VolumetricView(rows, dynamic)
