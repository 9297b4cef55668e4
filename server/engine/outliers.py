"""Outlier screening for least-squares fits: a Bonferroni rule on prediction residuals,
with a forward search so that several gross errors cannot mask each other.

General (no gas): the p/z line, the overpressure fit and any other model that can be
fitted to a subset of its observations can use it.

References
----------
Cook, R.D. and Weisberg, S. (1982). *Residuals and Influence in Regression*. Chapman
    and Hall, ch. 2 (externally studentized residuals, the Bonferroni outlier test).
Hadi, A.S. and Simonoff, J.S. (1993). Procedures for the identification of multiple
    outliers in linear models. *J. Am. Stat. Assoc.* 88(424), 1264-1272.
Atkinson, A.C. and Riani, M. (2000). *Robust Diagnostic Regression Analysis*. Springer.
(All from memory; the statistics are checked in the tests against brute-force refits.)
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache
from statistics import NormalDist

import numpy as np

from .stats import LinearFit, t_quantile


@dataclass(frozen=True)
class OutlierTest:
    """One observation set aside: tested against the fit through the observations kept."""

    index: int  # position in the arrays given to the screen
    residual: float  # observed minus the fit through the kept observations
    studentized: float  # residual / its prediction standard error; ~ t(dof) for a good point
    threshold: float  # |studentized| above this is an outlier
    n_tested: int  # number of tests the Bonferroni limit allows for


@dataclass(frozen=True)
class OutlierScreen:
    keep: np.ndarray  # bool mask of observations kept
    outliers: tuple[OutlierTest, ...]  # worst first
    stopped_reason: str | None  # why nothing (more) was set aside, if a limit was reached


@dataclass(frozen=True)
class SubsetFit:
    """A model fitted to a subset, evaluated at every observation (for outlier screens)."""

    jacobian: np.ndarray  # (n, p): d(fitted)/d(parameters) at the subset's solution
    residual: np.ndarray  # (n,): observed minus fitted
    weights: np.ndarray  # (n,): relative 1/variance


def linear_subset_fits(design, y, weights, offset=None) -> Callable[[np.ndarray], SubsetFit]:
    """``fit_subset`` for a linear model y = offset + design @ beta (weighted least squares)."""
    x = np.asarray(design, float)
    y = np.asarray(y, float)
    w = np.asarray(weights, float)
    yy = y if offset is None else y - np.asarray(offset, float)
    sw = np.sqrt(w)
    xw, yw = x * sw[:, None], yy * sw

    def fit_subset(mask):
        xm = xw[mask]
        try:
            coef = np.linalg.solve(xm.T @ xm, xm.T @ yw[mask])  # p <= 3 columns: normal equations
        except np.linalg.LinAlgError:  # a subset at one Gp: the minimum-norm solution
            coef = np.linalg.lstsq(xm, yw[mask], rcond=None)[0]
        return SubsetFit(x, yy - x @ coef, w)

    return fit_subset


def externally_studentized(fit: LinearFit) -> tuple[np.ndarray, np.ndarray]:
    """(studentized, deleted residual) for each observation of a weighted fit.

    t_i = e_i sqrt(w_i) / (s_(i) sqrt(1 - h_ii)), where s_(i) is the scatter of the fit
    without observation i; under normal errors t_i ~ t(n - p - 1) (Cook & Weisberg 1982).
    The deleted residual e_i / (1 - h_ii) is observation i minus the fit to the others.
    """
    n, p = fit.n_obs, fit.n_obs - fit.dof
    h = np.minimum(fit.leverage, 1.0 - 1e-12)
    e = fit.residual
    r_int = e * np.sqrt(fit.weights) / (fit.sigma * np.sqrt(1.0 - h)) if fit.sigma > 0 else np.zeros_like(e)
    inner = np.maximum(n - p - r_int**2, 1e-300)
    return r_int * np.sqrt((n - p - 1) / inner), e / (1.0 - h)


def _deletion_statistics(fit: SubsetFit, keep: np.ndarray, variance_factor: float = 1.0):
    """Each observation against the fit through the *other* kept observations.

    Kept i: the externally studentized residual, ~ t(m - p - 1). Not kept i: the
    prediction residual over its standard error s sqrt(1/w_i + J_i V J_i'), ~ t(m - p).
    ``variance_factor`` scales the kept points' scatter (the consistency correction of
    a trimmed subset). Returns (statistic, dof) arrays.
    """
    jac, r, w = fit.jacobian, fit.residual, fit.weights
    m, p = int(keep.sum()), jac.shape[1]
    sw = np.sqrt(w)
    jk = jac[keep]
    try:
        v = np.linalg.inv(jk.T @ (jk * w[keep, None]))  # (J'WJ)^-1 over the kept points
    except np.linalg.LinAlgError:  # kept points at one Gp: the pseudo-inverse
        v = np.linalg.pinv(jk.T @ (jk * w[keep, None]))
    h = w * np.sum((jac @ v) * jac, axis=1)
    s2 = float(np.sum(w[keep] * r[keep] ** 2)) / (m - p) * variance_factor
    u = r * sw
    stat = np.empty_like(r)
    dof = np.where(keep, m - p - 1, m - p)
    hk = np.minimum(h[keep], 1.0 - 1e-12)
    r_int = u[keep] / np.sqrt(max(s2, 1e-300) * (1.0 - hk))
    stat[keep] = r_int * np.sqrt((m - p - 1) / np.maximum(m - p - r_int**2, 1e-300))
    stat[~keep] = u[~keep] / np.sqrt(max(s2, 1e-300) * (1.0 + h[~keep]))
    return stat, dof


def robust_outlier_screen(
    fit_subset: Callable[[np.ndarray], SubsetFit],
    n_obs: int,
    n_params: int,
    *,
    alpha: float = 0.05,
    max_fraction: float = 0.2,
    min_keep: int = 3,
    max_iterations: int = 20,
    protected=None,
) -> OutlierScreen:
    """Find gross errors by a Bonferroni rule that one bad point cannot hide another from.

    The rule: an observation is set aside when its prediction residual from the line through
    the m used surveys, over that residual's standard error, exceeds
    t_{1 - alpha/(2n)}(m - p): the two-sided Bonferroni limit over all n surveys, so a
    normal sample loses any good point with probability about ``alpha`` (Cook &
    Weisberg 1982). With a single gross error this is the classical externally
    studentized residual test.

    Several similar errors can inflate the scatter together and mask each other from
    that test, so the candidates are found robustly first, in the manner of a forward
    search (Hadi & Simonoff 1993, J. Am. Stat. Assoc. 88(424), 1264-1272; Atkinson &
    Riani 2000; both from memory): start from the half of the points that fit best (a
    least-trimmed-squares subset refined by concentration steps) and grow it, always
    adding the point closest to the line through the subset, until even the closest
    remaining point lies beyond t_{1 - alpha/(2(s+1))}(s - p); the scatter of a subset
    of the s best of n points is corrected for trimming (the variance of a normal
    truncated to its central s/n). The points left out are only candidates: each is
    then confirmed by the rule above against the line through all the other points,
    and re-admitted otherwise (repeated until nothing changes).

    Nothing is set aside, and ``stopped_reason`` says why, when the rule would remove
    more than ``max_fraction`` of the points or leave fewer than ``min_keep`` (scatter
    that large is not a few bad gauges and must not be "cleaned" silently), or when
    there are too few points to test (n - p - 1 < 2).

    ``fit_subset(mask)`` fits the model to the observations where mask is True and
    returns it evaluated at all n observations (:class:`SubsetFit`). Observations
    marked ``protected`` are always kept (the caller has a reason not to treat them
    as isolated errors).
    """
    everyone = np.ones(n_obs, bool)
    guard = np.zeros(n_obs, bool) if protected is None else np.asarray(protected, bool)
    if n_obs - n_params - 1 < 2:
        return OutlierScreen(
            everyone, (), f"too few points to test for outliers ({n_obs}; at least {n_params + 3} needed)"
        )
    keep = _forward_search(fit_subset, n_obs, n_params, alpha, guard, max_iterations)
    # confirm each candidate against the line through all the other points
    limit = t_quantile(1.0 - alpha / (2.0 * n_obs), 1)
    for _ in range(max_iterations):
        if keep.all():
            return OutlierScreen(everyone, (), None)
        fit = fit_subset(keep)
        stat, _ = _deletion_statistics(fit, keep)
        limit = t_quantile(1.0 - alpha / (2.0 * n_obs), int(keep.sum()) - n_params)
        back = ~keep & (np.abs(stat) <= limit)
        if not back.any():
            break
        keep = keep | back
    out_idx = np.flatnonzero(~keep)
    max_out = int(np.floor(max_fraction * n_obs))
    if out_idx.size > max_out or n_obs - out_idx.size < min_keep:
        return OutlierScreen(
            everyone,
            (),
            f"{out_idx.size} of {n_obs} points lie beyond the outlier limit, more than the rule may set "
            f"aside (at most {max_out}, keeping at least {min_keep}): none were removed",
        )
    tests = [OutlierTest(int(i), float(fit.residual[i]), float(stat[i]), limit, n_obs) for i in out_idx]
    tests.sort(key=lambda o: -abs(o.studentized))
    return OutlierScreen(keep, tuple(tests), None)


def _forward_search(fit_subset, n, p, alpha, guard, max_iterations) -> np.ndarray:
    """Candidate clean set: a least-trimmed-squares start grown while the closest point fits."""
    h = max((n + p + 1) // 2, p + 2)
    keep = np.ones(n, bool)
    for _ in range(max_iterations):  # concentration steps towards the h best-fitting points
        fit = fit_subset(keep)
        u = np.abs(fit.residual) * np.sqrt(fit.weights)
        new = np.zeros(n, bool)
        new[np.argsort(u, kind="stable")[:h]] = True
        new |= guard
        if np.array_equal(new, keep):
            break
        keep = new
    while True:
        s = int(keep.sum())
        if s == n:
            return keep
        stat, _ = _deletion_statistics(fit_subset(keep), keep, 1.0 / _trimmed_variance_frac(s / n))
        outside = np.flatnonzero(~keep)
        a = np.abs(stat[outside])
        limit = t_quantile(1.0 - alpha / (2.0 * (s + 1)), s - p)
        if a.min() > limit:
            return keep
        keep = keep.copy()
        keep[outside[np.argmin(a)]] = True
        keep[outside[a <= min(2.0, limit)]] = True  # clearly consistent points: add together


@lru_cache(maxsize=4096)
def _trimmed_variance_frac(q: float) -> float:
    """Variance of a standard normal truncated to its central fraction q (1 at q = 1)."""
    if q >= 1.0:
        return 1.0
    z = NormalDist().inv_cdf(0.5 + 0.5 * q)
    return 1.0 - 2.0 * z * math.exp(-0.5 * z * z) / math.sqrt(2.0 * math.pi) / q
