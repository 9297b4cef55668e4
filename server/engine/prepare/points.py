"""Stage 1 of a field analysis: from raw surveys and production to p/z points.

Applies, as the field's :class:`AnalysisChoices` say, the corrections it needs and
states each in plain words with its numbers (:attr:`PreparedData.corrections`):

* **z source**: the laboratory table when there is one and it is chosen, else the
  chosen correlation (DAK or Hall-Yarborough) with the chosen pseudo-critical method.
  Pressures outside the table use the correlation scaled to meet the table at its
  end, and the points concerned are flagged.
* **Condensate**: produced condensate is added to the separator gas as its wet-gas
  equivalent (from the API gravity and the field's standard conditions), and z uses
  the recombined well-stream gravity, or the well-stream gravity as given when the
  fluid has one (``engine/pvt/wellstream.py``: which one, and the checks between them).
* **Water vapour**: produced water is *not* counted as gas unless the engineer says
  it is condensed vapour (``water_vapour_correction``): most produced water is
  formation or aquifer water, a liquid withdrawal that belongs in the water terms.
* **Datum**: every gauge pressure is moved to the datum depth through the static gas
  column (z varying along it).

Surveys stay one point per well and date: the estimators fit those, weighted by
survey quality. Campaign averages (several wells within 31 days, one compartment
label) are reported beside them in :attr:`PreparedData.field_averages` for display
and for the compartment diagnostics; they are *not* extra points to fit.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..errors import EngineError
from ..inputs import FieldInputs
from ..pvt.condensate import (
    condensate_gas_equivalent_scf_per_stb,
    water_vapour_gas_equivalent_scf_per_stb,
)
from ..pvt.gas import GasFluid, z_factor, z_source_label
from ..pvt.labtable import LabZTable
from ..pvt.wellstream import gravity_for_z
from .cumulative import cumulative_at_times
from .datum import average_field_pressure, datum_pressure_psia

QUALITY_WEIGHT = {"good": 1.0, "fair": 0.5, "poor": 0.25}  # relative 1/variance; common practice
SURVEY_CAMPAIGN_WINDOW_DAYS = 31.0


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
    z_extrapolated: bool = False  # z from beyond the lab table's pressure range


@dataclass(frozen=True)
class AveragePoint:
    """A survey campaign's average datum pressure (see survey.average_field_pressure)."""

    t_days: float
    gp_bscf: float
    p_datum_psia: float
    z_factor: float
    pz_psia: float
    weight: float
    n_surveys: int
    wells: tuple[str, ...]
    compartment: str | None
    spread_psi: float
    member_indices: tuple[int, ...]  # SurveyPoint.index of the surveys averaged


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
    field_averages: tuple[AveragePoint, ...] = ()
    cumulative_separator_gas_bscf: float = 0.0  # separator gas only, no equivalents
    fluid: GasFluid | None = None  # the gas z was computed for (well stream when corrected)
    standard_conditions: str = ""
    gravity_source: str = "separator"  # "separator" | "recombined" | "given" (pvt/wellstream.py)
    fluid_warnings: tuple[str, ...] = ()  # gas gravities a person should check, in plain words

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
    """Turn a field's inputs into corrected p/z points, saying what was corrected."""
    _check_inputs(inputs)
    ch = inputs.choices
    notes: list[str] = []
    fluid = dataclasses.replace(inputs.fluid, pseudo_critical_method=ch.pseudo_critical_method)
    ends = np.asarray(inputs.production_end_t_days, float)
    sep = np.asarray(inputs.production_gas_mscf, float)
    wet, fluid, gravity = _wet_gas(inputs, sep, fluid, notes)
    zf, z_source, table = field_z_function(inputs, fluid, notes)

    t = np.asarray(inputs.survey_t_days, float)
    p_gauge = np.asarray(inputs.survey_p_psia, float)
    p_datum = _datum(inputs, p_gauge, fluid, zf, notes)
    z = np.atleast_1d(zf(p_datum)) if p_datum.size else p_datum
    pi, pa = inputs.initial_pressure_psia, inputs.abandonment_pressure_psia
    zi, za = float(zf(pi)), float(zf(pa))
    gp_bscf = cumulative_at_times(t, ends, wet) / 1e6
    extrapolated = table.outside_mask(p_datum) if table is not None else np.zeros(p_datum.size, bool)
    if table is not None:
        _note_extrapolation(table, extrapolated, pi, pa, ch.z_method, notes)

    included = np.asarray(inputs.survey_included, bool)
    points = []
    for i in range(p_gauge.size):
        quality = inputs.survey_text("survey_quality", i, "good")
        weight = QUALITY_WEIGHT.get(quality, 1.0) if ch.weighting == "quality" else 1.0
        points.append(
            SurveyPoint(
                index=i,
                survey_id=inputs.survey_text("survey_id", i),
                well=inputs.survey_text("survey_well", i, ""),
                compartment=inputs.survey_text("survey_compartment", i),
                t_days=float(t[i]),
                gp_bscf=float(gp_bscf[i]),
                p_gauge_psia=float(p_gauge[i]),
                p_datum_psia=float(p_datum[i]),
                z_factor=float(z[i]),
                pz_psia=float(p_datum[i] / z[i]),
                included=bool(included[i]),
                reason=None
                if included[i]
                else (inputs.survey_text("survey_exclusion_reason", i) or "set aside"),
                quality=quality,
                weight=weight,
                z_extrapolated=bool(extrapolated[i]),
            )
        )
    averages = _campaign_averages(points, ends, wet, zf, notes)
    return PreparedData(
        points=tuple(points),
        initial_z=zi,
        initial_pz_psia=pi / zi,
        abandonment_z=za,
        abandonment_pz_psia=pa / za,
        cumulative_gas_bscf=float(wet.sum()) / 1e6,
        production_end_t_days=ends,
        cumulative_gas_at_end_bscf=np.cumsum(wet) / 1e6,
        corrections=tuple(notes),
        z_source=z_source,
        field_averages=averages,
        cumulative_separator_gas_bscf=float(sep.sum()) / 1e6,
        fluid=fluid,
        standard_conditions=inputs.standard_conditions.label,
        gravity_source=gravity.source,
        fluid_warnings=() if gravity.warning is None else (gravity.warning,),
    )


