"""z-factor correlations in pseudo-reduced form, solved for every point at once.

Both equations of state are solved for a reduced density by a safeguarded Newton
iteration over whole arrays: each point keeps a bracket [lo, hi] with F(lo) < 0 < F(hi)
and falls back to bisection whenever a Newton step would leave it, so every point
converges. Above Tpr = 1.05 the reduced pressure is a strictly increasing function of
the reduced density for both equations (checked on a dense grid, see
``tests/engine/pvt/test_zfactor.py``), so the root is unique. Nearer the critical
isotherm an equation can have three roots; there the bracket is taken at the first
sign change of a scan from zero density upward, which selects the smallest root, the
gas-like one.

References
----------
Dranchuk, P.M. and Abou-Kassem, J.H. (1975). Calculation of Z factors for natural
    gases using equations of state. J. Can. Pet. Technol. 14(3), 34-36.
    doi:10.2118/75-03-03
Hall, K.R. and Yarborough, L. (1973). A new equation of state for Z-factor
    calculations. Oil & Gas Journal, June 1973.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputRangeError

# Dranchuk & Abou-Kassem (1975) coefficients A1..A11.
_A = (0.3265, -1.0700, -0.5339, 0.01569, -0.05165, 0.5475, -0.7361, 0.1844, 0.1056, 0.6134, 0.7210)

#: Validated pseudo-reduced ranges (DAK 1975 fit range; HY is used over the same range,
#: with its authors' error statistics excluding Tpr <= 1.15).
TPR_MIN = 1.0
TPR_MAX = 3.0
PPR_MAX = 30.0
DAK_TPR_MIN, DAK_TPR_MAX, DAK_PPR_MAX = TPR_MIN, TPR_MAX, PPR_MAX  # names used by older callers

#: Below this Tpr a scan picks the gas-like root among possibly several.
_MONOTONE_TPR = 1.05
#: Convergence: the last Newton step is below this fraction of the root. Newton then
#: converges quadratically, so the value returned (after that step) is good to about
#: (1e-8)^2 times F''/F' - far below 1e-12 (the tests check 1e-11 against mpmath).
_TOL = 1e-8
_MAX_ITER = 100


def _range_error(name, what, value, allowed):
    return InputRangeError(f"{name}: pseudo-reduced {what} {value:.4g} is {allowed}")


def _reduced_inputs(ppr, tpr, name):
    """Broadcast, validate and flatten (ppr, tpr); returns NaN mask or None if no NaN."""
    ppr_a, tpr_a = np.broadcast_arrays(np.asarray(ppr, float), np.asarray(tpr, float))
    shape = ppr_a.shape
    ppr_f, tpr_f = ppr_a.ravel(), tpr_a.ravel()
    if ppr_f.size == 0:
        return shape, ppr_f, tpr_f, None
    # fmin/fmax reductions skip NaN without copying the arrays.
    p_lo, p_hi = np.fmin.reduce(ppr_f), np.fmax.reduce(ppr_f)
    t_lo, t_hi = np.fmin.reduce(tpr_f), np.fmax.reduce(tpr_f)
    if np.isinf(p_hi) or np.isinf(p_lo) or np.isinf(t_hi) or np.isinf(t_lo):
        raise InputRangeError(f"{name}: pseudo-reduced pressure and temperature must be finite")
    if p_lo < 0:
        raise _range_error(name, "pressure", p_lo, "negative; pressures must be absolute and not negative")
    if p_hi > PPR_MAX:
        raise _range_error(
            name, "pressure", p_hi, f"above {PPR_MAX:g}, beyond the range the correlation was fitted to"
        )
    if t_lo < TPR_MIN or t_hi > TPR_MAX:
        bad = t_lo if t_lo < TPR_MIN else t_hi
        raise _range_error(
            name,
            "temperature",
            bad,
            f"outside {TPR_MIN}-{TPR_MAX}; the correlation does not cover a gas this close to (or below) "
            "its pseudo-critical temperature, nor one this far above it",
        )
    nan = np.isnan(ppr_f) | np.isnan(tpr_f)
    return shape, ppr_f, tpr_f, (nan if nan.any() else None)


def _solve_all(ppr, tpr, name, solve):
    """Shared driver: validation, NaN and zero-pressure handling, reshaping."""
    shape, ppr_f, tpr_f, nan = _reduced_inputs(ppr, tpr, name)
    zero = ppr_f == 0
    if nan is None and not zero.any():
        z = solve(ppr_f, tpr_f) if ppr_f.size else np.empty(0)  # the common case: no copies
    else:
        z = np.full(ppr_f.shape, np.nan)
        if nan is not None:
            zero &= ~nan
        z[zero] = 1.0  # ideal gas at vanishing pressure
        work = ~zero if nan is None else ~(zero | nan)
        if work.any():
            z[work] = solve(ppr_f[work], tpr_f[work])
    return float(z[0]) if shape == () else z.reshape(shape)


def _newton(make_fdf, ppr, tpr, x, lo, hi):
    """Bracketed Newton on arrays: F(lo) < 0 < F(hi), F increasing near the root.

    Converged points drop out: whenever the unconverged set has shrunk to a quarter,
    the iteration continues on that subset only (from a good start most points finish
    after two evaluations).
    """
    x = np.array(x, float)
    act = None  # None: all points active
    fdf = make_fdf(ppr, tpr)
    xa, loa, hia = x, lo, hi
    for _ in range(_MAX_ITER):
        f, df = fdf(xa)
        loa = np.where(f < 0, xa, loa)
        hia = np.where(f > 0, xa, hia)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = f / df
        cand = xa - step
        done = np.abs(step) <= _TOL * xa
        # Inclusive bounds: a converged point may sit on its own bracket end. NaN steps
        # (df == 0) fail the test and bisect.
        inside = done | ((cand >= loa) & (cand <= hia))
        xa = cand if inside.all() else np.where(inside, cand, 0.5 * (loa + hia))
        n_left = xa.size - int(np.count_nonzero(done))
        if n_left == 0 or n_left * 4 <= xa.size:
            if act is None:
                x = xa
            else:
                x[act] = xa
            if n_left == 0:
                return x
            keep = ~done
            act = np.flatnonzero(keep) if act is None else act[keep]
            xa, loa, hia = xa[keep], loa[keep], hia[keep]
            fdf = make_fdf(ppr[act], tpr[act])
    raise InputRangeError("z-factor solver did not converge")  # pragma: no cover - safeguarded


def _first_sign_change(fdf, grid, n):
    """(lo, hi) around the first upward sign change of F along ``grid`` for n points."""
    lo = np.zeros(n)
    hi = np.full(n, np.nan)
    found = np.zeros(n, bool)
    prev = np.zeros(n)
    for x in grid:
        f, _ = fdf(np.full(n, x))
        new = ~found & (f > 0)
        hi[new] = x
        lo[new] = prev[new]
        found |= new
        prev[~found] = x
        if found.all():
            break
    return lo, hi, found


class _StartTable:
    """Reduced density on a (Tpr, Ppr) grid, interpolated bilinearly as a Newton start.

    Built once per equation (about 38,000 nodes, a few tens of milliseconds) with the
    same safeguarded solver from an ideal-gas start. The start is typically within
    5e-6 of the root (1e-3 for 99 % of points over Tpr 1.05-3, more near Tpr 1.05), so
    most points finish after two Newton evaluations instead of up to forty.
    """

    T0, DT, NT = _MONOTONE_TPR, 0.0125, 157  # Tpr 1.05 .. 3.0
    DP, NP = 0.125, 241  # Ppr 0 .. 30

    def __init__(self, make_fdf, x0, hi_monotone):
        tg, pg = np.meshgrid(
            self.T0 + self.DT * np.arange(self.NT), self.DP * np.arange(self.NP), indexing="ij"
        )
        tg, pg = tg.ravel(), np.maximum(pg.ravel(), 1e-3)
        hi = hi_monotone(pg, tg)
        self.x = _newton(make_fdf, pg, tg, np.minimum(x0(pg, tg), 0.5 * hi), np.zeros(tg.size), hi)

    def __call__(self, ppr, tpr):
        ft = (tpr - self.T0) * (1.0 / self.DT)
        i = np.clip(ft.astype(np.intp), 0, self.NT - 2)
        wt = ft - i
        fp = ppr * (1.0 / self.DP)
        j = np.clip(fp.astype(np.intp), 0, self.NP - 2)
        wp = fp - j
        k = i * self.NP + j
        x = self.x
        v00, v01, v10, v11 = x[k], x[k + 1], x[k + self.NP], x[k + self.NP + 1]
        return v00 + wp * (v01 - v00) + wt * ((v10 - v00) + wp * (v11 - v10 - v01 + v00))


_START_TABLES: dict[str, _StartTable] = {}


def _solve(ppr, tpr, make_fdf, x0, hi_monotone, scan_grid, name):
    """Gas-like root of F(x) = 0 for every point (x a reduced density)."""
    near = tpr < _MONOTONE_TPR
    any_near = bool(near.any())
    x = np.empty_like(ppr)
    if not near.all():
        table = _START_TABLES.get(name)
        if table is None:
            table = _START_TABLES[name] = _StartTable(make_fdf, x0, hi_monotone)
        p_far, t_far = (ppr[~near], tpr[~near]) if any_near else (ppr, tpr)
        hi = hi_monotone(p_far, t_far)
        start = np.clip(table(p_far, t_far), 1e-9 * hi, hi)
        x_far = _newton(make_fdf, p_far, t_far, start, np.zeros(p_far.size), hi)
        if not any_near:
            return x_far
        x[~near] = x_far
    p_near, t_near = ppr[near], tpr[near]
    lo, hi, found = _first_sign_change(make_fdf(p_near, t_near), scan_grid, p_near.size)
    if not found.all():
        raise InputRangeError(f"{name}: no gas-like root found (pressure beyond the correlation)")
    x[near] = _newton(make_fdf, p_near, t_near, 0.5 * (lo + hi), lo, hi)
    return x


# --- Dranchuk & Abou-Kassem -------------------------------------------------------------


def _dak_fdf(ppr, tpr):
    """F(rho) = rho Z(rho) - 0.27 Ppr/Tpr and dF/drho, with the Tpr terms computed once.

    rho Z = rho + c1 rho^2 + c2 rho^3 - c3 rho^6 + c4 (1 + a11 rho^2) rho^3 exp(-a11 rho^2),
    evaluated in Horner form (this function is most of the solver's cost).
    """
    a1, a2, a3, a4, a5, a6, a7, a8, a9, a10, a11 = _A
    it = 1.0 / tpr
    c1 = a1 + it * (a2 + it * it * (a3 + it * (a4 + it * a5)))
    c2 = a6 + it * (a7 + it * a8)
    c3 = a9 * it * (a7 + it * a8)
    c4 = a10 * it**3
    c1x2, c2x3, c3x6 = 2.0 * c1, 3.0 * c2, 6.0 * c3
    q = 0.27 * ppr * it

    def fdf(rho):
        r2 = rho * rho
        r3 = r2 * rho
        u = a11 * r2
        g = c4 * np.exp(-u) * r2
        f = rho * (1.0 + rho * (c1 + rho * (c2 - c3 * r3))) + g * rho * (1.0 + u) - q
        df = 1.0 + rho * (c1x2 + rho * (c2x3 - c3x6 * r3)) + g * (3.0 + u * (3.0 - 2.0 * u))
        return f, df

    return fdf


def _dak_hi(ppr, tpr):
    # z >= 0.2 wherever Tpr >= 1.05 and Ppr <= 30 (dense-grid check in the tests), so the
    # root lies below rho = q/0.2; F is increasing there, hence F(hi) >= 0.
    return 0.27 * ppr / tpr / 0.2


def z_factor_dranchuk_abou_kassem(ppr, tpr):
    """Gas deviation factor by the Dranchuk & Abou-Kassem (1975) equation of state.

    Solves the 11-constant equation for the reduced density rho_r = 0.27 Ppr/(z Tpr)
    for every point at once (safeguarded Newton; gas-like root near Tpr = 1).

    Parameters
    ----------
    ppr : float or array
        Pseudo-reduced pressure [-], 0 <= Ppr <= 30 (fit range 0.2-30; lower values
        tend correctly to the ideal gas).
    tpr : float or array
        Pseudo-reduced temperature [-], 1.0 <= Tpr <= 3.0.

    Returns
    -------
    z_factor : float for scalar input, else ndarray of the broadcast shape.
        NaN where an input is NaN; an empty input gives an empty array.

    Raises
    ------
    InputRangeError
        Negative or infinite Ppr, Ppr above 30, or Tpr outside 1.0-3.0.

    Notes
    -----
    The fit is poorest (errors of several per cent against the Standing-Katz chart)
    for 1.0 <= Tpr <= 1.1 with 1 <= Ppr <= 3.

    References
    ----------
    Dranchuk & Abou-Kassem (1975), JCPT 14(3), 34-36, doi:10.2118/75-03-03.
    """
    return _solve_all(ppr, tpr, "DAK z-factor", _solve_dak)


def _solve_dak(ppr, tpr):
    grid = np.concatenate([np.geomspace(1e-4, 0.05, 6), np.linspace(0.1, 3.0, 30), [4.0, 6.0]])
    rho = _solve(ppr, tpr, _dak_fdf, lambda p, t: 0.27 * p / t, _dak_hi, grid, "DAK z-factor")
    return 0.27 * ppr / (tpr * rho)


# --- Hall & Yarborough ------------------------------------------------------------------


def _hy_coefficients(tpr):
    t = 1.0 / tpr
    a = 0.06125 * t * np.exp(-1.2 * (1.0 - t) ** 2)
    b = t * (14.76 - 9.76 * t + 4.58 * t * t)
    c = t * (90.7 - 242.2 * t + 42.4 * t * t)
    d = 2.18 + 2.82 * t
    return a, b, c, d


def _hy_fdf(ppr, tpr):
    """f(y) of Hall & Yarborough and df/dy, y the reduced density (0 < y < 1)."""
    a, b, c, d = _hy_coefficients(tpr)
    ap, b2 = a * ppr, 2.0 * b

    def fdf(y):
        om = 1.0 - y
        om3 = om * om * om
        cyd = c * np.exp(d * np.log(y))  # C y^D
        # (y + y^2 + y^3 - y^4) and its derivative (1 + 4y + 4y^2 - 4y^3 + y^4), Horner form
        num = y * (1.0 + y * (1.0 + y * (1.0 - y)))
        dnum = 1.0 + y * (4.0 + y * (4.0 + y * (y - 4.0)))
        f = num / om3 - b * y * y + cyd - ap
        df = dnum / (om3 * om) - b2 * y + d * cyd / y
        return f, df

    return fdf


def z_factor_hall_yarborough(ppr, tpr):
    """Gas deviation factor by the Hall & Yarborough (1973) equation of state.

    Solves f(y) = -A Ppr + (y + y^2 + y^3 - y^4)/(1 - y)^3 - B y^2 + C y^D = 0 for the
    reduced density y (0 < y < 1) for every point at once; z = A Ppr / y.

    Parameters
    ----------
    ppr : float or array
        Pseudo-reduced pressure [-], 0 <= Ppr <= 30 (chart range to 15; the authors
        state the equation extrapolates beyond it).
    tpr : float or array
        Pseudo-reduced temperature [-], 1.0 <= Tpr <= 3.0 (recommended 1.2-3.0: the
        authors' error statistics exclude the 1.05-1.15 isotherms).

    Returns
    -------
    z_factor : float for scalar input, else ndarray. NaN where an input is NaN.

    Raises
    ------
    InputRangeError
        Negative or infinite Ppr, Ppr above 30, or Tpr outside 1.0-3.0.

    References
    ----------
    Hall & Yarborough (1973), Oil & Gas Journal, June 1973.
    """
    return _solve_all(ppr, tpr, "Hall-Yarborough z-factor", _solve_hy)


def _solve_hy(ppr, tpr):
    grid = np.concatenate([np.geomspace(1e-5, 0.02, 6), np.linspace(0.03, 0.99, 49)])
    y = _solve(
        ppr,
        tpr,
        _hy_fdf,
        lambda p, t: _hy_coefficients(t)[0] * p,  # ideal-gas start, z = 1
        lambda p, t: np.full(p.shape, 1.0),  # f -> +inf as y -> 1
        grid,
        "Hall-Yarborough z-factor",
    )
    return _hy_coefficients(tpr)[0] * ppr / y
