"""The straight-line tank model behind every p/z estimate, with an optional constant ce.

    (p/z)_i [1 - ce (p_i_init - p_i)] = a + b Gp_i          (Ramagost & Farshad 1981)

with a = pi/zi (the line's ordinate at Gp = 0; fixed when the fit is anchored at the
initial point), b = -a/G, and ce the effective rock-and-water compressibility: 0 for a
volumetric tank (the plain p/z line), a given value, or fitted. The observable is p/z
itself, so the model predicts p/z_i = (a + b Gp_i)/f_i with f_i = 1 - ce (pi - p_i);
every variant is fitted to, and compared on, the same numbers. With ce fixed the model
is linear in (a, b); with ce fitted it is linear in (a, b) for each ce, and ce is found
by a bounded one-dimensional search on the profile sum of squares.

The correction factor uses the measured pressure, so a gauge error ε moves the residual
y − (a + b Gp)/f by [d(p/z)/dp + (p/z) ce/f] ε, not by d(p/z)/dp ε alone: at 9,000 psia, where
z rises with p and d(p/z)/dp is about 0.25, the second term (about 0.09 for ce = 1.7e-5) is
not small. Given the slope d(p/z)/dp at each survey (``pz_slope``), a fitted ce weighs each
survey by the effective variance (Orear 1982, Am. J. Phys. 50, 912, from memory):
w [s/(s + y ce/f)]², evaluated at the last estimate and held while ce is searched (two
reweighting passes), so the sum of squares is on the scale of the p/z noise alone and compares
with models that predict p/z without the measured pressure (engine 0.6.8; before, the
constant-ce tank read about 35 % more misfit than the same balance solved as a pot aquifer on
an overpressured forward-model field). Weights that moved with the trial ce let a misfit the
model cannot explain shrink with a large ce (a two-compartment field's tank ran to its ce bound).

Full parameter vector phi = (a, b, ce); the free parameters theta are a subset and
phi = A theta + phi0.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize_scalar

from ..errors import InsufficientDataError
from ..stats import LinearFit, linearised_fit, weighted_least_squares

#: Largest ce searched [1/psi]. Cumulative ce of overpressured rock can reach a few
#: 1e-5/psi (Fetkovich et al. 1998); beyond 1e-4 the "rock" would be an aquifer.
CE_SEARCH_MAX_PER_PSI = 1.0e-4
_GN_ITERATIONS = 4


@dataclass(frozen=True)
class TankLineFit:
    """A fitted tank line: free parameters, the full (a, b, ce) and their covariance."""

    names: tuple[str, ...]  # free parameters, from ("a", "b", "ce")
    theta: np.ndarray
    phi: np.ndarray  # (a, b, ce)
    phi_cov: np.ndarray  # 3 x 3; rows of fixed parameters are zero
    a_map: np.ndarray  # 3 x k: phi = a_map @ theta + phi0
    phi0: np.ndarray
    lin: LinearFit  # the fit (linearised at the solution when ce is fitted)
    ce_bounds: tuple[float, float]
    ce_at_bound: str | None  # "lower" or "upper" when the fitted ce hit its search bound

    @property
    def dof(self) -> int:
        return self.lin.dof


def _correction(ce, d):
    """f = 1 - ce (pi - p), broadcast over leading dimensions of ce."""
    return 1.0 - np.asarray(ce, float)[..., None] * d


#: Reweighting passes of the effective variance (the estimate moves by well under its standard
#: error after the second on the accuracy benchmark's overpressured fields).
REWEIGHTS = 2


def _effective(w, ce: float, y, d, slope):
    """Weights of the effective variance at one ce: w [s/(s + y ce/f)]² (module docstring)."""
    return w * (slope / (slope + y * ce / (1.0 - ce * d))) ** 2


def _ab_given_ce(ce, x, y, w, d, anchor, with_rss=True):
    """Best (a, b) and weighted RSS for each ce (vectorised over ce and/or samples of y).

    ``ce`` may be a scalar (one correction for every sample of y) or an array whose
    leading shape matches y's.
    """
    f = _correction(ce, d) if np.ndim(ce) else 1.0 - float(ce) * d
    u, v = 1.0 / f, x / f
    if anchor is None:
        suu, suv, svv = (w * u * u).sum(-1), (w * u * v).sum(-1), (w * v * v).sum(-1)
        suy, svy = _wsum(w * u, y), _wsum(w * v, y)
        det = suu * svv - suv**2
        a = (svv * suy - suv * svy) / det
        b = (suu * svy - suv * suy) / det
    else:
        b = (_wsum(w * v, y) - anchor * (w * v * u).sum(-1)) / (w * v * v).sum(-1)
        a = np.full(np.shape(b), float(anchor))
    if not with_rss:
        return a, b, None
    rss = (w * (y - a[..., None] * u - b[..., None] * v) ** 2).sum(-1)
    return a, b, rss


def _wsum(coef, y):
    """sum(coef * y) over the last axis; a matrix product when coef is shared by all rows."""
    return y @ coef if np.ndim(coef) == 1 else (coef * y).sum(-1)


def fit_tank_line(x, y, w, d, *, anchor=None, ce=0.0, ce_max=None, pz_slope=None) -> TankLineFit:
    """Fit the tank line to p/z observations.

    Parameters
    ----------
    x : array
        Cumulative gas at each survey, Gp [Bscf].
    y : array
        p/z at each survey [psia].
    w : array
        Relative weights (1/variance).
    d : array
        Pressure drop from initial, pi - p [psi]; only used when ce is not 0.
    anchor : float, optional
        pi/zi [psia] to force the line through (Gp = 0, pi/zi); free when None.
    ce : float or None
        Effective compressibility [1/psi]; None to fit it within [0, ce_max].
    ce_max : float, optional
        Upper search bound for a fitted ce [1/psi]; by default the smaller of
        ``CE_SEARCH_MAX_PER_PSI`` and 0.5/max(pi - p), so the correction factor stays
        above 0.5.
    pz_slope : array, optional
        d(p/z)/dp at each survey [1]: a fitted ce then weighs surveys by the effective
        variance (module docstring); without it, by ``w`` alone.

    Raises
    ------
    InsufficientDataError
        When every survey lies at one cumulative production (the slope b is not
        determined: e.g. all surveys predate first production).
    """
    x, y, w, d = (np.asarray(v, float) for v in (x, y, w, d))
    if x.size and float(np.ptp(x)) <= 1e-9 * max(float(np.abs(x).max()), 1.0):
        raise InsufficientDataError(
            f"all {x.size} surveys lie at one cumulative production ({x[0]:.6g} Bscf): "
            "a tank line needs surveys after different amounts of gas produced"
        )
    if ce is not None:
        return _fit_fixed(x, y, w, d, anchor, float(ce))
    hi = ce_max if ce_max is not None else min(CE_SEARCH_MAX_PER_PSI, 0.5 / max(float(d.max()), 1.0))
    c_hat, at_bound = _profile_ce(x, y, w, d, anchor, hi)
    if pz_slope is not None:
        # Effective variance, reweighted (Orear 1982): the weights are evaluated at the last
        # estimate and held while ce is searched, never moved with the trial ce (a trial ce
        # would otherwise shrink the weights of a misfit it cannot explain and run to its bound).
        s = np.asarray(pz_slope, float)
        for _ in range(REWEIGHTS):
            c_hat, at_bound = _profile_ce(x, y, _effective(w, c_hat, y, d, s), d, anchor, hi)
        w = _effective(w, c_hat, y, d, s)
    a, b, _ = _ab_given_ce(np.array(c_hat), x, y, w, d, anchor)
    phi = np.array([float(a), float(b), c_hat])
    return _linearise(x, y, w, d, anchor, phi, (0.0, hi), at_bound)


def _profile_ce(x, y, w, d, anchor, hi) -> tuple[float, str | None]:
    """(ce minimising the profile sum of squares with weights ``w`` on [0, hi], the bound it
    ended on or None): a 41-point grid, then a bounded search around its best point."""
    grid = np.linspace(0.0, hi, 41)
    _, _, rss = _ab_given_ce(grid, x, y, w, d, anchor)
    k = int(np.argmin(rss))
    lo_b, hi_b = grid[max(k - 1, 0)], grid[min(k + 1, grid.size - 1)]
    res = minimize_scalar(
        lambda c: float(_ab_given_ce(np.array(c), x, y, w, d, anchor)[2]),
        bounds=(lo_b, hi_b),
        method="bounded",
        options={"xatol": hi * 1e-9},
    )
    c_hat = float(res.x)
    if c_hat <= hi * 1e-6 + lo_b and k == 0:
        return 0.0, "lower"
    if k == grid.size - 1 and c_hat >= hi * (1 - 1e-6):
        return hi, "upper"
    return c_hat, None


def _free(anchor, fit_ce):
    names = (("a",) if anchor is None else ()) + ("b",) + (("ce",) if fit_ce else ())
    a_map = np.zeros((3, len(names)))
    for j, n in enumerate(names):
        a_map[("a", "b", "ce").index(n), j] = 1.0
    return names, a_map


def _fit_fixed(x, y, w, d, anchor, ce) -> TankLineFit:
    names, a_map = _free(anchor, False)
    f = 1.0 - ce * d
    if anchor is None:
        lin = weighted_least_squares(np.column_stack([1.0 / f, x / f]), y, w)
        a, b = lin.coef
    else:
        lin = weighted_least_squares((x / f)[:, None], y, w, offset=anchor / f)
        a, b = anchor, lin.coef[0]
    phi = np.array([a, b, ce], float)
    phi0 = phi - a_map @ lin.coef
    cov = a_map @ lin.cov @ a_map.T
    return TankLineFit(names, lin.coef, phi, cov, a_map, phi0, lin, (ce, ce), None)


def _jacobian(phi, x, d, names):
    a, b, ce = phi
    f = 1.0 - ce * d
    cols = {"a": 1.0 / f, "b": x / f, "ce": (a + b * x) * d / f**2}
    return np.column_stack([cols[n] for n in names])


def _linearise(x, y, w, d, anchor, phi, bounds, at_bound) -> TankLineFit:
    names, a_map = _free(anchor, True)
    a, b, ce = phi
    fitted = (a + b * x) / (1.0 - ce * d)
    theta = np.array([phi[("a", "b", "ce").index(n)] for n in names])
    lin = linearised_fit(_jacobian(phi, x, d, names), y, fitted, theta, w)
    phi0 = phi - a_map @ theta
    return TankLineFit(names, theta, phi, a_map @ lin.cov @ a_map.T, a_map, phi0, lin, bounds, at_bound)


def screen_design(x, y, w, d, *, anchor=None, ce=0.0):
    """(design, offset) of the linear model an outlier screen fits to subsets of surveys.

    With ce fixed the tank line is linear: design [1/f, Gp/f] (or [Gp/f] with the
    anchored offset (pi/zi)/f). With ce fitted it is linearised at the fit through all
    surveys (the tangent plane, including the ce column), so each subset fit is one
    small least-squares solve.
    """
    x, y, w, d = (np.asarray(v, float) for v in (x, y, w, d))
    if ce is not None:
        f = 1.0 - ce * d
        if anchor is None:
            return np.column_stack([1.0 / f, x / f]), None
        return (x / f)[:, None], anchor / f
    fit = fit_tank_line(x, y, w, d, anchor=anchor, ce=None)
    jac = _jacobian(fit.phi, x, d, fit.names)
    k = fit.names.index("ce")
    # tangent plane: y ~ fitted + J (theta - theta0) = J theta - J[:, ce] ce0 (fitted is linear in a, b)
    return jac, -jac[:, k] * fit.phi[2]


def predict_pz(phi, x, d):
    """p/z predicted by the tank line at cumulative gas x and pressure drop d [psia]."""
    a, b, ce = phi
    return (a + b * np.asarray(x, float)) / (1.0 - ce * np.asarray(d, float))


def modified_residuals(fit: TankLineFit, scale: float = 1.0) -> np.ndarray:
    """Leverage-adjusted, centred residuals of unit weight (Davison & Hinkley 1997, §6.2.3)."""
    lin = fit.lin
    u = lin.residual * np.sqrt(lin.weights) / np.sqrt(np.maximum(1.0 - lin.leverage, 1e-12))
    return scale * (u - u.mean())


def bootstrap_phi(fit: TankLineFit, x, y, w, d, anchor, *, samples: int, rng, scale: float) -> np.ndarray:
    """Residual bootstrap of the tank line: (samples x 3) draws of (a, b, ce).

    Each resample adds modified residuals, drawn with replacement and divided by
    sqrt(w), to the fitted p/z and refits. With ce fixed the refit is one matrix
    product; with ce fitted it is a projected chord iteration from the fitted values
    (ce kept inside its search bounds), finished by the exact (a, b) for the
    resample's ce. The fit's outlier screening is not repeated inside the resamples.
    """
    x, y, w, d = (np.asarray(v, float) for v in (x, y, w, d))
    e = modified_residuals(fit, scale) / np.sqrt(w)
    idx = rng.integers(0, x.size, size=(samples, x.size), dtype=np.int32)
    estar = e[idx]  # resampled residuals in p/z units, one resample per row
    lo, hi = fit.ce_bounds
    if lo == hi:
        # ce fixed: the estimate is linear in y, theta* = theta + M e* with M = (X'WX)^-1 X'W
        design = _jacobian(fit.phi, x, d, fit.names)
        m = np.linalg.solve(design.T @ (design * w[:, None]), (design * w[:, None]).T)
        theta = fit.theta + estar @ np.ascontiguousarray(m.T)
        return theta @ fit.a_map.T + fit.phi0
    ystar = fit.lin.fitted + estar
    ce = np.clip(_gauss_newton_ce(fit, x, ystar, w, d), lo, hi)
    a, b, _ = _ab_given_ce(ce, x, ystar, w, d, anchor, with_rss=False)
    return np.column_stack([a, b, ce])


def _gauss_newton_ce(fit: TankLineFit, x, ystar, w, d) -> np.ndarray:
    """Each resample's ce by chord (simplified Gauss-Newton) steps from the fitted values.

    The Jacobian is kept at the fit's solution, so every step for all resamples is one
    matrix product; the model is nearly linear in ce (f = 1 - ce (pi - p) stays near 1),
    so a few steps converge. Projected onto the search bounds after each step. The
    chord's fixed point differs from each resample's exact least-squares ce by about
    1 % of the bootstrap spread (checked against exact refits in the tests), well inside
    the resampling error of a percentile (about 5 % of the spread at 1000 resamples).
    """
    lo, hi = fit.ce_bounds
    jac = _jacobian(fit.phi, x, d, fit.names)
    mt = np.ascontiguousarray(np.linalg.solve(jac.T @ (jac * w[:, None]), (jac * w[:, None]).T).T)
    k = fit.names.index("ce")
    theta = np.broadcast_to(fit.theta, (ystar.shape[0], fit.theta.size)).copy()
    for _ in range(_GN_ITERATIONS):
        phi = theta @ fit.a_map.T + fit.phi0
        a, b, ce = phi[:, :1], phi[:, 1:2], phi[:, 2:3]
        theta += (ystar - (a + b * x) / (1.0 - ce * d)) @ mt
        theta[:, k] = np.clip(theta[:, k], lo, hi)
    return theta[:, k]
