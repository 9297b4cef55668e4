"""The field's forecast: low, best and high profiles from the headline basis and the plan.

The basis model (engine/headline) gives the average pressure; its P90/P50/P10 GIIP gives
the low/best/high cases by scaling the model's GIIP and keeping its other parameters (the
line's intercept, c_e, the aquifer's strength and time constant, the tanks' connections).
Each case then runs :func:`.profile.run_case` with the same wells and plan. With the plan's
pseudo-pressure form the wells' back-pressure equation uses the field's m(p) (its own z and
the Lee-Gonzalez-Eakin viscosity); water follows the gas by the rule of :mod:`.water`.
"""

from __future__ import annotations

import math

import numpy as np

from ..aquifer.models import SPECS
from ..aquifer.tank_solver import PzTable
from ..compartments.multitank_fit import carries_tanks
from ..errors import EngineError, InputRangeError, InsufficientDataError
from ..headline.types import Basis
from ..inputs import FieldInputs
from ..plan import FieldPlan
from ..prepare.points import PreparedData, field_z_function
from ..pvt.pseudopressure import (
    PseudoPressureTable,
    pseudo_pressure_table,
    viscosity_lee_gonzalez_eakin_of_p,
)
from .aquifer_stepper import AquiferStepper
from .deliverability import FORMS
from .network_stepper import NetworkStepper
from .profile import CaseSettings, cases_of, month_ends_t_days, run_case, stop_sentence
from .steppers import LineStepper, Stepper, field_pz_table
from .types import Forecast
from .water import water_rule
from .wells import field_wells, recent_volume_per_day

LINE_MODELS = ("single_tank", "tank_ce", "connected_tank", "volumetric")
NETWORK_MODELS = ("two_tank", "multi_tank")


def check_plan(plan: FieldPlan) -> None:
    """Raise InputRangeError for a plan the forecast cannot honour."""
    if not 0.0 < plan.uptime_frac <= 1.0:
        raise InputRangeError(f"the uptime fraction must lie in (0, 1]; got {plan.uptime_frac}")
    if plan.plateau_rate_mscf_per_day is not None and not plan.plateau_rate_mscf_per_day > 0:
        raise InputRangeError(f"the plateau rate must be positive; got {plan.plateau_rate_mscf_per_day}")
    if not plan.economic_limit_mscf_per_day >= 0:
        raise InputRangeError(
            f"the economic limit must not be negative; got {plan.economic_limit_mscf_per_day}"
        )
    for name in ("min_flowing_bhp_psia", "compression_min_flowing_bhp_psia"):
        v = getattr(plan, name)
        if v is not None and not v > 0:
            raise InputRangeError(f"{name.replace('_', ' ')} must be a positive absolute pressure; got {v}")
    if not 0.5 <= plan.deliverability_exponent <= 1.0:
        raise InputRangeError(
            f"the deliverability exponent must lie in 0.5-1.0; got {plan.deliverability_exponent}"
        )
    if plan.deliverability_form not in FORMS:
        raise InputRangeError(
            f"unknown deliverability form {plan.deliverability_form!r}; known: {', '.join(FORMS)}"
        )


def field_pseudo_pressure(
    inputs: FieldInputs, prepared: PreparedData, p_max_psia: float, p_ref_psia: float = 1.0
) -> PseudoPressureTable:
    """The field's m(p) at reservoir temperature: its own z source (lab table or correlation,
    as the p/z table) and the Lee-Gonzalez-Eakin viscosity of the same gas, from ``p_ref_psia``
    (below every flowing pressure of the plan) to ``p_max_psia``."""
    fluid = prepared.fluid or inputs.fluid
    z_of_p, _, _ = field_z_function(inputs, fluid, [])
    t_degF = inputs.reservoir_temperature_degF
    mu = viscosity_lee_gonzalez_eakin_of_p(t_degF, fluid.gas_gravity, z_of_p)
    return pseudo_pressure_table(z_of_p, mu, p_max_psia, p_ref_psia=p_ref_psia)


def stepper_for(
    inputs: FieldInputs,
    prepared: PreparedData,
    model: str,
    params: dict,
    giip_bscf: float,
    basis_giip_bscf: float,
    table: PzTable | None = None,
) -> Stepper:
    """The basis model's stepper with its GIIP set to ``giip_bscf`` (other parameters kept)."""
    gp = prepared.cumulative_gas_bscf * 1e9
    scale = giip_bscf / basis_giip_bscf
    if model in NETWORK_MODELS or carries_tanks(params):  # also the connected tank read from a network
        return NetworkStepper(inputs, prepared, params, scale)
    if model in LINE_MODELS:
        ce = params.get("ce_per_psi", 0.0) if model == "tank_ce" else 0.0
        pi = prepared.initial_pz_psia * prepared.initial_z
        table = table or field_pz_table(inputs, prepared)
        return LineStepper(table, params["initial_pz_psia"], giip_bscf * 1e9, gp, ce, pi)
    if model in SPECS:
        return AquiferStepper(inputs, prepared, model, params, scale)
    raise InsufficientDataError(f"no stepper for the basis model {model!r}")


def _ratio(ends, num, den, fallback: float | None) -> float | None:
    d = recent_volume_per_day(ends, den)
    return recent_volume_per_day(ends, num) / d if d > 0 else fallback


