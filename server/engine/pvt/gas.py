"""Gas PVT in field units: z-factor, Bg, density, viscosity and compressibility.

The pseudo-reduced correlations live in :mod:`.zfactor` and the pseudo-criticals in
:mod:`.pseudocritical`; a laboratory table is handled by :mod:`.labtable`. This module
puts them together for a :class:`GasFluid` at a pressure and temperature.

References
----------
Dranchuk, P.M. and Abou-Kassem, J.H. (1975). J. Can. Pet. Technol. 14(3), 34-36.
Hall, K.R. and Yarborough, L. (1973). Oil & Gas Journal, June 1973.
Sutton, R.P. (1985). SPE-14265-MS.  Standing, M.B. (1977). Volumetric and Phase
    Behavior of Oil Field Hydrocarbon Systems. SPE.
Lee, A.L., Gonzalez, M.H. and Eakin, B.E. (1966). The viscosity of natural gases.
    JPT 18(8), 997-1000, SPE-1340-PA.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from ..errors import InputRangeError
from ..units import (
    FT3_PER_BBL,
    GAS_CONSTANT_PSIA_FT3_PER_LBMOL_DEGR,
    LB_PER_FT3_PER_KG_PER_M3,
    OILFIELD_60F,
    StandardConditions,
    degR_from_degF,
)
from .pseudocritical import (
    GRAVITY_CORRELATIONS,
    INERTS_METHODS,
    PseudoCriticals,
    pseudo_critical_sutton,
    pseudo_criticals,
)
from .zfactor import PPR_MAX, TPR_MAX, TPR_MIN, z_factor_dranchuk_abou_kassem, z_factor_hall_yarborough

__all__ = [
    "AIR_MOLAR_MASS_LB_PER_LBMOL",
    "GasFluid",
    "GasProperties",
    "Z_METHODS",
    "bg_rb_per_mscf",
    "bg_rcf_per_scf",
    "fluid_pseudo_criticals",
    "gas_compressibility_per_psi",
    "gas_density_lb_per_ft3",
    "gas_properties",
    "gas_viscosity_lee_gonzalez_eakin",
    "pseudo_critical_sutton",
    "z_factor",
    "z_factor_dranchuk_abou_kassem",
    "z_factor_hall_yarborough",
]

#: Molar mass of dry air used to define gas gravity (the value behind the gravity
#: correlations; domain reference section 1.4).
AIR_MOLAR_MASS_LB_PER_LBMOL = 28.9647
LB_PER_FT3_PER_G_PER_CM3 = 1000.0 * LB_PER_FT3_PER_KG_PER_M3  # 62.42796

Z_METHODS = {"dak": z_factor_dranchuk_abou_kassem, "hall_yarborough": z_factor_hall_yarborough}
Z_METHOD_LABELS = {"dak": "Dranchuk-Abou-Kassem", "hall_yarborough": "Hall-Yarborough"}


@dataclass(frozen=True)
class GasFluid:
    """What the engine needs to know about a dry gas or a wet-gas well stream.

    ``gas_gravity`` is that of the whole gas (air = 1), inerts included. The
    pseudo-critical method and the inerts rule travel with the fluid so that every
    property of one gas is computed the same way.
    """

    gas_gravity: float
    y_co2_frac: float = 0.0
    y_h2s_frac: float = 0.0
    y_n2_frac: float = 0.0
    pseudo_critical_method: str = "sutton"
    inerts_method: str = "auto"  # "auto" | "always" | "never" (see pseudocritical.pseudo_criticals)

    def __post_init__(self):
        fractions = (self.y_co2_frac, self.y_h2s_frac, self.y_n2_frac)
        if not all(np.isfinite(fractions)) or min(fractions) < 0 or sum(fractions) >= 1:
            raise InputRangeError(
                f"gas composition fractions must be >= 0 and add up to < 1, got {fractions}"
            )
        if not np.isfinite(self.gas_gravity) or self.gas_gravity <= 0:
            raise InputRangeError(f"gas gravity must be positive, got {self.gas_gravity!r}")
        if self.pseudo_critical_method not in GRAVITY_CORRELATIONS:
            raise ValueError(
                f"unknown pseudo-critical method {self.pseudo_critical_method!r}; "
                f"choose one of {sorted(GRAVITY_CORRELATIONS)}"
            )
        if self.inerts_method not in INERTS_METHODS:
            raise ValueError(f"unknown inerts method {self.inerts_method!r}; choose one of {INERTS_METHODS}")

    @property
    def molar_mass_lb_per_lbmol(self) -> float:
        return AIR_MOLAR_MASS_LB_PER_LBMOL * self.gas_gravity


@lru_cache(maxsize=512)
def fluid_pseudo_criticals(fluid: GasFluid) -> PseudoCriticals:
    """Pseudo-criticals of a fluid by its own method (cached: fluids are immutable)."""
    return pseudo_criticals(
        fluid.gas_gravity,
        fluid.y_co2_frac,
        fluid.y_h2s_frac,
        fluid.y_n2_frac,
        correlation=fluid.pseudo_critical_method,
        inerts=fluid.inerts_method,
    )


def _z_method(method: str):
    try:
        return Z_METHODS[method]
    except KeyError:
        raise ValueError(f"unknown z-factor method {method!r}; choose one of {sorted(Z_METHODS)}") from None


def z_factor(p_psia, t_degF, fluid: GasFluid, method: str = "dak"):
    """z-factor of a gas at pressure and temperature.

    Parameters
    ----------
    p_psia : float or array
        Absolute pressure [psia], >= 0.
    t_degF : float or array
        Temperature [degF]; broadcast against ``p_psia``.
    fluid : GasFluid
        Gravity, composition and pseudo-critical method.
    method : {"dak", "hall_yarborough"}
        Dranchuk & Abou-Kassem (1975) or Hall & Yarborough (1973).

    Returns
    -------
    z_factor : float for scalar input, else ndarray. NaN where an input is NaN; an
        empty input gives an empty array.

    Raises
    ------
    InputRangeError
        Negative or infinite pressure; a temperature below the correlation's range
        (T below the gas's pseudo-critical temperature) or above 3 Tpc; a pressure
        above 30 ppc.
    ValueError
        Unknown method.
    """
    solve = _z_method(method)
    pc = fluid_pseudo_criticals(fluid)
    p = np.asarray(p_psia, float)
    t_degR = degR_from_degF(np.asarray(t_degF, float))
    _check_field_range(p, t_degR, pc)
    return solve(p / pc.ppc_psia, t_degR / pc.tpc_degR)


def _check_field_range(p, t_degR, pc: PseudoCriticals):
    """Range errors in field units (the reduced solvers check again, in reduced units)."""
    if np.any(p < 0) or np.any(np.isinf(p)):
        raise InputRangeError("pressure must be absolute, finite and not negative [psia]")
    if np.any(np.isinf(t_degR)):
        raise InputRangeError("temperature must be finite")
    p_fin, t_fin = p[~np.isnan(p)], t_degR[~np.isnan(t_degR)]
    if t_fin.size and t_fin.min() < TPR_MIN * pc.tpc_degR:
        raise InputRangeError(
            f"temperature {t_fin.min() - 459.67:.1f} degF is below the pseudo-critical temperature of "
            f"this gas ({pc.tpc_degR - 459.67:.1f} degF): the z-factor correlations do not apply"
        )
    if t_fin.size and t_fin.max() > TPR_MAX * pc.tpc_degR:
        raise InputRangeError(
            f"temperature {t_fin.max() - 459.67:.1f} degF is above {TPR_MAX:g} times the pseudo-critical "
            "temperature of this gas, beyond the correlations' range"
        )
    if p_fin.size and p_fin.max() > PPR_MAX * pc.ppc_psia:
        raise InputRangeError(
            f"pressure {p_fin.max():.0f} psia is above {PPR_MAX:g} times the pseudo-critical pressure of "
            f"this gas ({PPR_MAX * pc.ppc_psia:.0f} psia), beyond the correlations' range"
        )


def bg_rcf_per_scf(p_psia, t_degF, z, conditions: StandardConditions = OILFIELD_60F):
    """Gas formation volume factor Bg = (p_sc/T_sc) z T / p.

    Parameters
    ----------
    p_psia : float or array
        Absolute pressure [psia], > 0.
    t_degF : float or array
        Temperature [degF].
    z : float or array
        z-factor at (p, T) [-].
    conditions : StandardConditions
        The standard state the "scf" is counted at.

    Returns
    -------
    bg : reservoir ft3 per standard ft3 (identical to rm3/sm3 at the same conditions).

    Notes
    -----
    Assumes z = 1 at standard conditions (real-gas law at both states; domain
    reference section 1.1).
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


def bg_rb_per_mscf(p_psia, t_degF, z, conditions: StandardConditions = OILFIELD_60F):
    """Bg in reservoir barrels per Mscf (1000 / 5.614583 times the rcf/scf value)."""
    return bg_rcf_per_scf(p_psia, t_degF, z, conditions) * 1000.0 / FT3_PER_BBL


def gas_density_lb_per_ft3(p_psia, t_degF, z, gas_gravity):
    """Gas density from the real-gas law, rho = p M / (z R T) [lb/ft3].

    Parameters
    ----------
    p_psia : absolute pressure [psia];  t_degF : temperature [degF];  z : z-factor [-];
    gas_gravity : gravity of the gas [-], M = 28.9647 gravity [lb/lbmol].
    """
    m = AIR_MOLAR_MASS_LB_PER_LBMOL * np.asarray(gas_gravity, float)
    t_degR = degR_from_degF(np.asarray(t_degF, float))
    return np.asarray(p_psia, float) * m / (np.asarray(z) * GAS_CONSTANT_PSIA_FT3_PER_LBMOL_DEGR * t_degR)


def gas_viscosity_lee_gonzalez_eakin(t_degF, gas_gravity, density_lb_per_ft3):
    """Gas viscosity by Lee, Gonzalez & Eakin (1966).

    mu = 1e-4 K exp(X rho^Y) [cP], rho in g/cm3, with
    K = (9.4 + 0.02 M) T^1.5 / (209 + 19 M + T), X = 3.5 + 986/T + 0.01 M, Y = 2.4 - 0.2 X
    (T in degR, M in lb/lbmol).

    Parameters
    ----------
    t_degF : float or array
        Temperature [degF]; data range 100-340 degF.
    gas_gravity : float
        Gas gravity [-] (M = 28.9647 gravity).
    density_lb_per_ft3 : float or array
        Gas density at the same state [lb/ft3].

    Returns
    -------
    viscosity_cp : float or ndarray [cP]. Stated accuracy about 2-4 % for natural gases
        at 100-8000 psia (from memory); within 8.3 % of the methane reference
        correlation over 300-420 K, 1-50 MPa (domain reference section 1.7).

    References
    ----------
    Lee, Gonzalez & Eakin (1966), JPT 18(8), 997-1000, SPE-1340-PA.
    """
    t = degR_from_degF(np.asarray(t_degF, float))
    if np.any(t <= 0):
        raise InputRangeError("temperature must be above absolute zero")
    m = AIR_MOLAR_MASS_LB_PER_LBMOL * float(gas_gravity)
    rho = np.asarray(density_lb_per_ft3, float) / LB_PER_FT3_PER_G_PER_CM3
    if np.any(rho < 0):
        raise InputRangeError("gas density must not be negative")
    k = (9.4 + 0.02 * m) * t**1.5 / (209.0 + 19.0 * m + t)
    x = 3.5 + 986.0 / t + 0.01 * m
    y = 2.4 - 0.2 * x
    return 1e-4 * k * np.exp(x * rho**y)


def gas_compressibility_per_psi(p_psia, z_of_p):
    """Isothermal gas compressibility cg = 1/p - (1/z) dz/dp [1/psi].

    Parameters
    ----------
    p_psia : float or array
        Absolute pressure [psia], > 0.
    z_of_p : callable
        z as a function of pressure at the temperature wanted (any z source: a
        correlation or a laboratory table).

    Notes
    -----
    dz/dp by a central difference with a step of 1e-4 p: with z solved to 1e-12 the
    rounding error is about 1e-8 relative and the truncation error smaller still.
    The definition is exact thermodynamics (domain reference section 1.8).
    """
    p = np.asarray(p_psia, float)
    if np.any(~(p > 0)):
        raise InputRangeError("pressure must be positive (and not NaN) for the gas compressibility")
    h = 1e-4 * p
    z = np.asarray(z_of_p(p), float)
    dz = (np.asarray(z_of_p(p + h), float) - np.asarray(z_of_p(p - h), float)) / (2.0 * h)
    return 1.0 / p - dz / z


@dataclass(frozen=True)
class GasProperties:
    """Gas properties at one state (arrays when the inputs are arrays)."""

    z_factor: object
    bg_rcf_per_scf: object
    bg_rb_per_mscf: object
    density_lb_per_ft3: object
    viscosity_cp: object
    compressibility_per_psi: object


def gas_properties(
    p_psia, t_degF, fluid: GasFluid, method: str = "dak", conditions: StandardConditions = OILFIELD_60F
) -> GasProperties:
    """z, Bg, density, viscosity (Lee-Gonzalez-Eakin) and cg of a gas at (p, T).

    Parameters as for :func:`z_factor`; ``conditions`` sets the standard state of Bg.
    """
    z = z_factor(p_psia, t_degF, fluid, method)
    rho = gas_density_lb_per_ft3(p_psia, t_degF, z, fluid.gas_gravity)
    bg = bg_rcf_per_scf(p_psia, t_degF, z, conditions)
    return GasProperties(
        z_factor=z,
        bg_rcf_per_scf=bg,
        bg_rb_per_mscf=bg * 1000.0 / FT3_PER_BBL,
        density_lb_per_ft3=rho,
        viscosity_cp=gas_viscosity_lee_gonzalez_eakin(t_degF, fluid.gas_gravity, rho),
        compressibility_per_psi=gas_compressibility_per_psi(
            p_psia, lambda p: z_factor(p, t_degF, fluid, method)
        ),
    )


def z_source_label(fluid: GasFluid, method: str) -> str:
    """Plain words for how z is computed for this fluid."""
    _z_method(method)
    return f"{Z_METHOD_LABELS[method]} z with {fluid_pseudo_criticals(fluid).description}"