def _survey_label(inputs: FieldInputs, i: int) -> str:
    sid = inputs.survey_text("survey_id", i)
    well = inputs.survey_text("survey_well", i, "")
    return f"survey {sid if sid is not None else i + 1}" + (f" (well {well})" if well else "")


def _check_inputs(inputs: FieldInputs) -> None:
    """Clear errors naming the survey or production period, before any arithmetic."""
    n = inputs.n_surveys
    for name in ("survey_p_psia", "survey_gauge_depth_ft", "survey_included"):
        if np.asarray(getattr(inputs, name)).size != n:
            raise EngineError(f"{name} has {np.asarray(getattr(inputs, name)).size} entries for {n} surveys")
    p = np.asarray(inputs.survey_p_psia, float)
    d = np.asarray(inputs.survey_gauge_depth_ft, float)
    t = np.asarray(inputs.survey_t_days, float)
    for i in range(n):
        if not (np.isfinite(p[i]) and p[i] > 0):
            raise EngineError(
                f"{_survey_label(inputs, i)}: pressure {float(p[i])} is not a positive absolute pressure"
            )
        if not np.isfinite(d[i]):
            raise EngineError(f"{_survey_label(inputs, i)}: gauge depth is missing")
        if not np.isfinite(t[i]):
            raise EngineError(f"{_survey_label(inputs, i)}: survey date is missing")
    m = np.asarray(inputs.production_end_t_days).size
    for name in ("production_gas_mscf", "production_condensate_stb", "production_water_stb"):
        v = getattr(inputs, name)
        if v is None:
            continue
        v = np.asarray(v, float)
        if v.size != m:
            raise EngineError(f"{name} has {v.size} entries for {m} production periods")
        bad = np.flatnonzero(~(v >= 0))
        if bad.size:
            raise EngineError(f"{name}: period {bad[0] + 1} has {float(v[bad[0]])}, not a volume >= 0")
    pi, pa = inputs.initial_pressure_psia, inputs.abandonment_pressure_psia
    if not (math.isfinite(pi) and pi > 0):
        raise EngineError(f"initial pressure must be a positive absolute pressure [psia], got {pi}")
    if not 0 < pa < pi:
        raise EngineError(
            f"abandonment pressure must be positive and below the initial pressure ({pi:g} psia), got {pa}"
        )


