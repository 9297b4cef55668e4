"""Recompute a field's estimate from its stored data, and store it with a fingerprint."""

from __future__ import annotations

import dataclasses

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import (
    Estimate,
    Field,
    FieldAnalysisSettings,
    PressureSurvey,
    ProductionMonth,
    VolumetricEstimate,
    Well,
    WellTest,
)
from ...engine import ENGINE_VERSION
from ...engine.analysis import FieldAnalysis, analyse_field
from ...engine.errors import EngineError
from ...engine.inputs import AnalysisChoices, FieldInputs
from ...engine.prepare.points import field_z_function
from ...engine.volumetrics.estimate import VolumetricResult
from ..fieldwork.plan import engine_field_plan, plan_row, planned_wells
from ..forecast import stored_forecast
from ..serialize import fingerprint, to_jsonable
from ..team_settings import engine_settings
from .field_inputs import (
    ProductionRecord,
    SurveyRecord,
    VolumetricRecord,
    WellTestRecord,
    build_field_inputs,
    field_volumetric,
    fluid_inputs,
    lab_table_from_points,
)


class FieldNotReadyError(Exception):
    """The field lacks what any analysis needs (e.g. a fluid description)."""


def load_field_inputs(session: Session, field: Field) -> FieldInputs:
    """Gather a field's surveys, production, fluid and analysis choices into engine inputs."""
    if field.fluid is None:
        raise FieldNotReadyError(f"field {field.name!r} has no fluid description")
    surveys = session.execute(
        select(PressureSurvey, Well)
        .join(Well)
        .where(Well.field_id == field.id)
        .order_by(PressureSurvey.survey_date, Well.name)
    ).all()
    monthly = session.execute(  # one row per well and month (unique), so per well as well
        select(
            ProductionMonth.month,
            Well.compartment,
            ProductionMonth.gas_mscf,
            ProductionMonth.condensate_stb,
            ProductionMonth.water_stb,
            Well.name,
        )
        .join(Well)
        .where(Well.field_id == field.id)
        .order_by(ProductionMonth.month)
    ).all()
    tests = session.execute(
        select(WellTest, Well.name).join(Well).where(Well.field_id == field.id).order_by(WellTest.id)
    ).all()
    fl = field.fluid
    lab = lab_table_from_points([(p.pressure_psia, p.z_factor, p.bg_rcf_per_scf) for p in fl.lab_points])
    inputs = build_field_inputs(
        **fluid_inputs(fl.gas_gravity, fl.wellstream_gravity, fl.y_co2_frac, fl.y_h2s_frac, fl.y_n2_frac),
        reservoir_temperature_degF=field.reservoir_temperature_degF,
        initial_pressure_psia=field.initial_pressure_psia,
        abandonment_pressure_psia=field.abandonment_pressure_psia,
        datum_depth_ft=field.datum_depth_ft,
        surveys=[
            SurveyRecord(
                survey_date=s.survey_date,
                pressure_psia=s.pressure_psia,
                gauge_depth_ft=s.gauge_depth_ft,
                well=w.name,
                compartment=w.compartment,
                quality=s.quality,
                kind=s.kind,
                included=not s.excluded,
                exclusion_reason=s.exclusion_reason,
                survey_id=s.id,
            )
            for s, w in surveys
        ],
        production=[
            ProductionRecord(
                month=m,
                gas_mscf=float(g),
                condensate_stb=float(c),
                water_stb=float(w),
                compartment=comp,
                well=name,
            )
            for m, comp, g, c, w, name in monthly
        ],
        well_tests=[
            WellTestRecord(t.test_date, name, t.rate_mscf_per_day, t.flowing_bhp_psia, t.static_pressure_psia)
            for t, name in tests
        ],
        plan=engine_field_plan(plan_row(session, field.id), planned_wells(session, field.id)),
        condensate_api=fl.condensate_api,
        lab_table=lab,
        choices=choices_from_settings(field.settings),
    )
    basis, thresholds = engine_settings(session)
    return dataclasses.replace(
        inputs,
        volumetric=latest_volumetric(session, field),
        standard_conditions=basis,
        flag_thresholds=thresholds,
    )


def latest_volumetric(session: Session, field: Field) -> VolumetricResult | None:
    """The field's newest volumetric estimate (low/best/high), which the flags compare with."""
    v = session.execute(
        select(VolumetricEstimate)
        .where(VolumetricEstimate.field_id == field.id)
        .order_by(VolumetricEstimate.estimate_date.desc(), VolumetricEstimate.id.desc())
        .limit(1)
    ).scalar_one_or_none()
    if v is None:
        return None
    return field_volumetric(
        [VolumetricRecord(v.estimate_date, v.giip_low_bscf, v.giip_best_bscf, v.giip_high_bscf)]
    )


