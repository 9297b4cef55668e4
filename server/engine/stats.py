"""General statistics for the estimators: weighted least squares, outlier tests,
ratio intervals (delta method and Fieller), percentiles and residual diagnostics.

Nothing here knows about gas: every function works on plain arrays, so the p/z line,
the overpressure fit, the aquifer and two-tank fits and the model comparison can share
one implementation.

References
----------
Cook, R.D. and Weisberg, S. (1982). *Residuals and Influence in Regression*. Chapman
    and Hall, ch. 2 (externally studentized residuals, the Bonferroni outlier test).
Fieller, E.C. (1954). Some problems in interval estimation. *J. R. Stat. Soc. B* 16(2),
    175-185 (confidence limits for a ratio).
Davison, A.C. and Hinkley, D.V. (1997). *Bootstrap Methods and their Application*.
    Cambridge University Press, §6.2 (residual resampling with leverage-adjusted residuals).
Wald, A. and Wolfowitz, J. (1940). On a test whether two samples are from the same
    population. *Ann. Math. Stat.* 11(2), 147-162 (the runs test).
(All from memory; the formulas are the textbook ones and are checked in the tests
against brute-force computations.)
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache
from statistics import NormalDist

import numpy as np
from scipy import stats as _st


@dataclass(frozen=True)
class Interval:
    """A two-sided interval; ``method`` says what kind it is (never mix kinds silently)."""

    low: float
    high: float
    method: str  # "delta", "fieller", "t", "bootstrap-percentile", ...
    level: float  # nominal coverage, e.g. 0.95

    def contains(self, value: float) -> bool:
        return self.low <= value <= self.high

    def shifted(self, offset: float) -> Interval:
        """The same interval moved by a known constant."""
        return Interval(self.low + offset, self.high + offset, self.method, self.level)


def t_multiplier(level: float, dof: int) -> float:
    """Two-sided Student-t multiplier: P(|T_dof| <= m) = level."""
    if not 0.0 < level < 1.0:
        raise ValueError(f"confidence level must lie strictly between 0 and 1, got {level}")
    if dof < 1:
        raise ValueError(f"a t multiplier needs at least 1 degree of freedom, got {dof}")
    return t_quantile(0.5 + 0.5 * level, dof)


@lru_cache(maxsize=4096)
def t_quantile(q: float, dof: int) -> float:
    """Quantile of Student's t (cached: estimators ask for the same few many times)."""
    return float(_st.t.ppf(q, dof))


@dataclass(frozen=True)
class LinearFit:
    """Weighted least squares y = offset + X beta; weights are relative 1/variance.

    ``sigma`` is the residual standard deviation of an observation of unit weight,
    estimated from the data (s^2 = sum w r^2 / dof); ``cov`` = s^2 (X'WX)^-1.
    """

    coef: np.ndarray
    cov: np.ndarray
    fitted: np.ndarray
    residual: np.ndarray
    leverage: np.ndarray
    weights: np.ndarray
    rss_weighted: float
    dof: int
    sigma: float

    @property
    def n_obs(self) -> int:
        return int(self.residual.size)


def weighted_least_squares(design, y, weights=None, offset=None) -> LinearFit:
    """Fit y = offset + design @ beta by (weighted) least squares.

    Parameters
    ----------
    design : array (n, p)
        Regressors; p < n.
    y : array (n,)
        Observations.
    weights : array (n,), optional
        Relative weights (1/variance up to a common factor); all 1 when omitted.
    offset : array (n,), optional
        A known part of the model (e.g. an anchored intercept), subtracted from y.
    """
    x, y, w = _checked(design, y, weights)
    yy = y if offset is None else y - np.asarray(offset, float)
    sw = np.sqrt(w)
    q, r = _qr(x * sw[:, None])
    coef = np.linalg.solve(r, q.T @ (yy * sw))
    fitted = x @ coef + (0.0 if offset is None else np.asarray(offset, float))
    return _finish(coef, q, r, y, fitted, w)


def linearised_fit(jacobian, y, fitted, coef, weights=None) -> LinearFit:
    """The :class:`LinearFit` of a nonlinear least-squares solution, linearised at it.

    ``jacobian`` is d(fitted)/d(coef) at the solution; leverage, covariance
    s^2 (J'WJ)^-1 and degrees of freedom follow as for a linear model (the usual
    asymptotic approximation).
    """
    x, y, w = _checked(jacobian, y, weights)
    q, r = _qr(x * np.sqrt(w)[:, None])
    return _finish(np.asarray(coef, float), q, r, y, np.asarray(fitted, float), w)


def _checked(design, y, weights):
    x = np.asarray(design, float)
    y = np.asarray(y, float)
    if x.ndim == 1:
        x = x[:, None]
    n, p = x.shape
    if y.shape != (n,):
        raise ValueError("design and observations differ in length")
    w = np.ones(n) if weights is None else np.asarray(weights, float)
    if w.shape != (n,) or np.any(~np.isfinite(w)) or np.any(w <= 0):
        raise ValueError("weights must be positive and finite, one per observation")
    if not (np.all(np.isfinite(x)) and np.all(np.isfinite(y))):
        raise ValueError("observations and regressors must be finite")
    if n <= p:
        raise ValueError(f"{n} observations cannot fit {p} parameters with any scatter left")
    return x, y, w


