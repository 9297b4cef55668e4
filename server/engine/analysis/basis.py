"""The headline of an analysed field: every model's outcome, the basis of its headline numbers
and the booked range (engine/headline), and the forecast of the plan from that basis
(engine/forecast)."""

from __future__ import annotations

import dataclasses
import math

from ..diagnosis.flag_rules import raise_flags
from ..errors import EngineError, InsufficientDataError
from ..forecast.build import forecast_field
from ..headline.build import basis_evidence, choose_basis, model_outcomes
from ..headline.connected import apart_wells, connected_tank_fit
from ..headline.outcomes import TITLES
from ..headline.ranges import Z90
from ..headline.types import Basis, ModelOutcome
from ..inputs import FieldInputs
from ..prepare.points import PreparedData
from ..tank.pz_estimate import PzEstimate
from .types import FieldAnalysis


def with_headline(inputs: FieldInputs, screened: PreparedData, result: FieldAnalysis, diag) -> FieldAnalysis:
    """The analysis with every model's outcome, the basis of its headline numbers and the
    booked range; the flags are raised again with the basis held against the volumetric range."""
    level = inputs.choices.confidence_level
    plain = result.pz_uncorrected or result.pz
    line = _line_outcome(plain, "single_tank", diag, level)
    corrected = None
    if result.pz_uncorrected is not None:
        title = f"Rock and water expansion (ce {inputs.choices.overpressure_mode})"
        corrected = dataclasses.replace(_line_outcome(result.pz, "tank_ce", diag, level), title=title)
    boot = plain.giip_range_bscf.bootstrap
    line_sigma = None
    if boot and boot.p90 > 0 and math.isfinite(boot.p10):
        line_sigma = math.log(boot.p10 / boot.p90) / (2.0 * Z90)
    outcomes = model_outcomes(inputs, screened, diag, line=line, corrected=corrected)
    basis = choose_basis(inputs, screened, diag, outcomes, diag.flags, line_scatter_sigma=line_sigma)
    evidence = basis_evidence(inputs, screened, diag, basis)
    flags = raise_flags(evidence, inputs.flag_thresholds)
    diag = dataclasses.replace(diag, evidence=evidence, flags=flags)
    out = dataclasses.replace(
        result,
        diagnosis=diag,
        flags=flags,
        outcomes=outcomes,
        line_giip_low_bscf=result.giip_low_bscf if result.pz_uncorrected is None else None,
        line_giip_best_bscf=plain.giip_bscf,
        line_giip_high_bscf=result.giip_high_bscf if result.pz_uncorrected is None else None,
        line_eur_bscf=plain.eur_bscf,
    )
    if basis is None:
        return out
    chosen = next(o for o in outcomes if o.model == basis.model)
    out = with_forecast(inputs, screened, out, diag, basis)
    return dataclasses.replace(
        out,
        basis=basis,
        message=f"{basis.title}: {result.message}" if basis.model != "single_tank" else result.message,
        giip_low_bscf=basis.giip_low_bscf,
        giip_best_bscf=basis.giip_bscf,
        giip_high_bscf=basis.giip_high_bscf,
        giip_range_kind=basis.range_kind,
        **(
            {}
            if basis.model == result.pz_model
            else {
                "giip_ci_low_bscf": chosen.giip_low_bscf,
                "giip_ci_high_bscf": chosen.giip_high_bscf,
                "giip_ci_kind": f"{100 * level:.0f} % confidence interval of the {basis.title.lower()}",
            }
        ),
        eur_bscf=basis.eur_bscf,
        recovery_factor_frac=basis.recovery_factor_frac,
        remaining_bscf=basis.remaining_bscf,
    )


def with_forecast(inputs: FieldInputs, screened: PreparedData, result: FieldAnalysis, diag, basis: Basis):
    """The analysis with the forecast of the plan from the basis (engine/forecast); a forecast
    that cannot be made is a note, never a refusal of the analysis."""
    if inputs.plan is None:
        return result
    try:
        params = _basis_params(inputs, screened, result, diag, basis.model)
        if basis.model == "connected_tank":  # the wells set apart see another compartment
            apart = set(apart_wells(diag.wells))
            points = tuple(
                dataclasses.replace(p, included=False, reason="another compartment") if p.well in apart else p
                for p in screened.points
            )
            screened = dataclasses.replace(screened, points=points)
        forecast = forecast_field(inputs, screened, basis, params)
    except (EngineError, ValueError, KeyError, FloatingPointError, ZeroDivisionError) as exc:
        return dataclasses.replace(result, notes=(*result.notes, f"No forecast: {exc}."))
    return dataclasses.replace(result, forecast=forecast)


def _basis_params(
    inputs: FieldInputs, screened: PreparedData, result: FieldAnalysis, diag, model: str
) -> dict:
    """The basis model's parameters: the p/z estimate's line (as the headline uses it), else its fit."""
    plain = result.pz_uncorrected or result.pz
    if model == "volumetric":  # one closed tank from the field's initial p/z
        return {"initial_pz_psia": screened.initial_pz_psia}
    if model == "single_tank" and plain is not None:
        return {"initial_pz_psia": plain.intercept_psia, "giip_bscf": plain.giip_bscf}
    if model == "tank_ce" and result.pz_uncorrected is not None:
        pz = result.pz
        return {"initial_pz_psia": pz.intercept_psia, "giip_bscf": pz.giip_bscf, "ce_per_psi": pz.ce_per_psi}
    if model == "connected_tank":
        fit = connected_tank_fit(screened, inputs.choices, diag.wells, diag.models, diag.neighbour_wells)
        if fit is None:
            raise InsufficientDataError("the connected tank could not be fitted again")
        return fit.params
    fit = next((m for m in diag.models if m.name == model), None)
    if fit is None:
        raise InsufficientDataError(f"the basis model {model} has no fit")
    return fit.params


def _line_outcome(est: PzEstimate, model: str, diag, level: float) -> ModelOutcome:
    """A p/z estimate (with its screening, anchoring and weighting) as a model outcome."""
    g = est.giip_range_bscf
    ci = g.ci_fieller or g.ci_delta
    low, high = (ci.low, ci.high) if ci else (None, None)
    if high is not None and not math.isfinite(high):
        high = None
    bounded = low is not None and high is not None
    row = diag.comparison.row(model) if diag.comparison else None
    return ModelOutcome(
        model=model,
        title=TITLES[model],
        giip_bscf=est.giip_bscf,
        giip_low_bscf=low,
        giip_high_bscf=high,
        eur_bscf=est.eur_bscf,
        recovery_factor_frac=est.recovery_factor_frac,
        remaining_bscf=est.remaining_bscf,
        determined=bounded,
        status="determined" if bounded else "not determined: its GIIP interval is unbounded",
        eur_method="closed form at the abandonment pressure",
        delta_aicc=None if row is None or not math.isfinite(row.delta_aicc) else row.delta_aicc,
        akaike_weight=None if row is None else row.akaike_weight,
    )