def choices_from_settings(settings: FieldAnalysisSettings | None) -> AnalysisChoices:
    """The engine's analysis choices from a field's stored settings (defaults if none)."""
    if settings is None:
        return AnalysisChoices()
    return AnalysisChoices(
        z_method=settings.z_method,
        use_lab_table=settings.use_lab_table,
        datum_correction=settings.datum_correction,
        condensate_correction=settings.condensate_correction,
        overpressure_mode=settings.overpressure_mode,
        effective_compressibility_per_psi=settings.effective_compressibility_per_psi,
        basis_model=settings.basis_model or "automatic",
        basis_reason=settings.basis_reason or "",
        anchor_initial=settings.anchor_initial,
        **{k: v for k, v in (settings.options or {}).items() if k in _OPTION_KEYS},
    )


_OPTION_KEYS = {
    "pseudo_critical_method",
    "weighting",
    "confidence_level",
    "bootstrap_samples",
    "water_vapour_correction",
}


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
    latest = _current_fingerprint(session, field.id)
    if latest is not None and latest[1] == fp:
        return session.get(Estimate, latest[0]), False
    try:
        result = analyse_field(inputs)
    except EngineError as exc:
        return _store_failure(session, field, "error", str(exc), fp)
    est = _estimate_from_result(field.id, result, fp, inputs)
    session.add(est)
    session.flush()
    return est, True


def _current_fingerprint(session: Session, field_id: int) -> tuple[int, str] | None:
    """(id, inputs fingerprint) of the field's newest estimate, without its detail (about 150
    KB of JSON that a recompute of an unchanged field need not read)."""
    row = session.execute(
        select(Estimate.id, Estimate.inputs_fingerprint)
        .where(Estimate.field_id == field_id)
        .order_by(Estimate.id.desc())
        .limit(1)
    ).first()
    return None if row is None else (row[0], row[1])


def _estimate_from_result(field_id: int, result: FieldAnalysis, fp: str, inputs: FieldInputs) -> Estimate:
    z_of_p = None
    if result.forecast is not None:  # the forecast's p/z path uses the estimate's own z(p)
        fluid = getattr(result.prepared, "fluid", None) or inputs.fluid
        z_of_p, _, _ = field_z_function(inputs, fluid, [])
    forecast, forecast_columns = stored_forecast(result.forecast, z_of_p)
    detail = to_jsonable(dataclasses.replace(result, forecast=None))
    detail["forecast"] = forecast
    return Estimate(
        field_id=field_id,
        method=result.method,
        status=result.status,
        message=result.message,
        giip_low_bscf=result.giip_low_bscf,
        giip_best_bscf=result.giip_best_bscf,
        giip_high_bscf=result.giip_high_bscf,
        eur_bscf=result.eur_bscf,
        recovery_factor_frac=result.recovery_factor_frac,
        cumulative_gas_bscf=result.cumulative_gas_bscf,
        remaining_bscf=result.remaining_bscf,
        flags=to_jsonable(list(result.flags)),
        **_basis_columns(result),
        detail=detail,
        inputs_fingerprint=fp,
        engine_version=result.engine_version,
        **forecast_columns,
    )


def _basis_columns(result: FieldAnalysis) -> dict:
    """The headline's basis and the straight line beside it, as plain estimate columns.
    Before the engine names a basis (or when it cannot: a refused field) the line is the
    headline, so the line columns are the giip_* columns."""
    b = result.basis
    line = (result.line_giip_low_bscf, result.line_giip_best_bscf, result.line_giip_high_bscf)
    if b is None and all(v is None for v in line):
        line = (result.giip_low_bscf, result.giip_best_bscf, result.giip_high_bscf)
    return {
        "basis_model": b.model if b else None,
        "basis_title": b.title[:200] if b else None,
        "basis_source": b.source if b else None,
        "line_giip_low_bscf": line[0],
        "line_giip_best_bscf": line[1],
        "line_giip_high_bscf": line[2],
    }


def _store_failure(session, field, status, message, fp) -> tuple[Estimate, bool]:
    latest = _current_fingerprint(session, field.id)
    if latest is not None and latest[1] == fp:
        return session.get(Estimate, latest[0]), False
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
