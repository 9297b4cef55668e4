"""One field's analysis: from surveys and production to a dynamic GIIP estimate.

This is the engine's entry point for the services layer. It takes plain arrays
and returns a frozen result; every later method plugs in here.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from . import ENGINE_VERSION
from .errors import EngineError
from .production import cumulative_at_times
from .pvt import GasFluid, z_factor
from .pz import fit_pz_line, recovery_factor_volumetric


@dataclass(frozen=True)
class FieldInputs:
    """Everything the engine needs for one field (oilfield units)."""

    fluid: GasFluid
    reservoir_temperature_degF: float
    initial_pressure_psia: float
    abandonment_pressure_psia: float
    survey_t_days: np.ndarray
    survey_p_psia: np.ndarray  # at datum, absolute
    survey_included: np.ndarray  # bool
    production_end_t_days: np.ndarray
    production_gas_mscf: np.ndarray
    survey_labels: tuple[str, ...] = ()  # e.g. well names, carried through to the points
    z_method: str = "dak"


@dataclass(frozen=True)
class PzPoint:
    label: str
    t_days: float
    gp_bscf: float
    p_psia: float
    z_factor: float
    pz_psia: float
    included: bool


@dataclass(frozen=True)
class FieldAnalysis:
    """Result of one field analysis (Bscf at the field's standard conditions)."""

    status: str  # "ok" or "refused"
    message: str
    method: str
    points: tuple[PzPoint, ...]
    initial_pz_psia: float
    abandonment_pz_psia: float
    pz_intercept_psia: float | None = None
    pz_slope_psia_per_bscf: float | None = None
    giip_bscf: float | None = None
    eur_bscf: float | None = None
    recovery_factor_frac: float | None = None
    cumulative_gas_bscf: float = 0.0
    remaining_bscf: float | None = None
    engine_version: str = ENGINE_VERSION
    notes: tuple[str, ...] = field(default_factory=tuple)


def analyse_field(inputs: FieldInputs) -> FieldAnalysis:
    """Single-tank p/z analysis of a field; refuses with a reason when data are too thin."""
    t_res = inputs.reservoir_temperature_degF
    zi = float(z_factor(inputs.initial_pressure_psia, t_res, inputs.fluid, inputs.z_method))
    za = float(z_factor(inputs.abandonment_pressure_psia, t_res, inputs.fluid, inputs.z_method))
    pz_i = inputs.initial_pressure_psia / zi
    pz_a = inputs.abandonment_pressure_psia / za
    gp_mscf = cumulative_at_times(
        inputs.survey_t_days, inputs.production_end_t_days, inputs.production_gas_mscf
    )
    gp_bscf = np.asarray(gp_mscf) / 1e6
    p = np.asarray(inputs.survey_p_psia, float)
    z = np.atleast_1d(z_factor(p, t_res, inputs.fluid, inputs.z_method)) if p.size else p
    pz = p / z if p.size else p
    included = np.asarray(inputs.survey_included, bool)
    labels = inputs.survey_labels or ("",) * p.size
    points = tuple(
        PzPoint(lab, float(t), float(g), float(pp), float(zz), float(q), bool(inc))
        for lab, t, g, pp, zz, q, inc in zip(
            labels, inputs.survey_t_days, gp_bscf, p, z, pz, included, strict=True
        )
    )
    total_gp_bscf = float(np.sum(inputs.production_gas_mscf)) / 1e6
    base = dict(
        method="pz-ols",
        points=points,
        initial_pz_psia=pz_i,
        abandonment_pz_psia=pz_a,
        cumulative_gas_bscf=total_gp_bscf,
    )
    try:
        line = fit_pz_line(gp_bscf[included], pz[included])
    except EngineError as exc:
        return FieldAnalysis(status="refused", message=str(exc), **base)
    giip = line.giip_bscf
    rf = recovery_factor_volumetric(pz_a, line.intercept_psia)
    eur = giip * rf
    return FieldAnalysis(
        status="ok",
        message=f"single-tank p/z line through {line.n_points} surveys",
        pz_intercept_psia=line.intercept_psia,
        pz_slope_psia_per_bscf=line.slope_psia_per_bscf,
        giip_bscf=giip,
        eur_bscf=eur,
        recovery_factor_frac=rf,
        remaining_bscf=eur - total_gp_bscf,
        **base,
    )
