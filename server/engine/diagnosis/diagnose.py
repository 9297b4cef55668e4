"""Diagnose one field: run every available model fit, compare them, raise the flags.

:func:`diagnose_field` is the one call: each fitter returns ModelFits on the same
included surveys; a fitter that cannot run (too few surveys, a refused input) is listed
with its reason rather than failing the field. The evidence the flag rules read
(:class:`.flags.Evidence`) is gathered here from the prepared data, the fits and the
wells.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from ..aquifer.history_match import fit_aquifer_models
from ..aquifer.tank_solver import field_pz_table
from ..compartments.multitank_fit import fit_two_tank, network_layout
from ..compartments.well_trend import (
    WellFinding,
    apart_wells,
    assign_apart,
    robust_trend,
    well_disagreements,
)
from ..errors import EngineError, InsufficientDataError
from ..inputs import FieldInputs
from ..modelfit import ModelFit
from ..prepare.points import PreparedData
from ..tank.balance_terms import ColePlot, field_cole_plots
from ..tank.overpressure import single_tank_modelfit, tank_ce_modelfit
from .compare import ModelComparison, compare_models, curvature_test
from .explained import off_the_best_model
from .flag_rules import raise_flags
from .flags import Evidence, Flag, Outlier, WaterTrend

Fitter = Callable[[FieldInputs, PreparedData], "ModelFit | Sequence[ModelFit]"]
#: Models of a mechanism (a neighbour, an aquifer): not fitted with too little depletion,
#: where they can only bend to the scatter.
MECHANISM_FITTERS = frozenset({"two_tank", "aquifer models"})


@dataclass(frozen=True)
class Headline:
    """The dynamic estimate the field reports, held against the volumetric range."""

    method: str
    giip_bscf: float
    low_bscf: float | None
    high_bscf: float | None
    interval_kind: str | None  # e.g. "Fieller 95 % confidence interval"


@dataclass(frozen=True)
class Diagnosis:
    gp_bscf: np.ndarray  # the included surveys every model is fitted to, in their order
    pz_psia: np.ndarray
    compartment: tuple[str | None, ...]  # each survey's well compartment label
    cole_plots: tuple[ColePlot, ...]  # F/Eg (and F/(Eg + Efw) when ce is given) with trends
    models: tuple[ModelFit, ...]
    skipped: tuple[tuple[str, str], ...]  # (model, why it was not fitted)
    comparison: ModelComparison | None
    wells: tuple[WellFinding, ...]
    evidence: Evidence
    flags: tuple[Flag, ...]
    # Wells standing apart whose surveys the two-tank fit reads as its second tank's pressure
    # (assigned by the diagnosis, or by the team's compartment labels).
    neighbour_wells: tuple[str, ...] = ()


DEFAULT_FITTERS: tuple[tuple[str, Fitter], ...] = (
    ("single_tank", lambda i, p: single_tank_modelfit(p, i.choices)),
    ("tank_ce", lambda i, p: tank_ce_modelfit(p, i.choices, field_pz_slope(i, p))),
    ("two_tank", lambda i, p: fit_two_tank(i, p)),
    ("aquifer models", fit_aquifer_models),
)


def diagnose_field(
    inputs: FieldInputs,
    prepared: PreparedData,
    *,
    fitters: Sequence[tuple[str, Fitter]] = DEFAULT_FITTERS,
    headline: Headline | None = None,
    outliers: tuple[Outlier, ...] | None = None,
) -> Diagnosis:
    """Fit every available model to one field, compare them and raise the flags.

    Parameters
    ----------
    inputs, prepared : the field's inputs and prepared p/z points.
    fitters : sequence of (name, callable)
        Each callable takes (inputs, prepared) and returns one ModelFit or several.
    headline : Headline, optional
        The dynamic estimate held against the volumetric range; the single-tank fit's
        GIIP and interval when omitted.
    outliers : tuple of Outlier, optional
        Surveys the estimate's own outlier rule set aside (they are then no longer among
        the included points); when omitted, outliers are found from the robust trend.
    """
    th = inputs.flag_thresholds
    wells = well_disagreements(
        prepared,
        k_sigma=th.well_disagreement_sigma,
        min_points=th.well_min_points,
        near_initial_ratio=th.near_initial_ratio,
        min_trend_points=th.well_trend_min_points,
        apart_ratio=th.apart_max_depletion_ratio,
    )
    state = _field_state(inputs, prepared, wells)
    young = state.depletion_frac is not None and state.depletion_frac < th.min_depletion_frac
    fits: list[ModelFit] = []
    skipped = []
    networked, assigned = (
        (prepared, ())
        if inputs.production_by_compartment
        else assign_apart(prepared, _not_producing(inputs, wells))
    )
    for name, fitter in fitters:
        if young and name in MECHANISM_FITTERS:
            skipped.append((name, f"p/z has fallen {100 * state.depletion_frac:.1f} %: too little to fit"))
            continue
        try:
            out = fitter(inputs, networked if name == "two_tank" else prepared)
        except EngineError as exc:
            skipped.append((name, str(exc)))
            continue
        if name == "two_tank" and assigned:
            out = _assigned_note(out, assigned)
        fits.extend([out] if isinstance(out, ModelFit) else out)
    _, gp, pz, _ = prepared.arrays()
    comparison = (
        compare_models(
            fits,
            gp,
            comparable_delta=th.comparable_delta_aicc,
            little_support_delta=th.model_preference_delta_aicc,
        )
        if fits
        else None
    )
    if headline is None:
        single = next((f for f in fits if f.name == "single_tank" and f.giip_bscf is not None), None)
        if single is not None:
            headline = Headline(
                single.name, single.giip_bscf, single.giip_low_bscf, single.giip_high_bscf, None
            )
    cole_plots = _cole_plots(inputs, prepared)
    cole = cole_plots[0].trend if cole_plots else None
    candidates = state.outliers if outliers is None else tuple(outliers)
    off = off_the_best_model(
        candidates,
        comparison,
        fits,
        prepared,
        inputs.flag_thresholds.outlier_sigma,
        state.noise_psia,
        field_pz_slope(inputs, prepared),
    )
    evidence = _evidence(inputs, prepared, state, comparison, wells, headline, cole, off, fits)
    labels = tuple(p.compartment for p in prepared.points if p.included)
    flags = raise_flags(evidence, th)
    return Diagnosis(
        gp,
        pz,
        labels,
        cole_plots,
        tuple(fits),
        tuple(skipped),
        comparison,
        wells,
        evidence,
        flags,
        assigned or _labelled_apart(inputs, prepared, wells),
    )


def _not_producing(inputs: FieldInputs, wells: tuple[WellFinding, ...]) -> tuple[WellFinding, ...]:
    """The findings without wells that produced more than 1 % of the field's gas: the two-tank
    fit takes all production from the producers' tank, which such a well would contradict (a
    well without recorded production counts as not producing)."""
    total = float(np.sum(inputs.production_gas_mscf))
    made = {w: float(np.sum(q)) for w, q in inputs.production_by_well}
    return tuple(f for f in wells if made.get(f.well, 0.0) <= 0.01 * total)


def _labelled_apart(inputs: FieldInputs, prepared: PreparedData, wells) -> tuple[str, ...]:
    """Wells standing apart that the team's labels put outside the producers' (hub) tank."""
    labelled = {f.well: f.compartment for f in wells if f.compartment}
    apart = [w for w in apart_wells(wells) if w in labelled]
    if not apart:
        return ()
    try:
        hub = network_layout(inputs, prepared).labels[0]
    except EngineError:
        return ()
    return tuple(w for w in apart if labelled[w] != hub)


def _assigned_note(fit: ModelFit, wells: tuple[str, ...]) -> ModelFit:
    """The network fit's first note (where its tanks came from) for wells assigned by the diagnosis."""
    note = (
        f"tank 2's pressure read from the surveys of {', '.join(wells)}, which stand apart from the "
        "other wells' trend (no compartment labels were given)"
    )
    return dataclasses.replace(fit, notes=(note, *fit.notes[1:]))