def forecast_field(inputs: FieldInputs, prepared: PreparedData, basis: Basis, params: dict) -> Forecast:
    """Low/best/high monthly profiles of a field from its basis model and its plan.

    Parameters
    ----------
    inputs : FieldInputs
        With ``plan`` set (and optionally ``well_tests``, ``production_by_well``).
    prepared : PreparedData
        The screened prepared data the basis was chosen on.
    basis : Basis
        The headline basis: model key and GIIP P90/P50/P10.
    params : dict
        The basis model's fitted parameters (``ModelFit.params``; for the lines the p/z
        estimate's intercept, G and c_e).
    """
    plan = inputs.plan
    if plan is None:
        raise InputRangeError("no field plan: nothing to forecast")
    check_plan(plan)
    ends = np.asarray(prepared.production_end_t_days, float)
    if ends.size == 0:
        raise InsufficientDataError("no production history to forecast from")
    notes = [
        f"Pressures from the basis model ({basis.title}); low, best and high scale its GIIP to the basis's "
        "P90, P50 and P10 and keep its other fitted parameters.",
    ]
    if basis.model == "volumetric":  # no fitted model yet: a closed tank from the initial pressure
        notes[0] = (
            "Pressures from a closed (volumetric) tank starting at the field's initial p/z; low, best and "
            "high hold the volumetric estimate's P90, P50 and P10 GIIP. An aquifer or rock expansion, "
            "which the surveys cannot show yet, would hold the pressure up and change the profile."
        )
    p_ab = inputs.abandonment_pressure_psia
    pwf = plan.min_flowing_bhp_psia
    if pwf is None:
        pwf = p_ab
        notes.append(
            f"No minimum flowing pressure in the plan: the abandonment pressure ({p_ab:,.0f} psia) is taken "
            "as the wells' minimum flowing bottom-hole pressure."
        )
    table = field_pz_table(inputs, prepared) if basis.model in LINE_MODELS else None
    best = stepper_for(inputs, prepared, basis.model, params, basis.giip_bscf, basis.giip_bscf, table)
    m_of_p = None
    if plan.deliverability_form == "pseudo_pressure":
        p_top = max(
            [1.35 * inputs.initial_pressure_psia, 1.05 * best.p_psia]
            + [1.05 * t.static_pressure_psia for t in inputs.well_tests]
        )
        p_low = min(1.0, 0.5 * min(v for v in (pwf, plan.compression_min_flowing_bhp_psia) if v is not None))
        m_of_p = field_pseudo_pressure(inputs, prepared, p_top, p_low)
        notes.append(
            "Deliverability in the pseudo-pressure form q = C [m(p̄) − m(p_wf)]^n (the plan's choice): "
            "m(p) from the field's z and the Lee-Gonzalez-Eakin gas viscosity"
            + ("; planned wells keep their C and n in the p² form." if plan.planned_wells else ".")
        )
    wells, well_notes = field_wells(inputs, prepared, plan, pwf, best.p_psia, m_of_p)
    notes += well_notes
    sep = np.asarray(inputs.production_gas_mscf, float)
    wet = np.diff(np.concatenate([[0.0], prepared.cumulative_gas_at_end_bscf])) * 1e6
    wet_per_sep = _ratio(ends, wet, sep, 1.0) or 1.0
    cgr = None
    if inputs.production_condensate_stb is not None:
        cgr = _ratio(ends, inputs.production_condensate_stb, sep, None)
        if cgr is not None:
            notes.append(
                f"Condensate follows the gas at the last 12 months' ratio, {cgr * 1e3:.1f} stb/MMscf."
            )
    water = water_rule(ends, sep, inputs.production_water_stb)
    notes.append(water.sentence)
    cum_sep = float(np.sum(sep)) / 1e6
    settings = CaseSettings(
        plan=plan,
        t_last_days=float(ends[-1]),
        month_ends_t_days=month_ends_t_days(float(ends[-1])),
        cumulative_separator_gas_bscf=cum_sep,
        wet_per_sep=wet_per_sep,
        cgr_stb_per_mscf=cgr,
        abandonment_pressure_psia=p_ab,
        min_flowing_bhp_psia=pwf,
        wells=wells,
        pseudo_pressure=m_of_p,
        water=water,
    )
    cases = cases_of(basis.giip_low_bscf, basis.giip_bscf, basis.giip_high_bscf)
    if basis.giip_high_bscf is None:
        notes.append("The basis's high case is unbounded: no high profile.")
    profiles = []
    for case, g in cases:
        if g <= prepared.cumulative_gas_bscf:
            notes.append(f"{case}: its GIIP ({g:.1f} Bscf) is not above the gas produced; no profile.")
            continue
        if case == "best":
            profiles.append(run_case(case, g, best, settings))
            continue
        try:  # a low or high case that cannot be stepped leaves the others standing
            stepper = stepper_for(inputs, prepared, basis.model, params, g, basis.giip_bscf, table)
            profiles.append(run_case(case, g, stepper, settings))
        except (EngineError, ValueError, FloatingPointError) as exc:
            notes.append(f"{case}: no profile ({exc}).")
    notes += [stop_sentence(p, settings) for p in profiles]
    notes.append(
        "Volumes are separator gas; the tank forecast ignores well interference, liquid loading and "
        "downtime beyond the uptime factor."
    )
    deliverability = tuple(d for d, _ in wells)
    if not math.isfinite(best.p_psia):
        raise InsufficientDataError("the basis model's pressure at the end of the history is not finite")
    return Forecast(
        basis.model, deliverability, tuple(profiles), tuple(notes), plan.deliverability_form, water
    )