def _wet_gas(inputs: FieldInputs, sep, fluid: GasFluid, notes: list[str]):
    """Per-period wet-gas equivalent, the fluid z should use, and how its gravity was chosen."""
    ch, sc = inputs.choices, inputs.standard_conditions
    wet = sep.copy()
    sep_mmscf = sep.sum() / 1e3
    cond = np.asarray(
        inputs.production_condensate_stb if inputs.production_condensate_stb is not None else []
    )
    n_cond = float(cond.sum()) if cond.size else 0.0
    if n_cond > 0 and not sep_mmscf > 0:
        raise EngineError(
            f"{n_cond:,.0f} stb of condensate reported with no separator gas: check the production"
        )
    yield_stb_per_mmscf = n_cond / sep_mmscf if n_cond > 0 else 0.0
    api = inputs.condensate_api
    given = inputs.wellstream_gravity
    gravity = gravity_for_z(
        separator_gas_gravity=fluid.gas_gravity if inputs.separator_gravity_given else None,
        given_wellstream_gravity=given,
        condensate_yield_stb_per_mmscf=yield_stb_per_mmscf,
        api=api,
        recombine=ch.condensate_correction,
        inerts=(fluid.y_co2_frac, fluid.y_h2s_frac, fluid.y_n2_frac),
        conditions=sc,
    )
    z_text = (
        f"z uses the well-stream gravity {gravity.gravity:.4f} as given"
        if gravity.source == "given"
        else "z uses the separator-gas gravity"
    )
    if n_cond > 0:
        if not ch.condensate_correction:
            notes.append(
                f"condensate correction off: {n_cond:,.0f} stb of condensate "
                f"({yield_stb_per_mmscf:.0f} stb/MMscf) not counted; cumulative production and GIIP "
                "are separator gas only"
            )
        elif api is None:
            notes.append(
                f"{n_cond:,.0f} stb of condensate ({yield_stb_per_mmscf:.0f} stb/MMscf) produced but the "
                f"fluid has no API gravity: no wet-gas equivalent added, {z_text}"
            )
        else:
            ge = float(condensate_gas_equivalent_scf_per_stb(api, sc))
            wet = wet + ge * cond / 1e3
            z_words = z_text
            if gravity.source == "recombined":
                z_words = (
                    f"z uses the well-stream gravity {gravity.gravity:.4f} "
                    f"(separator gas {fluid.gas_gravity:.4f})"
                )
            notes.append(
                f"condensate {yield_stb_per_mmscf:.0f} stb/MMscf ({api:g} °API, {ge:.0f} scf/stb) adds "
                f"{100 * ge * n_cond / 1e3 / sep.sum():.1f} % wet-gas equivalent; {z_words}"
            )
    if gravity.note and gravity.note not in " ".join(notes):
        notes.append(gravity.note)
    if gravity.warning:
        notes.append(f"check the gas gravity: {gravity.warning}")
    if gravity.gravity != fluid.gas_gravity:
        fluid = dataclasses.replace(fluid, gas_gravity=gravity.gravity)
    water = np.asarray(inputs.production_water_stb if inputs.production_water_stb is not None else [])
    w_total = float(water.sum()) if water.size else 0.0
    if w_total > 0 and sep_mmscf > 0:
        wgr = w_total / sep_mmscf
        if ch.water_vapour_correction:
            gew = water_vapour_gas_equivalent_scf_per_stb(sc)
            wet = wet + gew * water / 1e3
            notes.append(
                f"all produced water ({wgr:.2f} stb/MMscf) counted as condensed vapour at {gew:.0f} scf/stb: "
                f"adds {100 * gew * w_total / 1e3 / sep.sum():.2f} % wet-gas equivalent"
            )
        else:
            notes.append(
                f"produced water ({wgr:.2f} stb/MMscf) treated as liquid formation water, not vapour "
                "(water-vapour correction off)"
            )
    return wet, fluid, gravity