def field_pz_slope(inputs: FieldInputs, prepared: PreparedData):
    """d(p/z)/dp [1] of the field's own z at reservoir temperature, or None if no table can be
    made (the outlier test then stays in p/z units)."""
    try:
        table = field_pz_table(inputs, prepared)
    except EngineError:
        return None
    return table.dpz


@dataclass(frozen=True)
class _State:
    """What the data say before any model: trend, noise, outliers, depletion."""

    outliers: tuple[Outlier, ...]
    noise_psia: float | None
    keep: np.ndarray  # included points left after outliers and disagreeing wells
    depletion_frac: float | None


def _field_state(inputs, prepared, wells) -> _State:
    th = inputs.flag_thresholds
    pts = [p for p in prepared.points if p.included]
    odd = {f.well for f in wells if f.disagrees}
    outliers, noise, keep = _outliers(inputs, pts, odd, th.outlier_sigma)
    gp = np.array([p.gp_bscf for p in pts])
    pz = np.array([p.pz_psia for p in pts])
    w = np.array([p.weight for p in pts])
    depletion = None
    trend = None
    if keep.sum() >= 3:
        try:
            trend = robust_trend(gp[keep], pz[keep], w[keep], reject_sigma=th.outlier_sigma)
        except InsufficientDataError:  # one cumulative production: no trend, use the lowest p/z
            trend = None
    if trend is not None:
        depletion = 1.0 - float(trend(gp[keep].max())) / prepared.initial_pz_psia
    elif pts:
        depletion = 1.0 - float(min(pz)) / prepared.initial_pz_psia
    return _State(outliers, noise, keep, depletion)


def _cole_plots(inputs: FieldInputs, prepared: PreparedData) -> tuple[ColePlot, ...]:
    """The Cole plot (and its modified form) of the included surveys; none if it cannot be made."""
    if not any(p.included for p in prepared.points):
        return ()
    try:
        plain, modified = field_cole_plots(inputs, prepared)
    except EngineError:
        return ()
    return (plain,) if modified is None else (plain, modified)


