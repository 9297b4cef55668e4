"""Read models for pages and the API: plain dataclasses built from stored rows.

Pages never compute estimates: they read the newest stored estimate of each field.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import functools
from dataclasses import dataclass

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ...db.models import Asset, Estimate, Field, PressureSurvey, VolumetricEstimate, Well
from ...engine.volumetrics.aggregation import FieldVolume, PortfolioTotal, aggregate_portfolio
from .. import words


@dataclass(frozen=True)
class VolumetricRange:
    low_bscf: float
    best_bscf: float
    high_bscf: float
    estimate_date: dt.date
    author: str


@dataclass(frozen=True)
class EstimateSummary:
    id: int
    status: str
    method: str
    message: str
    giip_low_bscf: float | None
    giip_best_bscf: float | None
    giip_high_bscf: float | None
    eur_bscf: float | None
    recovery_factor_frac: float | None
    cumulative_gas_bscf: float
    remaining_bscf: float | None
    flags: list
    inputs_fingerprint: str
    engine_version: str
    computed_at: dt.datetime
    forecast_eur_low_bscf: float | None = None  # EUR at the commercial limit per case
    forecast_eur_best_bscf: float | None = None
    forecast_eur_high_bscf: float | None = None
    forecast_end_date: dt.date | None = None  # the best case's
    forecast_stop_reason: str | None = None
    # The headline's basis (the giip_*/eur/recovery/remaining above come from it) and the
    # straight p/z line beside it (issue 12); None on estimates stored before.
    basis_model: str | None = None
    basis_title: str | None = None
    basis_source: str | None = None
    line_giip_low_bscf: float | None = None
    line_giip_best_bscf: float | None = None
    line_giip_high_bscf: float | None = None

    @property
    def basis_words(self) -> str:
        """The basis of the headline in words ("" without an estimate that has one)."""
        if self.status != "ok":
            return ""
        title = self.basis_title or words.model_title(self.basis_model or "single_tank")
        return f"{title} (engineer's choice)" if self.basis_source == "engineer" else title

    @property
    def basis_short(self) -> str:
        """The basis's short name for the portfolio cell, starred when the engineer chose it."""
        if self.status != "ok":
            return ""
        short = words.model_short(self.basis_model or "single_tank")
        return f"{short} *" if self.basis_source == "engineer" else short


@dataclass(frozen=True)
class PortfolioRow:
    field_id: int
    name: str
    asset: str
    basin: str
    estimate: EstimateSummary | None
    volumetric: VolumetricRange | None
    last_survey_date: dt.date | None

    @property
    def on_volumetric(self) -> bool:
        """The headline rests on the volumetric estimate (too little depletion for material
        balance): there is no dynamic estimate to hold against the volumetric one."""
        return self.estimate is not None and self.estimate.basis_model == "volumetric"

    @property
    def dynamic_to_volumetric(self) -> float | None:
        """Ratio of the dynamic best GIIP (the headline's basis, not the line) to the volumetric
        best estimate."""
        if self.estimate is None or self.estimate.giip_best_bscf is None or self.volumetric is None:
            return None
        if self.on_volumetric:
            return None
        return self.estimate.giip_best_bscf / self.volumetric.best_bscf

    @property
    def depletion_frac(self) -> float | None:
        """Produced / dynamic best GIIP: the fraction by which the fitted (corrected) p/z
        line has fallen at today's cumulative gas, since (p/z)* = a (1 - Gp/G)."""
        e = self.estimate
        if e is None or e.status != "ok" or not e.giip_best_bscf or e.giip_best_bscf <= 0:
            return None
        return e.cumulative_gas_bscf / e.giip_best_bscf

    @property
    def flags(self) -> list:
        return list(self.estimate.flags) if self.estimate is not None else []

    @property
    def flag_codes(self) -> list[str]:
        return [f.get("code", "") for f in self.flags]

    @property
    def volumetric_position(self) -> str | None:
        """Where the dynamic best estimate (the basis) lies against the volumetric low-high range."""
        if self.estimate is None or self.estimate.giip_best_bscf is None or self.volumetric is None:
            return None
        if self.on_volumetric:
            return None
        g = self.estimate.giip_best_bscf
        if g < self.volumetric.low_bscf:
            return "below"
        return "above" if g > self.volumetric.high_bscf else "within"


