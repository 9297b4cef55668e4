"""The real-gas pseudo-pressure m(p) = 2 ∫_{p_ref}^{p} p'/(μ z) dp' [psi²/cP].

Al-Hussainy, R., Ramey, H.J. Jr. and Crawford, P.B. (1966), *The flow of real gases through
porous media*, JPT 18(5), 624-636, SPE-1243-A (from memory). m(p) takes the pressure
dependence of the gas viscosity μ and of z into the flow potential, so the radial flow of a
real gas obeys the same equation as a liquid's with m in place of p. Differences
m(p₁) − m(p₂) do not depend on the reference pressure p_ref.

At low pressure μ z is nearly constant, (μ z)₀, and m(p) − m(p_wf) ≈ (p² − p_wf²)/(μ z)₀:
the pressure-squared form. At high pressure p/(μ z) is nearly constant and m becomes
linear in p.

Used by the tank networks' exchange (:mod:`..compartments.multitank`) and the wells'
back-pressure equation in the forecast (:mod:`..forecast.deliverability`); both integrate
with :func:`pseudo_pressure_psi2_per_cp` on a grid of pressures.
"""

from __future__ import annotations

from bisect import bisect_right
from dataclasses import dataclass

import numpy as np

from ..errors import InputRangeError
from .gas import gas_density_lb_per_ft3, gas_viscosity_lee_gonzalez_eakin


def pseudo_pressure_psi2_per_cp(p_psia, z, viscosity_cp) -> np.ndarray:
    """m at each node of an ascending pressure grid, from m = 0 at the first node [psi²/cP].

    Parameters
    ----------
    p_psia : 1-D array
        Ascending pressures [psia]; the first is the reference pressure.
    z, viscosity_cp : 1-D arrays
        z-factor [-] and gas viscosity [cP] at those pressures (reservoir temperature).

    Returns
    -------
    ndarray : the trapezoidal rule of 2p/(μ z) from the first node [psi²/cP]. Its error is
        about h²/12 · |f′(p) − f′(p_ref)| for the integrand f and grid step h: exact where μ z
        is constant, and tens of psi²/cP on a 2-psi grid against m of 1e7-1e9 psi²/cP at
        working pressures.
    """
    p = np.asarray(p_psia, float)
    integrand = 2.0 * p / (np.asarray(viscosity_cp, float) * np.asarray(z, float))
    return np.concatenate([[0.0], np.cumsum(0.5 * (integrand[1:] + integrand[:-1]) * np.diff(p))])


def viscosity_lee_gonzalez_eakin_of_p(t_degF: float, gas_gravity: float, z_of_p):
    """μ(p) [cP] at ``t_degF`` by Lee, Gonzalez & Eakin (1966), the density from z(p) (vectorised)."""

    def viscosity_cp_of_p(p):
        rho = gas_density_lb_per_ft3(p, t_degF, z_of_p(p), gas_gravity)
        return gas_viscosity_lee_gonzalez_eakin(t_degF, gas_gravity, rho)

    return viscosity_cp_of_p


@dataclass(frozen=True)
class PseudoPressureTable:
    """m(p) tabulated on an ascending pressure grid, read by linear interpolation in p².

    Interpolating in p² rather than p keeps the low-pressure end accurate: there
    m ≈ p²/(μ z)₀ is linear in p², so the table's error is set by the slow change of μ z
    between nodes, not by the curvature of p².
    """

    p_psia: np.ndarray
    m_psi2_per_cp: np.ndarray

    def __call__(self, p_psia):
        """m(p) [psi²/cP] (scalar or array); pressures beyond the table are refused."""
        if isinstance(p_psia, float | int):  # the forecast's hot path: plain floats, no numpy
            return self._scalar(float(p_psia))
        p = np.asarray(p_psia, float)
        if np.any(p < self.p_psia[0]) or np.any(p > self.p_psia[-1]):
            raise self._outside()
        m = np.interp(p * p, self._lists()[0], self.m_psi2_per_cp)
        return float(m) if m.ndim == 0 else m

    def _outside(self) -> InputRangeError:
        return InputRangeError(
            f"pressure outside the pseudo-pressure table ({self.p_psia[0]:g}-{self.p_psia[-1]:,.0f} psia)"
        )

    def _lists(self) -> tuple[list, list]:
        cached = self.__dict__.get("_cache")
        if cached is None:
            cached = ((self.p_psia * self.p_psia).tolist(), self.m_psi2_per_cp.tolist())
            object.__setattr__(self, "_cache", cached)
        return cached

    def _scalar(self, p: float) -> float:
        p2, m = self._lists()
        x = p * p
        if not p2[0] <= x <= p2[-1]:
            raise self._outside()
        i = min(max(bisect_right(p2, x), 1), len(p2) - 1)
        return m[i - 1] + (x - p2[i - 1]) * (m[i] - m[i - 1]) / (p2[i] - p2[i - 1])


def pseudo_pressure_table(
    z_of_p, viscosity_cp_of_p, p_max_psia: float, *, p_ref_psia: float = 1.0, nodes: int = 4000
) -> PseudoPressureTable:
    """Tabulate m(p) = 2 ∫_{p_ref}^{p} p'/(μ z) dp' from ``p_ref_psia`` to ``p_max_psia``.

    Parameters
    ----------
    z_of_p, viscosity_cp_of_p : callables
        z [-] and μ [cP] at reservoir temperature against pressure [psia] (vectorised).
    p_max_psia : float
        Highest pressure the table covers [psia].
    p_ref_psia : float
        Reference pressure, m(p_ref) = 0 [psia].
    nodes : int
        Grid nodes, uniform in p.

    References
    ----------
    Al-Hussainy, Ramey & Crawford (1966), SPE-1243-A (from memory).
    """
    if not p_max_psia > p_ref_psia > 0:
        raise InputRangeError("the pseudo-pressure table needs 0 < p_ref < p_max")
    p = np.linspace(p_ref_psia, p_max_psia, nodes)
    z = np.asarray(z_of_p(p), float)
    mu = np.asarray(viscosity_cp_of_p(p), float)
    if not (np.all(np.isfinite(z * mu)) and np.all(z * mu > 0)):
        raise InputRangeError("z or the gas viscosity is not positive over the pseudo-pressure table")
    return PseudoPressureTable(p, pseudo_pressure_psi2_per_cp(p, z, mu))
