"""Read models for the field page's time charts: how the estimate moved with each recompute,
the field's monthly production and its surveys (stored units: Bscf, Mscf, stb, psia)."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from sqlalchemy import func, or_, select
from sqlalchemy.orm import Session

from ...db.models import Estimate, Job, PressureSurvey, ProductionMonth, Well
from ..jobs.queue import FIELD_JOB, PORTFOLIO_JOB


@dataclass(frozen=True)
class HistoryRow:
    """One stored estimate of the field (estimates are append-only)."""

    estimate_id: int
    computed_at: dt.datetime
    status: str
    method: str
    giip_low_bscf: float | None
    giip_best_bscf: float | None
    giip_high_bscf: float | None
    eur_bscf: float | None
    engine_version: str
    trigger: str  # the reason of the recompute job that wrote it, "" when not known


def estimate_history(session: Session, field_id: int, limit: int = 500) -> list[HistoryRow]:
    """The field's stored estimates, oldest first, each with what triggered it where known:
    the reason of the field's (or the portfolio's) recompute job that was running when the
    estimate was written."""
    # only the summary columns: each row's stored detail is large
    cols = (
        Estimate.id,
        Estimate.computed_at,
        Estimate.status,
        Estimate.method,
        Estimate.giip_low_bscf,
        Estimate.giip_best_bscf,
        Estimate.giip_high_bscf,
        Estimate.eur_bscf,
        Estimate.engine_version,
    )
    ests = session.execute(
        select(*cols).where(Estimate.field_id == field_id).order_by(Estimate.id.desc()).limit(limit)
    ).all()[::-1]
    runs = session.execute(
        select(Job.created_at, Job.finished_at, Job.reason)
        .where(
            or_(
                (Job.kind == FIELD_JOB) & (Job.field_id == field_id),
                Job.kind == PORTFOLIO_JOB,
            ),
            Job.status == "done",
        )
        .order_by(Job.created_at)
    ).all()
    out = []
    for e in ests:
        trigger = ""
        for created, finished, reason in runs:
            if created <= e.computed_at and (finished is None or e.computed_at <= finished):
                trigger = reason
        out.append(HistoryRow(*e, trigger))
    return out


@dataclass(frozen=True)
class ProductionSeries:
    """Field totals per calendar month (``month`` is the first day)."""

    month: list[dt.date]
    gas_mscf: list[float]
    condensate_stb: list[float]
    water_stb: list[float]


def production_series(session: Session, field_id: int) -> ProductionSeries:
    rows = session.execute(
        select(
            ProductionMonth.month,
            func.sum(ProductionMonth.gas_mscf),
            func.sum(ProductionMonth.condensate_stb),
            func.sum(ProductionMonth.water_stb),
        )
        .join(Well)
        .where(Well.field_id == field_id)
        .group_by(ProductionMonth.month)
        .order_by(ProductionMonth.month)
    ).all()
    return ProductionSeries(
        [r[0] for r in rows],
        [float(r[1]) for r in rows],
        [float(r[2]) for r in rows],
        [float(r[3]) for r in rows],
    )


@dataclass(frozen=True)
class SurveyRow:
    id: int
    well: str
    survey_date: dt.date
    pressure_psia: float  # at the gauge
    gauge_depth_ft: float
    quality: str
    excluded: bool
    exclusion_reason: str | None


def field_surveys(session: Session, field_id: int) -> list[SurveyRow]:
    """The field's stored surveys by date and well (what the engineer may set aside)."""
    rows = session.execute(
        select(PressureSurvey, Well.name)
        .join(Well)
        .where(Well.field_id == field_id)
        .order_by(PressureSurvey.survey_date, Well.name)
    ).all()
    return [
        SurveyRow(
            s.id,
            name,
            s.survey_date,
            s.pressure_psia,
            s.gauge_depth_ft,
            s.quality,
            s.excluded,
            s.exclusion_reason,
        )
        for s, name in rows
    ]
