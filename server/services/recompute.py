"""Recompute a field's estimate from its stored data, and store it with a fingerprint."""

from __future__ import annotations

import numpy as np
from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ..db.models import Estimate, Field, PressureSurvey, ProductionMonth, Well
from ..engine import ENGINE_VERSION
from ..engine.analysis import FieldAnalysis, FieldInputs, analyse_field
from ..engine.errors import EngineError
from ..engine.pvt import GasFluid
from .serialize import fingerprint, to_jsonable
from .timebase import days_from_date, month_end_exclusive


class FieldNotReadyError(Exception):
    """The field lacks what any analysis needs (e.g. a fluid description)."""


def load_field_inputs(session: Session, field: Field) -> FieldInputs:
    """Gather a field's surveys, production and choices into engine inputs."""
    if field.fluid is None:
        raise FieldNotReadyError(f"field {field.name!r} has no fluid description")
    surveys = (
        session.execute(
            select(PressureSurvey)
            .join(Well)
            .where(Well.field_id == field.id)
            .order_by(PressureSurvey.survey_date, Well.name)
        )
        .scalars()
        .all()
    )
    monthly = session.execute(
        select(ProductionMonth.month, func.sum(ProductionMonth.gas_mscf))
        .join(Well)
        .where(Well.field_id == field.id)
        .group_by(ProductionMonth.month)
        .order_by(ProductionMonth.month)
    ).all()
    fl = field.fluid
    settings = field.settings
    return FieldInputs(
        fluid=GasFluid(fl.gas_gravity, fl.y_co2_frac, fl.y_h2s_frac, fl.y_n2_frac),
        reservoir_temperature_degF=field.reservoir_temperature_degF,
        initial_pressure_psia=field.initial_pressure_psia,
        abandonment_pressure_psia=field.abandonment_pressure_psia,
        survey_t_days=np.array([days_from_date(s.survey_date) for s in surveys]),
        survey_p_psia=np.array([s.pressure_psia for s in surveys]),
        survey_included=np.array([not s.excluded for s in surveys], dtype=bool),
        production_end_t_days=np.array([days_from_date(month_end_exclusive(m)) for m, _ in monthly]),
        production_gas_mscf=np.array([float(v) for _, v in monthly]),
        survey_labels=tuple(s.well.name for s in surveys),
        z_method=settings.z_method if settings else "dak",
    )


def current_estimate(session: Session, field_id: int) -> Estimate | None:
    """The newest stored estimate of a field."""
    return session.execute(
        select(Estimate).where(Estimate.field_id == field_id).order_by(Estimate.id.desc()).limit(1)
    ).scalar_one_or_none()


def recompute_field(session: Session, field: Field) -> tuple[Estimate, bool]:
    """Run the engine for ``field`` and store the result unless it is unchanged.

    Returns the current estimate and whether a new row was written. The inputs'
    fingerprint (which includes the engine version) makes a repeated job harmless.
    """
    try:
        inputs = load_field_inputs(session, field)
    except FieldNotReadyError as exc:
        return _store_failure(session, field, "refused", str(exc), fingerprint(str(exc)))
    fp = fingerprint({"inputs": inputs, "engine": ENGINE_VERSION})
    latest = current_estimate(session, field.id)
    if latest is not None and latest.inputs_fingerprint == fp:
        return latest, False
    try:
        result = analyse_field(inputs)
    except EngineError as exc:
        return _store_failure(session, field, "error", str(exc), fp)
    est = _estimate_from_result(field.id, result, fp)
    session.add(est)
    session.flush()
    return est, True


def _estimate_from_result(field_id: int, result: FieldAnalysis, fp: str) -> Estimate:
    return Estimate(
        field_id=field_id,
        method=result.method,
        status=result.status,
        message=result.message,
        giip_low_bscf=None,
        giip_best_bscf=result.giip_bscf,
        giip_high_bscf=None,
        eur_bscf=result.eur_bscf,
        recovery_factor_frac=result.recovery_factor_frac,
        cumulative_gas_bscf=result.cumulative_gas_bscf,
        remaining_bscf=result.remaining_bscf,
        flags=[],
        detail=to_jsonable(result),
        inputs_fingerprint=fp,
        engine_version=result.engine_version,
    )


def _store_failure(session, field, status, message, fp) -> tuple[Estimate, bool]:
    latest = current_estimate(session, field.id)
    if latest is not None and latest.inputs_fingerprint == fp:
        return latest, False
    est = Estimate(
        field_id=field.id,
        method="none",
        status=status,
        message=message,
        detail={},
        inputs_fingerprint=fp,
        engine_version=ENGINE_VERSION,
    )
    session.add(est)
    session.flush()
    return est, True
