"""The Havlena-Odeh straight line with an aquifer: F/E_t = G + U · S/E_t.

S is the aquifer function at each point: Σ Δp_j W_D(t_D − t_Dj) for a van Everdingen-
Hurst aquifer of a given time constant (and r_eD), the Fetkovich sum for a given decay
rate, or p_i − p for a pot aquifer. The right aquifer model gives a straight line with
intercept G and slope U; a wrong one leaves curvature and structured residuals
(domain reference §2.2, §7.2).

References
----------
Havlena & Odeh (1963), JPT 15(8), 896-900, SPE-559-PA.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import fft as sp_fft

from ..errors import InsufficientDataError
from ..tank.balance_terms import COLE_MIN_DEPLETION_FRAC, HavlenaOdehTerms, havlena_odeh_terms
from .models import AquiferModelSpec
from .tank_solver import TankGrid


@dataclass(frozen=True)
class HavlenaOdehLine:
    """A fitted line F/E_t = G + U S/E_t."""

    giip_bscf: float
    giip_se_bscf: float
    u_rb_per_psi: float  # slope: the aquifer constant (U, or c_t W_i for pot/Fetkovich)
    u_se_rb_per_psi: float
    x_psia_mscf_per_rb: np.ndarray  # S/E_t
    y_bscf: np.ndarray  # F/E_t
    residual_bscf: np.ndarray
    weights: np.ndarray
    rss_weighted: float
    rms_bscf: float  # unweighted root-mean-square residual of F/E_t
    n_points: int


def weighted_lines(x, y, w):
    """Weighted least-squares lines y = a + b x_r for each row x_r of ``x``.

    Returns (a, b, weighted RSS, se_a, se_b), one entry per row; standard errors use the
    residual variance RSS/(n − 2) (weights are relative).
    """
    x = np.atleast_2d(np.asarray(x, float))
    sw = w.sum()
    xm = (x * w).sum(axis=1) / sw
    ym = (w * y).sum() / sw
    dx = x - xm[:, None]
    sxx = (w * dx * dx).sum(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        b = (w * dx * (y - ym)).sum(axis=1) / sxx
    a = ym - b * xm
    rss = (w * (y - a[:, None] - b[:, None] * x) ** 2).sum(axis=1)
    s2 = rss / max(x.shape[1] - 2, 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        se_b = np.sqrt(s2 / sxx)
        se_a = np.sqrt(s2 * (1.0 / sw + xm * xm / sxx))
    return a, b, rss, se_a, se_b


def havlena_odeh_aquifer_fit(terms: HavlenaOdehTerms, s_psia, *, weights=None) -> HavlenaOdehLine:
    """Least-squares line of F/E_t on S/E_t: intercept G [Bscf], slope U [rb/psi].

    Parameters
    ----------
    terms : HavlenaOdehTerms
        F and E_t at the points.
    s_psia : array
        Aquifer function S at the same points [psi] (We = U S).
    weights : array, optional
        Relative weights of F/E_t; ordinary least squares (the classic plot) when omitted.
        Survey noise in p/z gives F/E_t a standard deviation ∝ B_g/E_t, so
        weights ∝ (E_t/B_g)² make the fit efficient on noisy surveys.
    """
    et = terms.et_rb_per_mscf
    s = np.asarray(s_psia, float)
    if s.shape != et.shape:
        raise ValueError("s_psia must have one value per point of the terms")
    ok = et > 0
    if np.sum(ok) < 3:
        raise InsufficientDataError("fewer than 3 points with positive expansion: no line can be fitted")
    y = terms.f_rb[ok] / et[ok]  # Mscf
    x = s[ok] / et[ok]
    w = np.ones_like(x) if weights is None else np.asarray(weights, float)[ok]
    if not np.ptp(x) > 0:
        raise InsufficientDataError("no spread in the aquifer function: the line is undetermined")
    a, b, rss_, sa, sb = weighted_lines(x, y, w)
    intercept, slope, rss, se_a, se_b = float(a[0]), float(b[0]), float(rss_[0]), float(sa[0]), float(sb[0])
    resid = y - intercept - slope * x
    return HavlenaOdehLine(
        giip_bscf=intercept / 1e6,
        giip_se_bscf=se_a / 1e6,
        u_rb_per_psi=slope,
        u_se_rb_per_psi=se_b,
        x_psia_mscf_per_rb=x,
        y_bscf=y / 1e6,
        residual_bscf=resid / 1e6,
        weights=w,
        rss_weighted=rss / 1e12,
        rms_bscf=float(np.sqrt(np.mean(resid**2))) / 1e6,
        n_points=int(x.size),
    )


@dataclass(frozen=True)
class ScanStart:
    """The best Havlena-Odeh line of a scan: starting values for the history match."""

    giip_bscf: float
    strength_rb_per_psi: float  # the line's slope, clipped at zero
    rate: float | None  # time constant [1/day] (t_D per day, or Fetkovich's J p_i / Wei)
    red: float | None
    rss_weighted: float


def observed_pressure_history(grid: TankGrid) -> np.ndarray:
    """Tank pressure on the grid from the surveys' p/z, interpolated in time (starting values only)."""
    tab = grid.table
    later = grid.obs_t_days > 0
    t_obs, idx = np.unique(grid.obs_t_days[later], return_inverse=True)
    pz_obs = np.bincount(idx, grid.obs_pz_psia[later]) / np.bincount(idx)
    knots_t = np.concatenate([[0.0], t_obs])
    knots_pz = np.concatenate([[tab.pz(grid.initial_pressure_psia)], pz_obs])
    return tab.p_of_pz(np.interp(grid.t_days, knots_t, knots_pz))