def _evidence(inputs, prepared, state, comparison, wells, headline, cole, given_outliers, fits) -> Evidence:
    th = inputs.flag_thresholds
    pts = [p for p in prepared.points if p.included]
    outliers = state.outliers if given_outliers is None else tuple(given_outliers)
    keep, noise = state.keep, state.noise_psia
    gp = np.array([p.gp_bscf for p in pts])
    pz = np.array([p.pz_psia for p in pts])
    w = np.array([p.weight for p in pts])
    tol = max(th.above_initial_sigma * (noise or 0.0) * prepared.initial_z, th.above_initial_min_psia)
    above = tuple(
        (p.well, p.t_days, p.p_datum_psia) for p in pts if p.p_datum_psia > inputs.initial_pressure_psia + tol
    )
    return Evidence(
        n_surveys=len(pts),
        initial_pz_psia=prepared.initial_pz_psia,
        initial_pressure_psia=inputs.initial_pressure_psia,
        datum_depth_ft=inputs.datum_depth_ft,
        overpressure_mode=inputs.choices.overpressure_mode,
        depletion_frac=state.depletion_frac,
        dynamic_method=None if headline is None else headline.method,
        dynamic_giip_bscf=None if headline is None else headline.giip_bscf,
        dynamic_low_bscf=None if headline is None else headline.low_bscf,
        dynamic_high_bscf=None if headline is None else headline.high_bscf,
        dynamic_interval_kind=None if headline is None else headline.interval_kind,
        volumetric=inputs.volumetric,
        comparison=comparison,
        curvature=curvature_test(gp[keep], pz[keep], w[keep]) if keep.any() else None,
        wells=wells,
        water=water_trend(inputs),
        cole=cole,
        noise_psia=noise,
        outliers=outliers,
        above_initial=above,
        longest_survey_gap_days=_survey_gap(pts, prepared),
        longest_production_period_days=_longest_period(prepared),
        fluid_warnings=prepared.fluid_warnings,
        fitted_ce_per_psi=next((f.params.get("ce_per_psi") for f in fits if f.name == "tank_ce"), None),
    )


def _outliers(inputs, pts, odd_wells, reject_sigma):
    """Surveys off their compartment's robust trend (wells found disagreeing are left out:
    their offset is a finding of its own). Returns (outliers, pooled noise, kept mask)."""
    groups: dict[str | None, list[int]] = {}
    for i, p in enumerate(pts):
        if p.well not in odd_wells:
            groups.setdefault(p.compartment, []).append(i)
    keep = np.zeros(len(pts), bool)
    out, ss, dof = [], 0.0, 0
    for idx in groups.values():
        if len(idx) < 4:
            keep[idx] = True
            continue
        sub = [pts[i] for i in idx]
        try:
            trend = robust_trend(
                [p.gp_bscf for p in sub],
                [p.pz_psia for p in sub],
                [p.weight for p in sub],
                reject_sigma=reject_sigma,
            )
        except InsufficientDataError:  # no spread in Gp: no trend to be off from
            keep[idx] = True
            continue
        k = int(trend.kept.sum()) - trend.degree - 1
        ss, dof = ss + trend.sigma_psia**2 * k, dof + k
        for i, p, kept in zip(idx, sub, trend.kept, strict=True):
            keep[i] = kept
            if not kept:
                off = p.pz_psia - float(trend(p.gp_bscf))
                sig = abs(off) * math.sqrt(p.weight) / trend.sigma_psia
                kind = inputs.survey_text("survey_kind", p.index, "survey")
                out.append(Outlier(p.well, p.t_days, off, sig, kind, p.quality))
    noise = math.sqrt(ss / dof) if dof > 0 else None
    return tuple(out), noise, keep


def water_trend(inputs: FieldInputs, window: int = 12) -> WaterTrend | None:
    """Water-gas ratio of the first and last ``window`` producing periods [stb/MMscf]."""
    if inputs.production_water_stb is None:
        return None
    gas = np.asarray(inputs.production_gas_mscf, float)
    water = np.asarray(inputs.production_water_stb, float)
    on = gas > 0
    if on.sum() < 2 * min(window, 6):
        return None
    k = min(window, int(on.sum()) // 2)
    g, wat = gas[on], water[on]
    early = wat[:k].sum() / (g[:k].sum() / 1e3)
    late = wat[-k:].sum() / (g[-k:].sum() / 1e3)
    return WaterTrend(float(early), float(late))


def _survey_gap(pts, prepared) -> float | None:
    """Longest time without an included survey while the field produced [days]."""
    if not pts:
        return None
    ts = sorted((p.t_days, p.gp_bscf) for p in pts)
    gaps = [b[0] - a[0] for a, b in zip(ts, ts[1:], strict=False) if b[1] > a[1]]
    ends = prepared.production_end_t_days
    if len(ends) and prepared.cumulative_gas_bscf > ts[-1][1]:
        gaps.append(float(ends[-1]) - ts[-1][0])
    return max(gaps) if gaps else None


def _longest_period(prepared) -> float | None:
    ends = np.asarray(prepared.production_end_t_days, float)
    return float(np.diff(ends).max()) if ends.size > 1 else None