def field_z_function(inputs: FieldInputs, fluid: GasFluid, notes: list[str]):
    """(z(p) at reservoir temperature, its description, the lab table or None)."""
    ch, t_res = inputs.choices, inputs.reservoir_temperature_degF

    def correlation(p):
        return z_factor(p, t_res, fluid, ch.z_method)

    corr_label = f"{z_source_label(fluid, ch.z_method)} (gas gravity {fluid.gas_gravity:.4f})"
    lab = inputs.lab_table
    if lab is None:
        return correlation, corr_label, None
    if not ch.use_lab_table:
        notes.append("laboratory z table available but not used (choice): z from the correlation")
        return correlation, corr_label, None
    kw = {"outside": "scaled_correlation", "correlation": correlation}
    if lab.z_factor is not None:
        table = LabZTable(lab.pressure_psia, lab.z_factor, **kw)
        what = "z"
    elif lab.bg_rcf_per_scf is not None:
        table = LabZTable.from_bg(
            lab.pressure_psia, lab.bg_rcf_per_scf, t_res, inputs.standard_conditions, **kw
        )
        what = f"Bg (at {inputs.standard_conditions.label}) converted to z"
    else:
        raise EngineError("the laboratory table has neither z nor Bg values")
    label = (
        f"laboratory table ({table.pressure_psia.size} points of {what}, {table.p_min_psia:.0f}-"
        f"{table.p_max_psia:.0f} psia) by monotone cubic (PCHIP) interpolation"
    )
    return table, label, table


def _note_extrapolation(table: LabZTable, outside, pi, pa, method, notes):
    names = [f"{int(outside.sum())} survey(s)"] if outside.any() else []
    names += [f"the {w} pressure" for w, p in (("initial", pi), ("abandonment", pa)) if table.outside_mask(p)]
    if not names:
        return
    lo, hi = table.end_ratios()
    notes.append(
        f"z beyond the laboratory table ({table.p_min_psia:.0f}-{table.p_max_psia:.0f} psia) for "
        f"{', '.join(names)}: {method} correlation scaled to meet the table's end "
        f"(x{lo:.4f} below, x{hi:.4f} above); these points are flagged"
    )


def _datum(inputs: FieldInputs, p_gauge, fluid: GasFluid, zf: Callable, notes: list[str]):
    """Gauge pressures moved to the datum (when chosen), with a note per gauge offset."""
    depth = np.asarray(inputs.survey_gauge_depth_ft, float)
    above_ft = inputs.datum_depth_ft - depth
    if p_gauge.size == 0 or np.all(np.abs(above_ft) < 0.5):
        return p_gauge.copy()
    moved = np.asarray(
        datum_pressure_psia(
            p_gauge, depth, inputs.datum_depth_ft, inputs.reservoir_temperature_degF, fluid.gas_gravity, zf
        )
    )
    dp = moved - p_gauge
    on = inputs.choices.datum_correction
    for off in np.unique(np.round(above_ft[np.abs(above_ft) >= 0.5])):
        sel = np.round(above_ft) == off
        where = f"{abs(off):.0f} ft {'above' if off > 0 else 'below'} datum ({int(sel.sum())} surveys)"
        span = f"{np.abs(dp[sel]).min():.0f}-{np.abs(dp[sel]).max():.0f} psi"
        verb = "raised" if off > 0 else "lowered"
        if on:
            notes.append(f"gauges {where}: pressures {verb} by {span} through the gas column")
        else:
            notes.append(
                f"datum correction off: gauges {where} used as measured (it would have {verb} them by {span})"
            )
    return moved if on else p_gauge.copy()


def _campaign_averages(points, ends, wet, zf, notes) -> tuple[AveragePoint, ...]:
    used = [p for p in points if p.included]
    if not used:
        return ()
    camps = average_field_pressure(
        [p.t_days for p in used],
        [p.p_datum_psia for p in used],
        [p.weight for p in used],
        [p.well for p in used],
        [p.compartment for p in used],
        window_days=SURVEY_CAMPAIGN_WINDOW_DAYS,
    )
    gp = cumulative_at_times([c.t_days for c in camps], ends, wet) / 1e6
    z = np.atleast_1d(zf(np.array([c.p_psia for c in camps])))
    out = tuple(
        AveragePoint(
            t_days=c.t_days,
            gp_bscf=float(gp[k]),
            p_datum_psia=c.p_psia,
            z_factor=float(z[k]),
            pz_psia=c.p_psia / float(z[k]),
            weight=c.weight,
            n_surveys=c.n_surveys,
            wells=c.wells,
            compartment=c.compartment,
            spread_psi=c.spread_psi,
            member_indices=tuple(used[j].index for j in c.members),
        )
        for k, c in enumerate(camps)
    )
    multi = [a for a in out if len(a.wells) > 1]
    if multi:
        notes.append(
            f"{len(multi)} survey campaign(s) with several wells averaged within "
            f"{SURVEY_CAMPAIGN_WINDOW_DAYS:.0f} days for display (largest spread "
            f"{max(a.spread_psi for a in multi):.0f} psi); the fit uses each survey"
        )
    return out