def _observed_terms(grid: TankGrid):
    """Havlena-Odeh terms at the surveys, the points a line may use, and their weights."""
    tab = grid.table
    pi = grid.initial_pressure_psia
    p_obs = tab.p_of_pz(grid.obs_pz_psia)
    terms = havlena_odeh_terms(
        p_obs,
        grid.obs_gp_scf / 1e9,
        t_degF=grid.t_degF,
        initial_pressure_psia=pi,
        z=p_obs / grid.obs_pz_psia,
        initial_z=pi / tab.pz(pi),
        wp_stb=grid.obs_wp_rb,
        bw_rb_per_stb=1.0,
        ce_per_psi=grid.ce_per_psi,
        conditions=grid.conditions,
    )
    et = terms.et_rb_per_mscf
    ok = (grid.obs_t_days > 0) & (terms.depletion_frac >= COLE_MIN_DEPLETION_FRAC) & (et > 0)
    if np.sum(ok) < 3:
        raise InsufficientDataError("fewer than 3 depleted surveys: no Havlena-Odeh line")
    w = np.where(ok, grid.obs_weight * (np.where(ok, et, 1.0) / terms.bg_rb_per_mscf) ** 2, 0.0)
    return terms, ok, w


def _aquifer_functions(grid: TankGrid, spec: AquiferModelSpec, rates, red) -> np.ndarray:
    """S at the surveys (one row per time constant), from the observed pressure history."""
    drops = spec.influx.drops(grid.initial_pressure_psia, observed_pressure_history(grid))
    cols = spec.unit_columns(float(grid.t_days[0]), grid.n_steps, [r or 0.0 for r in rates], red)
    # The convolution by FFT, as scipy.signal.fftconvolve computes it (bit for bit, so the
    # scan's choices do not move), without importing scipy.signal (issue 17); scipy.fft is
    # loaded by scipy.optimize anyway.
    n = grid.n_steps + drops.size - 1
    nfft = sp_fft.next_fast_len(n, True)
    spectrum = sp_fft.rfftn(cols, [nfft], axes=[1]) * sp_fft.rfftn(drops[None, :], [nfft], axes=[1])
    s_grid = sp_fft.irfftn(spectrum, [nfft], axes=[1])[:, : grid.n_steps]
    return s_grid @ grid.obs_interp[:, 1:].T  # S(t_0) = 0


def havlena_odeh_scan(grid: TankGrid, spec: AquiferModelSpec, rates, reds=(None,)) -> ScanStart:
    """The best line F/E_t = G + s S/E_t over time constants (and r_eD), on the observed pressures.

    S is computed from the surveys' pressures interpolated on the grid; F and E_t at the
    surveys; weights ∝ survey weight × (E_t/B_g)², and surveys with less than
    :data:`..tank.balance_terms.COLE_MIN_DEPLETION_FRAC` depletion left out. Lines with a positive slope
    are preferred, then the smallest weighted residual.
    """
    terms, ok, w = _observed_terms(grid)
    et = terms.et_rb_per_mscf[ok]
    y = terms.f_rb[ok] / et
    rates = [None] if not spec.has_rate else list(rates)
    best = None
    for red in reds:
        s_obs = _aquifer_functions(grid, spec, rates, red)[:, ok]
        a, b, rss, _, _ = weighted_lines(s_obs / et, y, w[ok])
        for i in np.flatnonzero(np.isfinite(rss)):
            key = (b[i] < 0, rss[i])
            if best is None or key < best[0]:
                best = (key, ScanStart(a[i] / 1e6, max(float(b[i]), 0.0), rates[i], red, float(rss[i])))
    if best is None:
        raise InsufficientDataError("the aquifer function does not vary over the surveys: no line")
    return best[1]


def havlena_odeh_line_on_surveys(
    grid: TankGrid, spec: AquiferModelSpec, rate: float | None = None, red: float | None = None
) -> HavlenaOdehLine:
    """The Havlena-Odeh line of one aquifer model and time constant on a field's surveys (for a plot).

    Same data and weights as :func:`havlena_odeh_scan`; points not used carry weight 0.
    """
    terms, _, w = _observed_terms(grid)
    s_obs = _aquifer_functions(grid, spec, [rate], red)[0]
    return havlena_odeh_aquifer_fit(terms, s_obs, weights=w)