def _qr(xw):
    q, r = np.linalg.qr(xw)
    d = np.abs(np.diag(r))
    if np.min(d) <= 1e-12 * np.max(d):
        raise ValueError("the regressors are collinear: the parameters cannot be separated")
    return q, r


def _finish(coef, q, r, y, fitted, w) -> LinearFit:
    resid = y - fitted
    rss = float(np.sum(w * resid**2))
    dof = q.shape[0] - q.shape[1]
    s2 = rss / dof
    rinv = np.linalg.inv(r)
    return LinearFit(
        coef, s2 * (rinv @ rinv.T), fitted, resid, np.sum(q**2, axis=1), w, rss, dof, float(np.sqrt(s2))
    )


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
        coef = np.linalg.solve(xm.T @ xm, xm.T @ yw[mask])  # p <= 3 columns: normal equations
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
    v = np.linalg.inv(jk.T @ (jk * w[keep, None]))  # (J'WJ)^-1 over the kept points
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

    The rule: a survey is set aside when its prediction residual from the line through
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


def ratio_delta_se(num, den, var_num, var_den, cov_nd) -> float:
    """Delta-method standard error of num/den."""
    rho = num / den
    var = (var_num - 2.0 * rho * cov_nd + rho**2 * var_den) / den**2
    return float(np.sqrt(max(var, 0.0)))


def fieller_ratio_interval(num, den, var_num, var_den, cov_nd, t: float, level: float) -> Interval | None:
    """Fieller's confidence interval for the ratio rho = num/den of two normal estimates.

    The set of rho with (num - rho den)^2 <= t^2 var(num - rho den). It is a finite
    interval only when den differs significantly from zero (den^2 > t^2 var(den));
    otherwise the data cannot bound the ratio and None is returned.
    """
    a = den**2 - t**2 * var_den
    if a <= 0:
        return None
    b = num * den - t**2 * cov_nd
    c = num**2 - t**2 * var_num
    disc = max(b * b - a * c, 0.0)
    root = np.sqrt(disc)
    lo, hi = (b - root) / a, (b + root) / a
    return Interval(float(lo), float(hi), "fieller", level)


def percentiles_with_inf(samples, probabilities) -> np.ndarray:
    """Percentiles (linear interpolation) of samples that may contain +inf or NaN.

    NaN samples are dropped; +inf sorts last, and a percentile that touches an
    infinite sample is infinite (the data cannot bound it).
    """
    s = np.sort(np.asarray(samples, float)[~np.isnan(samples)])
    if s.size == 0:
        return np.full(len(probabilities), np.nan)
    pos = np.asarray(probabilities, float) * (s.size - 1)
    lo = np.floor(pos).astype(int)
    hi = np.minimum(lo + 1, s.size - 1)
    frac = pos - lo
    out = np.where(np.isinf(s[hi]) | np.isinf(s[lo]), np.inf, 0.0)
    finite = ~np.isinf(out)
    out[finite] = s[lo[finite]] + frac[finite] * (s[hi[finite]] - s[lo[finite]])
    return out


@dataclass(frozen=True)
class Percentiles:
    """A distribution summarised the reserves way: P90 is the value exceeded with
    90 % probability (the 10th percentile), P50 the median, P10 exceeded with 10 %
    probability (the 90th percentile) (SPE-PRMS 2018 probabilistic convention)."""

    p90: float
    p50: float
    p10: float
    method: str
    n_samples: int


def p90_p50_p10(samples, method: str) -> Percentiles:
    """P90, P50 and P10 of a sample (percentiles 10, 50, 90)."""
    p = percentiles_with_inf(samples, (0.10, 0.50, 0.90))
    return Percentiles(float(p[0]), float(p[1]), float(p[2]), method, int(np.size(samples)))


@dataclass(frozen=True)
class RunsTest:
    """Wald-Wolfowitz runs test of residual signs (in the order given)."""

    n_runs: int
    n_positive: int
    n_negative: int
    expected_runs: float
    z: float
    p_value: float  # two-sided; small means residuals are structured, not random


def runs_test(residuals) -> RunsTest | None:
    """Runs test on the signs of residuals ordered along the fit's x-axis.

    Too few runs means systematic curvature (a missing mechanism); too many means
    alternation. Zeros are dropped. Normal approximation; None when either sign has
    fewer than 2 members (the test has no power there).
    """
    r = np.asarray(residuals, float)
    s = np.sign(r[r != 0])
    n1, n2 = int(np.sum(s > 0)), int(np.sum(s < 0))
    if n1 < 2 or n2 < 2:
        return None
    runs = 1 + int(np.sum(s[1:] != s[:-1]))
    n = n1 + n2
    mu = 2.0 * n1 * n2 / n + 1.0
    var = 2.0 * n1 * n2 * (2.0 * n1 * n2 - n) / (n**2 * (n - 1))
    z = (runs - mu) / np.sqrt(var)
    return RunsTest(runs, n1, n2, mu, float(z), math.erfc(abs(z) / math.sqrt(2.0)))