@dataclass(frozen=True)
class FieldDetail:
    summary: PortfolioRow
    datum_depth_ft: float
    reservoir_temperature_degF: float
    initial_pressure_psia: float
    abandonment_pressure_psia: float
    description: str
    wells: list[dict]
    detail: dict  # the engine result as stored


def _summary(e: Estimate | None) -> EstimateSummary | None:
    if e is None:
        return None
    values = {f.name: getattr(e, f.name) for f in dataclasses.fields(EstimateSummary)}
    return EstimateSummary(**(values | {"flags": list(e.flags or [])}))


def _volumetric(v: VolumetricEstimate | None) -> VolumetricRange | None:
    if v is None:
        return None
    return VolumetricRange(v.giip_low_bscf, v.giip_best_bscf, v.giip_high_bscf, v.estimate_date, v.author)


def _newest_ids(field_ids):
    return (
        select(Estimate.field_id, func.max(Estimate.id).label("id"))
        .where(Estimate.field_id.in_(list(field_ids)))
        .group_by(Estimate.field_id)
        .subquery()
    )


def latest_estimates(session: Session, field_ids) -> dict[int, Estimate]:
    """Newest estimate per field, in one query."""
    newest = _newest_ids(field_ids)
    rows = session.execute(select(Estimate).join(newest, Estimate.id == newest.c.id)).scalars()
    return {e.field_id: e for e in rows}


_SUMMARY_COLUMNS = [getattr(Estimate, f.name) for f in dataclasses.fields(EstimateSummary)]


def _latest_summaries(session: Session, field_ids) -> dict[int, EstimateSummary]:
    """Newest estimate per field as summaries, in one query of plain columns: no ORM
    objects and not the large ``detail`` JSON, which the portfolio table does not show."""
    newest = _newest_ids(field_ids)
    stmt = select(Estimate.field_id, *_SUMMARY_COLUMNS).join(newest, Estimate.id == newest.c.id)
    out = {}
    for fid, *values in session.execute(stmt):
        e = EstimateSummary(*values)
        out[fid] = e if isinstance(e.flags, list) else dataclasses.replace(e, flags=list(e.flags or []))
    return out


def _latest_volumetric_ranges(session: Session, field_ids) -> dict[int, VolumetricRange]:
    """Latest volumetric range per field from plain columns (the last by date, then id)."""
    v = VolumetricEstimate
    stmt = (
        select(v.field_id, v.giip_low_bscf, v.giip_best_bscf, v.giip_high_bscf, v.estimate_date, v.author)
        .where(v.field_id.in_(list(field_ids)))
        .order_by(v.estimate_date, v.id)
    )
    return {fid: VolumetricRange(*values) for fid, *values in session.execute(stmt)}


def _latest_volumetrics(session: Session, field_ids) -> dict[int, VolumetricEstimate]:
    out: dict[int, VolumetricEstimate] = {}
    for v in session.execute(
        select(VolumetricEstimate)
        .where(VolumetricEstimate.field_id.in_(list(field_ids)))
        .order_by(VolumetricEstimate.estimate_date, VolumetricEstimate.id)
    ).scalars():
        out[v.field_id] = v
    return out


def _last_surveys(session: Session, field_ids) -> dict[int, dt.date]:
    rows = session.execute(
        select(Well.field_id, func.max(PressureSurvey.survey_date))
        .join(PressureSurvey, PressureSurvey.well_id == Well.id)
        .where(Well.field_id.in_(list(field_ids)))
        .group_by(Well.field_id)
    ).all()
    return {fid: d for fid, d in rows}


def portfolio_rows(session: Session, asset_ids: frozenset[int] | None = None) -> list[PortfolioRow]:
    """One row per field with its current estimate and latest volumetric range
    (only fields of ``asset_ids`` when given: a user limited to some assets)."""
    stmt = select(Field.id, Field.name, Asset.name, Asset.basin).join(Asset).order_by(Field.name)
    if asset_ids is not None:
        stmt = stmt.where(Field.asset_id.in_(sorted(asset_ids)))
    fields = session.execute(stmt).all()
    ids = [f[0] for f in fields]
    est = _latest_summaries(session, ids)
    vol = _latest_volumetric_ranges(session, ids)
    last = _last_surveys(session, ids)
    return [
        PortfolioRow(fid, name, asset, basin, est.get(fid), vol.get(fid), last.get(fid))
        for fid, name, asset, basin in fields
    ]


