"""Surveys off the straight line that the best-ranked model explains are not data errors.

The outlier candidates come from a trend that assumes one model: the p/z estimate's line
(its Bonferroni rule sets them aside) or, when the line is refused, each compartment's
robust trend. On a field the line does not describe (an aquifer lifts the late p/z, a
neighbouring tank bends it) the survey the line misses most is often the truest one: the
initial survey above a line flattened by influx is the usual case. Before such a survey is
reported as a data-quality finding, it is held against the model the data rank first
(AICc): only a survey that is off that model too, by the same number of noise widths, is
kept as an outlier. Judging a residual against the model that best describes the data is
common practice in regression diagnostics (no single source).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from ..modelfit import ModelFit
from ..prepare.points import PreparedData
from ..stats import width_limit
from ..tank.pz_screen import BEFORE_PRODUCTION_BSCF
from .compare import ModelComparison
from .flags import Outlier

#: A model whose residual scatter exceeds the field trends' by more than this factor does not
#: describe the data well enough to excuse a survey (common practice: about the 1 % point of an
#: F ratio for a few dozen surveys, rounded).
ADEQUATE_NOISE_RATIO = 2.0


def off_the_best_model(
    outliers: Sequence[Outlier],
    comparison: ModelComparison | None,
    fits: Sequence[ModelFit],
    prepared: PreparedData,
    sigma_limit: float,
    noise_psia: float | None,
    pz_slope=None,
) -> tuple[Outlier, ...]:
    """The candidates that lie more than ``sigma_limit`` noise widths off the best-ranked model
    (:func:`off_the_fit`); without a ranked model every candidate is kept."""
    best = _best_fit(comparison, fits)
    kept = off_the_fit(outliers, best, prepared, sigma_limit, noise_psia, pz_slope)
    return tuple(o for o in kept if not _matches_the_record(o, prepared, sigma_limit, noise_psia))


def _matches_the_record(o: Outlier, prepared: PreparedData, sigma_limit: float, noise_psia) -> bool:
    """A survey taken before any gas was produced that agrees, within ``sigma_limit`` noise
    widths, with the field's stated initial p/z [psia] is the initial state the record
    corroborates, not a data error, whatever the models fitted without it say: on a field with
    strong aquifer support a line, and models fitted to the surveys that line kept, pass well
    below it (the p/z fall is steep before the aquifer responds). A discovery reading that
    disagrees with the stated initial pressure stays an outlier (common practice: the initial
    pressure is the best-documented pressure of a field)."""
    if noise_psia is None or noise_psia <= 0:
        return False
    point = next((p for p in prepared.points if p.well == o.well and p.t_days == o.t_days), None)
    if point is None or point.gp_bscf > BEFORE_PRODUCTION_BSCF:
        return False
    off = abs(point.pz_psia - prepared.initial_pz_psia) * math.sqrt(point.weight) / noise_psia
    return off < sigma_limit


def off_the_fit(
    outliers: Sequence[Outlier],
    best: ModelFit | None,
    prepared: PreparedData,
    sigma_limit: float,
    noise_psia: float | None,
    pz_slope=None,
) -> tuple[Outlier, ...]:
    """The candidates that lie more than ``sigma_limit`` noise widths off the model ``best``,
    fitted to the included surveys of ``prepared``.

    ``pz_slope``: d(p/z)/dp [1] of the field's gas at reservoir temperature, as a function of
    pressure [psia]. A gauge's scatter is in pressure; in p/z it is that scatter times the
    slope, which varies by up to about half across a depletion (z falls, then rises, with
    pressure): a late survey at the bottom of the z curve carries more p/z scatter than the
    field's pooled width says. With the slope, residuals are divided by it and judged in
    pressure units (first-order propagation of the gauge's error; the same test otherwise);
    without it, in p/z units.

    A candidate the model was fitted to is judged by its residual there, against the width of
    the other surveys' residuals sqrt((RSS_w − e_i²) / (n − k − 1)); one that was set aside
    before the fit is judged against the model's fitted p/z [psia] interpolated in
    cumulative production [Bscf] among the same well's fitted surveys (all surveys when the
    well has fewer than two; the end segments' lines beyond the ends), with the width
    sqrt(RSS_w / (n − k)). Widths are scaled by the survey's weight; the limit is
    :func:`width_limit` at their degrees of freedom. Without a model, or when the model does
    not describe the data (its noise width more than :data:`ADEQUATE_NOISE_RATIO` times the
    scatter about the field's robust trends, ``noise_psia``: a model that misses everything
    explains nothing), every candidate is kept."""
    if best is None or not outliers:
        return tuple(outliers)
    dof = best.n_obs - best.n_params
    if dof <= 0 or best.rss_psia2 <= 0:
        return tuple(outliers)
    sigma = math.sqrt(best.rss_psia2 / dof)
    if noise_psia is None or sigma > ADEQUATE_NOISE_RATIO * noise_psia:
        return tuple(outliers)
    included = [p for p in prepared.points if p.included]
    fitted = np.asarray(best.fitted_pz_psia, float)
    if fitted.size != len(included):
        return tuple(outliers)
    slope = _slope_at(pz_slope)
    s = np.array([slope(p.p_datum_psia) for p in included])
    if not (np.all(np.isfinite(s)) and np.all(s > 0)):
        slope = _slope_at(None)
        s = np.ones(len(included))
    pz = np.array([p.pz_psia for p in included])
    w = np.array([p.weight for p in included])
    e2 = w * ((pz - fitted) / s) ** 2  # weighted squared residuals, in pressure units
    rss = float(np.sum(e2))
    index = {(p.well, p.t_days): i for i, p in enumerate(included)}
    by_key = {(p.well, p.t_days): p for p in prepared.points}
    kept = []
    for o in outliers:
        point = by_key.get((o.well, o.t_days))
        if point is None:
            kept.append(o)
            continue
        # A survey in the fit is judged against the others' scatter (its own residual left
        # out of the width: the externally studentised residual, leverage neglected).
        j = index.get((o.well, o.t_days))
        rest, d = (rss - float(e2[j]), dof - 1) if j is not None else (rss, dof)
        if d <= 0 or rest <= 0:
            kept.append(o)
            continue
        predicted = _predicted(point, included, fitted)
        off = abs(point.pz_psia - predicted) / slope(point.p_datum_psia)
        if off * math.sqrt(point.weight) / math.sqrt(rest / d) >= width_limit(sigma_limit, d):
            kept.append(o)
    return tuple(kept)


def _slope_at(pz_slope):
    """d(p/z)/dp at a pressure as a float (1 everywhere without a slope function)."""
    if pz_slope is None:
        return lambda p: 1.0
    return lambda p: float(pz_slope(float(p)))


def _best_fit(comparison: ModelComparison | None, fits: Sequence[ModelFit]) -> ModelFit | None:
    if comparison is None or not comparison.rows:
        return None
    return next((f for f in fits if f.name == comparison.rows[0].name), None)


def _predicted(point, included, fitted: np.ndarray) -> float:
    """The model's p/z at ``point`` [psia]: its fitted value there, or interpolated."""
    for i, p in enumerate(included):
        if p is point or (p.well == point.well and p.t_days == point.t_days):
            return float(fitted[i])
    same = [i for i, p in enumerate(included) if p.well == point.well]
    idx = same if len(same) >= 2 else list(range(len(included)))
    gp = np.array([included[i].gp_bscf for i in idx])
    order = np.argsort(gp, kind="stable")
    x, y = gp[order], fitted[idx][order]
    x0 = float(point.gp_bscf)
    if x.size >= 2 and (x0 < x[0] or x0 > x[-1]):
        a, b = (0, 1) if x0 < x[0] else (-2, -1)
        if x[b] > x[a]:
            return float(y[a] + (y[b] - y[a]) * (x0 - x[a]) / (x[b] - x[a]))
    return float(np.interp(x0, x, y))
