"""A laboratory z (or Bg) table at reservoir temperature, interpolated monotonically.

Lab data (constant-composition or constant-volume depletion at reservoir temperature)
are the best z a field can have, so a table takes precedence over the correlations
when the engineer chooses it. Between the measured pressures z is interpolated with a
monotone piecewise-cubic Hermite interpolant (PCHIP): it passes through every point,
never overshoots between two of them, and keeps the minimum of the z(p) curve where
the data put it. Outside the measured range there is no data: by default that is an
error; the caller may instead ask for the correlation's shape scaled to meet the
table at its end (and must say so to the user, see :attr:`LabZTable.outside`).

References
----------
Fritsch, F.N. and Carlson, R.E. (1980). Monotone piecewise cubic interpolation.
    SIAM J. Numer. Anal. 17(2), 238-246 (the PCHIP used by scipy).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.interpolate import PchipInterpolator

from ..errors import InputRangeError
from ..units import OILFIELD_60F, StandardConditions, degR_from_degF

OUTSIDE_MODES = ("error", "scaled_correlation")


class LabTableRangeError(InputRangeError):
    """A pressure lies outside the laboratory table and extrapolation was not allowed."""


def z_from_bg(bg_rcf_per_scf, p_psia, t_degF, conditions: StandardConditions = OILFIELD_60F):
    """z from a measured Bg: z = Bg p / (T p_sc/T_sc) (the inverse of Bg's definition)."""
    return (
        np.asarray(bg_rcf_per_scf, float)
        * np.asarray(p_psia, float)
        / (degR_from_degF(t_degF) * conditions.bg_coefficient_rcf_per_scf)
    )


@dataclass(frozen=True)
class LabZTable:
    """z(p) at reservoir temperature from laboratory points.

    Parameters
    ----------
    pressure_psia : array
        Measured pressures [psia], > 0, at least two, no repeats (any order).
    z_factor : array
        z at those pressures [-], 0.1 < z < 3.
    outside : {"error", "scaled_correlation"}
        What to do below the lowest or above the highest pressure.
    correlation : callable, optional
        z(p) at the same temperature; needed for ``"scaled_correlation"``, where
        z(p) = z_corr(p) z_lab(p_end) / z_corr(p_end) beyond each end.
    """

    pressure_psia: np.ndarray
    z_factor: np.ndarray
    outside: str = "error"
    correlation: object = None
    _pchip: PchipInterpolator = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        p = np.asarray(self.pressure_psia, float).ravel()
        z = np.asarray(self.z_factor, float).ravel()
        if p.size != z.size:
            raise InputRangeError(f"lab table: {p.size} pressures but {z.size} z values")
        if p.size < 2:
            raise InputRangeError("lab table: at least two points are needed to interpolate")
        if not (np.all(np.isfinite(p)) and np.all(np.isfinite(z))):
            raise InputRangeError("lab table: every pressure and z must be a number")
        if np.any(p <= 0):
            raise InputRangeError("lab table: pressures must be positive (absolute)")
        if np.any((z <= 0.1) | (z >= 3.0)):
            raise InputRangeError("lab table: z must lie between 0.1 and 3")
        order = np.argsort(p)
        p, z = p[order], z[order]
        if np.any(np.diff(p) <= 0):
            raise InputRangeError(f"lab table: pressure {p[1:][np.diff(p) <= 0][0]:g} psia appears twice")
        if self.outside not in OUTSIDE_MODES:
            raise ValueError(
                f"unknown lab-table extrapolation {self.outside!r}; choose one of {OUTSIDE_MODES}"
            )
        if self.outside == "scaled_correlation" and not callable(self.correlation):
            raise ValueError("lab table: 'scaled_correlation' needs a correlation z(p)")
        object.__setattr__(self, "pressure_psia", p)
        object.__setattr__(self, "z_factor", z)
        object.__setattr__(self, "_pchip", PchipInterpolator(p, z, extrapolate=False))

    @classmethod
    def from_bg(cls, pressure_psia, bg_rcf_per_scf, t_degF, conditions=OILFIELD_60F, **kw) -> LabZTable:
        """A table from measured Bg (at the field's standard conditions) rather than z."""
        return cls(
            np.asarray(pressure_psia, float),
            z_from_bg(bg_rcf_per_scf, pressure_psia, t_degF, conditions),
            **kw,
        )

    @property
    def p_min_psia(self) -> float:
        return float(self.pressure_psia[0])

    @property
    def p_max_psia(self) -> float:
        return float(self.pressure_psia[-1])

    def outside_mask(self, p_psia):
        """True where a pressure lies outside the measured range."""
        p = np.asarray(p_psia, float)
        return (p < self.p_min_psia) | (p > self.p_max_psia)

    def __call__(self, p_psia):
        """z at the given pressures [psia]; NaN stays NaN."""
        p = np.asarray(p_psia, float)
        if np.any(p < 0):
            raise InputRangeError("pressure must be absolute and not negative")
        out = self.outside_mask(p)
        if np.any(out) and self.outside == "error":
            bad = p[out]
            raise LabTableRangeError(
                f"pressure {bad.flat[0]:.1f} psia is outside the laboratory table "
                f"({self.p_min_psia:.1f}-{self.p_max_psia:.1f} psia); extend the table or allow "
                "the correlation to be used beyond it"
            )
        z = np.asarray(self._pchip(p), float)
        if np.any(out):
            z = np.where(out, self._scaled_correlation(p), z)
        return float(z) if z.ndim == 0 else z

    def _scaled_correlation(self, p):
        corr = self.correlation
        lo_ratio = self.z_factor[0] / float(corr(self.p_min_psia))
        hi_ratio = self.z_factor[-1] / float(corr(self.p_max_psia))
        ratio = np.where(p < self.p_min_psia, lo_ratio, hi_ratio)
        clipped = np.where(self.outside_mask(p), p, self.p_min_psia)  # corr only where needed
        return np.asarray(corr(clipped), float) * ratio

    def end_ratios(self) -> tuple[float, float]:
        """z_lab / z_correlation at the lowest and highest table pressure."""
        corr = self.correlation
        return (
            float(self.z_factor[0] / corr(self.p_min_psia)),
            float(self.z_factor[-1] / corr(self.p_max_psia)),
        )
