"""Diagnose one field: run every available model fit, compare them, raise the flags.

:func:`diagnose_field` is the one call: each fitter returns ModelFits on the same
included surveys; a fitter that cannot run (too few surveys, a refused input) is listed
with its reason rather than failing the field. The evidence the flag rules read
(:class:`.flags.Evidence`) is gathered here from the prepared data, the fits and the
wells.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
from scipy import stats

from .compare import ModelComparison, compare_models, curvature_test
from .errors import EngineError, InsufficientDataError
from .flag_rules import raise_flags
from .flags import ColeTrend, Evidence, Flag, Outlier, WaterTrend
from .inputs import FieldInputs
from .modelfit import ModelFit
from .prepare import PreparedData
from .pz import fit_pz_line
from .tanks_fit import fit_two_tank
from .wells import WellFinding, robust_trend, well_disagreements

Fitter = Callable[[FieldInputs, PreparedData], "ModelFit | Sequence[ModelFit]"]


@dataclass(frozen=True)
class Diagnosis:
    gp_bscf: np.ndarray  # the included surveys every model is fitted to, in their order
    pz_psia: np.ndarray
    models: tuple[ModelFit, ...]
    skipped: tuple[tuple[str, str], ...]  # (model, why it was not fitted)
    comparison: ModelComparison | None
    wells: tuple[WellFinding, ...]
    evidence: Evidence
    flags: tuple[Flag, ...]


def single_tank_fit(prepared: PreparedData, confidence_level: float = 0.95) -> ModelFit:
    """The volumetric p/z line as a ModelFit (weighted least squares, delta-method interval).

    Stands in until :mod:`.pz` provides its own ``single_tank`` ModelFit.
    """
    _, gp, pz, w = prepared.arrays()
    if gp.size < 3:
        raise InsufficientDataError("a single-tank fit with an interval needs at least 3 surveys")
    line = fit_pz_line(gp, pz, w)
    a, b = line.intercept_psia, line.slope_psia_per_bscf
    fitted = a + b * gp
    r = pz - fitted
    n = gp.size
    rss = float(np.sum(w * r**2))
    x = np.column_stack([np.ones(n), gp]) * np.sqrt(w)[:, None]
    cov = rss / (n - 2) * np.linalg.inv(x.T @ x)
    g = -a / b
    grad = np.array([-1.0 / b, a / b**2])
    se_g = math.sqrt(max(grad @ cov @ grad, 0.0))
    t = stats.t.ppf(0.5 + 0.5 * confidence_level, n - 2)
    se = np.sqrt(np.diag(cov))
    return ModelFit(
        name="single_tank",
        title="Single volumetric tank (p/z line)",
        n_params=2,
        n_obs=n,
        rss_psia2=rss,
        residual_pz_psia=r,
        fitted_pz_psia=fitted,
        giip_bscf=g,
        giip_low_bscf=g - t * se_g,
        giip_high_bscf=g + t * se_g,
        params={"initial_pz_psia": a, "slope_psia_per_bscf": b},
        param_se={"initial_pz_psia": float(se[0]), "slope_psia_per_bscf": float(se[1])},
        correlation=cov / np.outer(se, se),
    )


DEFAULT_FITTERS: tuple[tuple[str, Fitter], ...] = (
    ("single_tank", lambda i, p: single_tank_fit(p, i.choices.confidence_level)),
    ("two_tank", lambda i, p: fit_two_tank(i, p)),
)


def diagnose_field(
    inputs: FieldInputs,
    prepared: PreparedData,
    *,
    fitters: Sequence[tuple[str, Fitter]] = DEFAULT_FITTERS,
    dynamic: ModelFit | None = None,
    cole: ColeTrend | None = None,
    outliers: tuple[Outlier, ...] | None = None,
) -> Diagnosis:
    """Fit every available model to one field, compare them and raise the flags.

    Parameters
    ----------
    inputs, prepared : the field's inputs and prepared p/z points.
    fitters : sequence of (name, callable)
        Each callable takes (inputs, prepared) and returns one ModelFit or several.
    dynamic : ModelFit, optional
        The headline dynamic estimate held against the volumetric range; the
        single-tank fit when omitted.
    cole : ColeTrend, optional
        The Cole-plot trend from the aquifer analysis.
    outliers : tuple of Outlier, optional
        Surveys the estimate's own outlier rule set aside (they are then no longer among
        the included points); when omitted, outliers are found from the robust trend.
    """
    th = inputs.flag_thresholds
    fits: list[ModelFit] = []
    skipped = []
    for name, fitter in fitters:
        try:
            out = fitter(inputs, prepared)
        except EngineError as exc:
            skipped.append((name, str(exc)))
            continue
        fits.extend([out] if isinstance(out, ModelFit) else out)
    _, gp, pz, w = prepared.arrays()
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
    wells = well_disagreements(
        prepared,
        k_sigma=th.well_disagreement_sigma,
        min_points=th.well_min_points,
        near_initial_ratio=th.near_initial_ratio,
    )
    if dynamic is None:
        dynamic = next((f for f in fits if f.name == "single_tank"), None)
    evidence = _evidence(inputs, prepared, comparison, wells, dynamic, cole, outliers)
    return Diagnosis(
        gp, pz, tuple(fits), tuple(skipped), comparison, wells, evidence, raise_flags(evidence, th)
    )


def _evidence(inputs, prepared, comparison, wells, dynamic, cole, given_outliers) -> Evidence:
    th = inputs.flag_thresholds
    pts = [p for p in prepared.points if p.included]
    odd = {f.well for f in wells if f.disagrees}
    outliers, noise, keep = _outliers(inputs, pts, odd, th.outlier_sigma)
    if given_outliers is not None:
        outliers = tuple(given_outliers)
    gp = np.array([p.gp_bscf for p in pts])
    pz = np.array([p.pz_psia for p in pts])
    w = np.array([p.weight for p in pts])
    depletion = None
    if keep.sum() >= 3:
        trend = robust_trend(gp[keep], pz[keep], w[keep], reject_sigma=th.outlier_sigma)
        depletion = 1.0 - float(trend(gp[keep].max())) / prepared.initial_pz_psia
    elif pts:
        depletion = 1.0 - float(min(pz)) / prepared.initial_pz_psia
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
        depletion_frac=depletion,
        dynamic_method=None if dynamic is None else dynamic.name,
        dynamic_giip_bscf=None if dynamic is None else dynamic.giip_bscf,
        dynamic_low_bscf=None if dynamic is None else dynamic.giip_low_bscf,
        dynamic_high_bscf=None if dynamic is None else dynamic.giip_high_bscf,
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
        trend = robust_trend(
            [p.gp_bscf for p in sub],
            [p.pz_psia for p in sub],
            [p.weight for p in sub],
            reject_sigma=reject_sigma,
        )
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