def field_detail(session: Session, field_id: int) -> FieldDetail | None:
    """Everything the field page shows, or None for an unknown field."""
    f = session.get(Field, field_id)
    if f is None:
        return None
    est = latest_estimates(session, [f.id]).get(f.id)
    vol = _latest_volumetrics(session, [f.id]).get(f.id)
    last = _last_surveys(session, [f.id]).get(f.id)
    row = PortfolioRow(f.id, f.name, f.asset.name, f.asset.basin, _summary(est), _volumetric(vol), last)
    wells = [
        {
            "id": w.id,
            "name": w.name,
            "compartment": w.compartment,
            "gauge_reference_depth_ft": w.gauge_reference_depth_ft,
        }
        for w in f.wells
    ]
    return FieldDetail(
        row,
        f.datum_depth_ft,
        f.reservoir_temperature_degF,
        f.initial_pressure_psia,
        f.abandonment_pressure_psia,
        f.description,
        wells,
        dict(est.detail) if est else {},
    )


#: Trials for the portfolio totals on the page: percentiles of the total to about 0.5 %.
TOTAL_TRIALS = 5000
#: Fields x trials that keep that precision for larger portfolios, and the fewest trials.
TOTAL_FIELD_TRIALS = 1_000_000
MIN_TOTAL_TRIALS = 1000


def total_trials(n_fields: int) -> int:
    """Trials for a total of ``n_fields`` independent fields.

    A percentile estimated from n trials has a standard error of about
    √(p(1 − p)/n) / f(x_p) (the usual large-sample result for a sample quantile); for the
    total of k fields of similar size and spread its relative error then scales as
    1/√(k n), because the total's relative spread shrinks as 1/√k. So k × n = 10⁶ keeps
    the precision of 5,000 trials on 200 fields (about 0.5 %, in fact far better) for any
    k, at a bounded cost: 2,000 fields take 1,000 trials, not 10 million draws (issue 17).
    """
    return max(MIN_TOTAL_TRIALS, min(TOTAL_TRIALS, TOTAL_FIELD_TRIALS // max(n_fields, 1)))


@dataclass(frozen=True)
class PortfolioTotals:
    """Totals of the fields' volumetric and dynamic GIIP ranges (None when no field has one)."""

    volumetric: PortfolioTotal | None
    dynamic: PortfolioTotal | None


def portfolio_totals(rows: list[PortfolioRow]) -> PortfolioTotals:
    """Arithmetic sums of P90/P50/P10 and the probabilistic total of independent fields.

    Volumetric: each field's latest low/best/high. Dynamic: the stored estimate's
    low/best/high (the P90/P10 of its bootstrap, or its interval when there is none).
    """
    rows = sorted(rows, key=lambda r: (r.name, r.field_id))  # the same set, the same totals, in any order
    vol = tuple(
        (r.name, v.low_bscf, v.best_bscf, v.high_bscf) for r in rows if (v := r.volumetric) is not None
    )
    dyn = tuple(
        (r.name, e.giip_low_bscf, e.giip_best_bscf, e.giip_high_bscf)
        for r in rows
        if (e := r.estimate) is not None
        and e.status == "ok"
        and None not in (e.giip_low_bscf, e.giip_best_bscf, e.giip_high_bscf)
        and 0 < e.giip_low_bscf <= e.giip_best_bscf <= e.giip_high_bscf
    )
    return PortfolioTotals(_total(vol) if vol else None, _total(dyn) if dyn else None)


@functools.lru_cache(maxsize=64)
def _total(volumes: tuple[tuple[str, float, float, float], ...]) -> PortfolioTotal:
    """The totals of these (name, low, best, high) volumes. The result depends on nothing
    else (the dependence seed is fixed), so it is kept for the next page view: 500 fields
    take about 60 ms per total, and most views repeat the last set."""
    fields = [FieldVolume(n, low_bscf=lo, best_bscf=b, high_bscf=hi) for n, lo, b, hi in volumes]
    return aggregate_portfolio(fields, trials=total_trials(len(fields)))
