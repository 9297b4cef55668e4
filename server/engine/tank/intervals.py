"""Intervals of the numbers derived from a tank line: GIIP, EUR, recovery factor and
remaining gas (delta method, Fieller, bootstrap percentiles), and the line's band.

Every derived number is a ratio of two affine functions of the line's parameters
phi = (a, b, ce), so one routine gives all three kinds of interval for each
(domain-reference §2.7; Fieller 1954).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..stats import Interval, Percentiles, fieller_ratio_interval, p90_p50_p10, ratio_delta_se
from .line import TankLineFit


@dataclass(frozen=True)
class Uncertainty:
    """How well one derived number is known. ``ci_*`` are confidence intervals at the
    estimate's confidence level; ``bootstrap`` holds P90/P50/P10 (an 80 % range)."""

    se: float
    ci_delta: Interval
    ci_fieller: Interval | None  # None: the data cannot bound the number at this level
    bootstrap: Percentiles | None


@dataclass(frozen=True)
class LineBand:
    """The fitted (corrected) p/z line with its pointwise confidence band."""

    gp_bscf: np.ndarray
    line_psia: np.ndarray
    low_psia: np.ndarray
    high_psia: np.ndarray
    level: float


def derived_ratios(pz_a: float, dpa: float) -> dict:
    """Numerator and denominator of G, EUR and RF as affine maps of phi = (a, b, ce).

    G = -a/b, EUR = (c - a)/b and RF = (a - c)/a, with c = (p/z)_a [1 - ce (pi - pa)]
    the (corrected) abandonment ordinate; each map is (gradient, constant).
    """
    k = pz_a * dpa
    return {
        "giip": ((np.array([-1.0, 0, 0]), 0.0), (np.array([0, 1.0, 0]), 0.0)),
        "eur": ((np.array([-1.0, 0, -k]), pz_a), (np.array([0, 1.0, 0]), 0.0)),
        "rf": ((np.array([1.0, 0, k]), -pz_a), (np.array([1.0, 0, 0]), 0.0)),
    }


def ratio_uncertainty(fit, num, den, t, level, phi_star, shift=0.0, unbounded_if_rising=True):
    """(value, Uncertainty) of num/den (+ a known shift) from a fit and its bootstrap draws.

    Delta-method and Fieller intervals use the fit's covariance of (a, b, ce); the
    bootstrap percentiles use the draws ``phi_star`` (samples x 3), None for none.
    """
    (gn, cn), (gd, cd) = num, den
    n_val, d_val = gn @ fit.phi + cn, gd @ fit.phi + cd
    cov = fit.phi_cov
    vn, vd, cnd = gn @ cov @ gn, gd @ cov @ gd, gn @ cov @ gd
    value = n_val / d_val
    se = ratio_delta_se(n_val, d_val, vn, vd, cnd)
    ci = Interval(value - t * se + shift, value + t * se + shift, "delta", level)
    fieller = fieller_ratio_interval(n_val, d_val, vn, vd, cnd, t, level)
    boot = None
    if phi_star is not None:
        ns, ds = phi_star @ gn + cn, phi_star @ gd + cd
        samples = ns / ds
        if unbounded_if_rising:  # a resample whose line does not fall has no finite volume
            samples = np.where(phi_star[:, 1] < 0, samples, np.inf)
        boot = p90_p50_p10(samples + shift, "residual bootstrap")
    return value + shift, Uncertainty(float(se), ci, fieller.shifted(shift) if fieller else None, boot)


def line_band(fit: TankLineFit, giip_u: Uncertainty, eur, t, level) -> LineBand:
    """The fitted line on Gp from 0 past GIIP's upper limit, with its confidence band."""
    a, b, _ = fit.phi
    giip = -a / b
    hi = giip_u.ci_fieller.high if giip_u.ci_fieller else 1.5 * giip
    gp = np.linspace(0.0, max(min(hi, 3.0 * giip), giip, eur), 61)
    c = fit.phi_cov
    var = c[0, 0] + 2 * gp * c[0, 1] + gp**2 * c[1, 1]
    line = a + b * gp
    half = t * np.sqrt(np.maximum(var, 0.0))
    return LineBand(gp, line, line - half, line + half, level)
