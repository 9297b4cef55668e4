"""The p/z straight line of a volumetric gas tank.

    p/z = (p_i/z_i) (1 - G_p/G)

(mole balance of a closed tank with constant gas pore volume; e.g. Craft & Hawkins,
Applied Petroleum Reservoir Engineering, ch. "Single-phase gas reservoirs").
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import InsufficientDataError


@dataclass(frozen=True)
class PzLine:
    """A fitted p/z line: p/z = intercept + slope * Gp."""

    intercept_psia: float
    slope_psia_per_bscf: float
    n_points: int

    @property
    def giip_bscf(self) -> float:
        """x-intercept of the line (p/z = 0)."""
        return -self.intercept_psia / self.slope_psia_per_bscf

    def gp_at_pz_bscf(self, pz_psia: float) -> float:
        """Cumulative production at which the line reaches a given p/z."""
        return (pz_psia - self.intercept_psia) / self.slope_psia_per_bscf


def fit_pz_line(gp_bscf, pz_psia, weights=None) -> PzLine:
    """Least-squares line of p/z (dependent) on cumulative gas Gp.

    Parameters
    ----------
    gp_bscf : array
        Cumulative gas produced at each survey [Bscf].
    pz_psia : array
        p/z at each survey [psia].
    weights : array, optional
        Relative weights (1/variance); ordinary least squares when omitted.

    Raises
    ------
    InsufficientDataError
        Fewer than two points, no spread in Gp, or a line that does not decline.
    """
    x = np.asarray(gp_bscf, float)
    y = np.asarray(pz_psia, float)
    if x.shape != y.shape or x.ndim != 1:
        raise ValueError("gp_bscf and pz_psia must be 1-D arrays of equal length")
    if x.size < 2:
        raise InsufficientDataError(f"{x.size} usable survey(s): at least 2 are needed for a line")
    if not (np.all(np.isfinite(x)) and np.all(np.isfinite(y))):
        raise ValueError("gp_bscf and pz_psia must be finite")
    w = np.ones_like(x) if weights is None else np.asarray(weights, float)
    if np.ptp(x) <= 0:
        raise InsufficientDataError("all surveys are at the same cumulative production")
    xm = np.sum(w * x) / np.sum(w)
    ym = np.sum(w * y) / np.sum(w)
    slope = np.sum(w * (x - xm) * (y - ym)) / np.sum(w * (x - xm) ** 2)
    if slope >= 0:
        raise InsufficientDataError(
            f"p/z does not fall with production (slope {slope:+.2f} psia/Bscf): no tank volume "
            "can be extrapolated"
        )
    return PzLine(float(ym - slope * xm), float(slope), int(x.size))


def recovery_factor_volumetric(pz_abandon_psia: float, pz_initial_psia: float) -> float:
    """RF = 1 - (p/z)_a / (p/z)_i for a volumetric tank [fraction of GIIP]."""
    return 1.0 - pz_abandon_psia / pz_initial_psia
