"""Stage 1 of a field analysis: from raw surveys and production to p/z points.

Applies the corrections the field needs (datum, condensate and water-vapour
equivalents, lab table or z correlation) and says in plain words what was applied.
The estimators (stage 2) only ever see :class:`PreparedData`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .inputs import FieldInputs
from .production import cumulative_at_times
from .pvt import z_factor

QUALITY_WEIGHT = {"good": 1.0, "fair": 0.5, "poor": 0.25}  # relative 1/variance; common practice


@dataclass(frozen=True)
class SurveyPoint:
    """One survey as the estimators see it."""

    index: int  # position in FieldInputs' survey arrays
    survey_id: int | None
    well: str
    compartment: str | None
    t_days: float
    gp_bscf: float  # cumulative (wet-gas equivalent when corrected) at the survey time
    p_gauge_psia: float
    p_datum_psia: float
    z_factor: float
    pz_psia: float
    included: bool  # False when an engineer set it aside
    reason: str | None  # why it was set aside, if it was
    quality: str
    weight: float  # relative weight for weighted fits


@dataclass(frozen=True)
class PreparedData:
    points: tuple[SurveyPoint, ...]
    initial_z: float
    initial_pz_psia: float
    abandonment_z: float
    abandonment_pz_psia: float
    cumulative_gas_bscf: float  # total to date (wet-gas equivalent when corrected)
    production_end_t_days: np.ndarray
    cumulative_gas_at_end_bscf: np.ndarray  # at each production period end
    corrections: tuple[str, ...]  # what was applied, in plain words
    z_source: str

    def arrays(self, *, included_only: bool = True):
        """(t_days, gp_bscf, pz_psia, weight) of the points, as arrays."""
        pts = [p for p in self.points if p.included or not included_only]
        return (
            np.array([p.t_days for p in pts]),
            np.array([p.gp_bscf for p in pts]),
            np.array([p.pz_psia for p in pts]),
            np.array([p.weight for p in pts]),
        )


def prepare(inputs: FieldInputs) -> PreparedData:
    """Turn a field's inputs into corrected p/z points (first slice: no corrections yet)."""
    fluid = inputs.fluid
    t_res = inputs.reservoir_temperature_degF
    method = inputs.choices.z_method

    def zf(p):
        return z_factor(p, t_res, fluid, method)

    zi = float(zf(inputs.initial_pressure_psia))
    za = float(zf(inputs.abandonment_pressure_psia))
    ends = np.asarray(inputs.production_end_t_days, float)
    gas = np.asarray(inputs.production_gas_mscf, float)
    t = np.asarray(inputs.survey_t_days, float)
    gp_bscf = cumulative_at_times(t, ends, gas) / 1e6
    p = np.asarray(inputs.survey_p_psia, float)
    z = np.atleast_1d(zf(p)) if p.size else p
    included = np.asarray(inputs.survey_included, bool)
    points = []
    for i in range(p.size):
        quality = inputs.survey_text("survey_quality", i, "good")
        weight = QUALITY_WEIGHT.get(quality, 1.0) if inputs.choices.weighting == "quality" else 1.0
        points.append(
            SurveyPoint(
                index=i,
                survey_id=inputs.survey_text("survey_id", i),
                well=inputs.survey_text("survey_well", i, ""),
                compartment=inputs.survey_text("survey_compartment", i),
                t_days=float(t[i]),
                gp_bscf=float(gp_bscf[i]),
                p_gauge_psia=float(p[i]),
                p_datum_psia=float(p[i]),
                z_factor=float(z[i]),
                pz_psia=float(p[i] / z[i]),
                included=bool(included[i]),
                reason=None
                if included[i]
                else (inputs.survey_text("survey_exclusion_reason", i) or "set aside"),
                quality=quality,
                weight=weight,
            )
        )
    return PreparedData(
        points=tuple(points),
        initial_z=zi,
        initial_pz_psia=inputs.initial_pressure_psia / zi,
        abandonment_z=za,
        abandonment_pz_psia=inputs.abandonment_pressure_psia / za,
        cumulative_gas_bscf=float(gas.sum()) / 1e6,
        production_end_t_days=ends,
        cumulative_gas_at_end_bscf=np.cumsum(gas) / 1e6,
        corrections=(),
        z_source="Dranchuk-Abou-Kassem z with Sutton pseudo-criticals",
    )
