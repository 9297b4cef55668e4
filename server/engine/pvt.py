"""Gas PVT: pseudo-critical properties, z-factor and formation volume factor.

References
----------
Dranchuk, P.M. and Abou-Kassem, J.H. (1975). Calculation of Z factors for natural
    gases using equations of state. J. Can. Pet. Technol. 14(3), 34-36.
    doi:10.2118/75-03-03
Sutton, R.P. (1985). Compressibility factors for high-molecular-weight reservoir
    gases. SPE-14265-MS.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import InputRangeError
from .units import OILFIELD_60F, StandardConditions, degR_from_degF

# Dranchuk & Abou-Kassem (1975) coefficients A1..A11.
_A = (0.3265, -1.0700, -0.5339, 0.01569, -0.05165, 0.5475, -0.7361, 0.1844, 0.1056, 0.6134, 0.7210)
#: Tpr range of the DAK fit (Dranchuk & Abou-Kassem 1975).
DAK_TPR_MIN = 1.0
DAK_TPR_MAX = 3.0
DAK_PPR_MAX = 30.0


@dataclass(frozen=True)
class GasFluid:
    """What the engine needs to know about a dry or wet gas."""

    gas_gravity: float  # air = 1
    y_co2_frac: float = 0.0
    y_h2s_frac: float = 0.0
    y_n2_frac: float = 0.0


def pseudo_critical_sutton(gas_gravity):
    """Pseudo-critical temperature and pressure of a hydrocarbon gas (Sutton 1985).

    Parameters
    ----------
    gas_gravity : float or array
        Gas specific gravity, air = 1. Stated range 0.57-1.68.

    Returns
    -------
    (tpc_degR, ppc_psia)

    References
    ----------
    Sutton (1985), SPE-14265-MS.
    """
    g = np.asarray(gas_gravity, dtype=float)
    if np.any(g <= 0):
        raise InputRangeError("gas gravity must be positive")
    tpc_degR = 169.2 + 349.5 * g - 74.0 * g**2
    ppc_psia = 756.8 - 131.0 * g - 3.6 * g**2
    return tpc_degR, ppc_psia


def _dak_terms(tpr):
    a1, a2, a3, a4, a5, a6, a7, a8, a9, a10, _ = _A
    c1 = a1 + a2 / tpr + a3 / tpr**3 + a4 / tpr**4 + a5 / tpr**5
    c2 = a6 + a7 / tpr + a8 / tpr**2
    c3 = a9 * (a7 / tpr + a8 / tpr**2)
    c4 = a10 / tpr**3
    return c1, c2, c3, c4


def _dak_z_of_rho(rho, c1, c2, c3, c4):
    a11 = _A[10]
    r2 = rho * rho
    e = np.exp(-a11 * r2)
    z = 1.0 + c1 * rho + c2 * r2 - c3 * r2 * r2 * rho + c4 * (1.0 + a11 * r2) * r2 * e
    dz = c1 + 2.0 * c2 * rho - 5.0 * c3 * r2 * r2 + c4 * e * 2.0 * rho * (1.0 + a11 * r2 - a11**2 * r2 * r2)
    return z, dz


def _check_reduced(ppr, tpr, tpr_min: float, name: str):
    if np.any(ppr < 0):
        raise InputRangeError(f"{name}: pseudo-reduced pressure must not be negative")
    if np.any(tpr < tpr_min):
        raise InputRangeError(
            f"{name}: pseudo-reduced temperature {np.nanmin(tpr):.3f} is below {tpr_min}; "
            "the correlation does not cover a gas this close to (or below) its pseudo-critical "
            "temperature"
        )


def z_factor_dranchuk_abou_kassem(ppr, tpr):
    """Gas deviation factor by the Dranchuk & Abou-Kassem (1975) equation of state.

    Solves the 11-constant equation for reduced density rho_r = 0.27 Ppr/(z Tpr)
    for every point at once: a coarse scan brackets the smallest (gas-like) root,
    then a bracketed Newton iteration polishes it.

    Parameters
    ----------
    ppr : float or array
        Pseudo-reduced pressure [-], 0 <= Ppr (fit range 0.2-30).
    tpr : float or array
        Pseudo-reduced temperature [-], fit range 1.0-3.0; below 1.0 raises.

    Returns
    -------
    z_factor : ndarray (or float for scalar input). NaN inputs give NaN.

    References
    ----------
    Dranchuk & Abou-Kassem (1975), JCPT 14(3), 34-36, doi:10.2118/75-03-03.
    """
    ppr_a, tpr_a = np.broadcast_arrays(np.asarray(ppr, float), np.asarray(tpr, float))
    scalar = ppr_a.ndim == 0
    ppr_a = np.atleast_1d(ppr_a).astype(float)
    tpr_a = np.atleast_1d(tpr_a).astype(float)
    _check_reduced(ppr_a[np.isfinite(ppr_a)], tpr_a[np.isfinite(tpr_a)], DAK_TPR_MIN, "DAK z-factor")
    z = np.full(ppr_a.shape, np.nan)
    ok = np.isfinite(ppr_a) & np.isfinite(tpr_a)
    zero = ok & (ppr_a == 0)
    z[zero] = 1.0
    work = ok & ~zero
    if np.any(work):
        z[work] = _solve_dak(ppr_a[work], tpr_a[work])
    return float(z[0]) if scalar else z


def _solve_dak(ppr, tpr):
    c1, c2, c3, c4 = _dak_terms(tpr)
    q = 0.27 * ppr / tpr  # F(rho) = rho*z(rho) - q; F(0) = -q < 0
    # Bracket the first sign change on a grid that is fine where roots live.
    grid = np.concatenate([np.geomspace(1e-4, 0.05, 6), np.linspace(0.1, 3.0, 30)])
    lo = np.zeros_like(q)
    hi = np.full_like(q, np.nan)
    found = np.zeros(q.shape, bool)
    prev = np.zeros_like(q)
    for r in grid:
        zr, _ = _dak_z_of_rho(r, c1, c2, c3, c4)
        fr = r * zr - q
        new = (~found) & (fr > 0)
        hi[new] = r
        lo[new] = prev[new]
        found |= new
        prev = np.where(found, prev, r)
        if found.all():
            break
    if not found.all():
        raise InputRangeError("DAK z-factor: no gas-like root found (pressure beyond the correlation)")
    rho = np.clip(q, lo, hi)
    rho = np.where((rho <= lo) | (rho >= hi), 0.5 * (lo + hi), rho)
    for _ in range(60):
        zr, dz = _dak_z_of_rho(rho, c1, c2, c3, c4)
        f = rho * zr - q
        df = zr + rho * dz
        lo = np.where(f < 0, rho, lo)
        hi = np.where(f > 0, rho, hi)
        step = np.where(df > 0, f / np.where(df > 0, df, 1.0), np.inf)
        cand = rho - step
        bad = ~((cand > lo) & (cand < hi))
        new = np.where(bad, 0.5 * (lo + hi), cand)
        if np.all(np.abs(new - rho) <= 1e-13 * np.maximum(rho, 1e-12)):
            rho = new
            break
        rho = new
    return q / rho


def z_factor(p_psia, t_degF, fluid: GasFluid, method: str = "dak"):
    """z-factor of a gas at pressure and temperature.

    Parameters
    ----------
    p_psia : float or array
        Absolute pressure [psia], >= 0.
    t_degF : float or array
        Temperature [degF].
    fluid : GasFluid
    method : {"dak"}

    Returns
    -------
    z_factor : float or ndarray
    """
    p = np.asarray(p_psia, float)
    if np.any(p < 0):
        raise InputRangeError("pressure must be absolute and not negative")
    tpc_degR, ppc_psia = pseudo_critical_sutton(fluid.gas_gravity)
    ppr = p / ppc_psia
    tpr = degR_from_degF(np.asarray(t_degF, float)) / tpc_degR
    if method == "dak":
        return z_factor_dranchuk_abou_kassem(ppr, tpr)
    raise ValueError(f"unknown z-factor method {method!r}")


def bg_rcf_per_scf(p_psia, t_degF, z, conditions: StandardConditions = OILFIELD_60F):
    """Gas formation volume factor Bg = (p_sc/T_sc) z T / p [reservoir ft3 per scf].

    Assumes z = 1 at standard conditions.
    """
    p = np.asarray(p_psia, float)
    if np.any(p <= 0):
        raise InputRangeError("pressure must be positive for Bg")
    return (
        conditions.p_sc_psia
        / conditions.t_sc_degR
        * np.asarray(z)
        * degR_from_degF(np.asarray(t_degF, float))
        / p
    )
