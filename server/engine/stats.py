"""General statistics for the estimators: weighted least squares, ratio intervals
(delta method and Fieller), percentiles and residual diagnostics (outlier screening is
in :mod:`.outliers`).

Nothing here knows about gas: every function works on plain arrays, so the p/z line,
the overpressure fit, the aquifer and two-tank fits and the model comparison can share
one implementation.

References
----------
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
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from scipy import special

from .errors import InputRangeError, InsufficientDataError


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
    return float(special.stdtrit(dof, q))


# The distribution functions the estimators need, from scipy.special: the same functions
# scipy.stats evaluates (its t, F and normal distributions call them), without importing
# scipy.stats, which costs a new process about a second (issue 17).


def t_sf(x, dof):
    """Upper tail P(T_dof > x) of Student's t."""
    return special.stdtr(dof, -np.asarray(x, float))


def f_sf(f, dfn, dfd):
    """Upper tail P(F > f) of the F distribution with (dfn, dfd) degrees of freedom."""
    return special.fdtrc(dfn, dfd, f)


def norm_ppf(u):
    """Quantile of the standard normal distribution."""
    return special.ndtri(u)


def norm_cdf(z):
    """Cumulative standard normal distribution."""
    return special.ndtr(z)


def width_limit(sigma_limit: float, dof: int) -> float:
    """The offset, in estimated noise widths, with the tail probability that ``sigma_limit``
    widths have when the width is known: the t quantile at the fit's ``dof`` (Student 1908;
    a width estimated from few surveys is often small by chance, and 4 of its widths are then
    no rarer than 3 true ones). 4 widths: 4.8 at 24 degrees of freedom, 4.2 at 100."""
    tail = 2.0 * (1.0 - norm_cdf(sigma_limit))
    return max(sigma_limit, t_quantile(1.0 - tail / 2.0, dof))


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
        raise InputRangeError("weights must be positive and finite, one per observation")
    if not (np.all(np.isfinite(x)) and np.all(np.isfinite(y))):
        raise InputRangeError("observations and regressors must be finite")
    if n <= p:
        raise InsufficientDataError(f"{n} observations cannot fit {p} parameters with any scatter left")
    return x, y, w


def _qr(xw):
    q, r = np.linalg.qr(xw)
    d = np.abs(np.diag(r))
    if np.min(d) <= 1e-12 * np.max(d):
        raise InsufficientDataError(
            "the regressors are collinear: the parameters cannot be separated "
            "(e.g. every survey at one cumulative production)"
        )
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
