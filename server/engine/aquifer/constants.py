"""Field-unit aquifer constants and the conversions between aquifer parametrisations.

Every constant is recomputed from SI definitions (check value 21 of the domain reference;
Dake 1978 prints the rounded 0.000264, 0.00634 and 1.119).

References
----------
Dake, L.P. (1978). Fundamentals of Reservoir Engineering, Elsevier, §9.2 (U, t_D) and
    eqs. 9.23-9.28 (Fetkovich).
Fetkovich, M.J. (1971). JPT 23(7), 814-828, SPE-2603-PA.
"""

from __future__ import annotations

from dataclasses import dataclass
from math import log, pi

import numpy as np

from ..errors import InputRangeError
from ..units import FT3_PER_BBL, FT_PER_M, KPA_PER_PSI, M3_PER_BBL

# Field-unit constants recomputed from SI definitions (check value 21; Dake 1978 prints
# 0.000264, 0.00634 and 1.119).
#: 1 darcy: 1 cP x 1 cm3/s through 1 cm2 under 1 atm/cm, in m2 (= 9.869233e-13).
M2_PER_DARCY = 1e-3 * 1e-6 / (1e-4 * 101325.0 / 1e-2)
M2_PER_MD = M2_PER_DARCY / 1000.0
_PA_PER_PSI = KPA_PER_PSI * 1000.0
_M_PER_FT = 1.0 / FT_PER_M
_PA_S_PER_CP = 1e-3
#: t_D = C k t / (phi mu c_t r^2) with k md, t days, mu cP, c_t 1/psi, r ft (0.0063283).
TD_CONSTANT_PER_DAY = M2_PER_MD * 86400.0 * _PA_PER_PSI / (_PA_S_PER_CP * _M_PER_FT**2)
TD_CONSTANT_PER_HOUR = TD_CONSTANT_PER_DAY / 24.0
#: U = C f phi h c_t r_o^2 [bbl/psi] for a radial aquifer (2 pi / 5.614583 = 1.11908).
U_CONSTANT_RADIAL = 2.0 * pi / FT3_PER_BBL
#: U = C w L h phi c_t [bbl/psi] for a linear aquifer (1 / 5.614583 = 0.17811).
U_CONSTANT_LINEAR = 1.0 / FT3_PER_BBL
#: Darcy's law in field units, q [bbl/d] = C k A dp / (mu L) (0.0011271).
DARCY_CONSTANT_BBL_PER_DAY = M2_PER_MD * _M_PER_FT / _PA_S_PER_CP * 86400.0 * _PA_PER_PSI / M3_PER_BBL


@dataclass(frozen=True)
class VehConstants:
    """The two constants of a van Everdingen-Hurst aquifer."""

    u_rb_per_psi: float  # aquifer influx constant U
    td_per_day: float  # dimensionless time per day, k / (phi mu c_t r^2) x C


@dataclass(frozen=True)
class FetkovichConstants:
    wei_rb: float  # maximum encroachable water c_t W_i p_i
    j_rb_per_day_psi: float  # aquifer productivity index


def veh_radial_constants(
    *,
    k_md,
    porosity_frac,
    viscosity_cp,
    total_compressibility_per_psi,
    thickness_ft,
    reservoir_radius_ft,
    encroachment_angle_deg=360.0,
) -> VehConstants:
    """U = 1.119 f φ h c_t r_o² [bbl/psi] and t_D/t = 0.0063283 k/(φ μ c_t r_o²) [1/day].

    References
    ----------
    Dake (1978), eqs. 9.6-9.8; constants recomputed from SI (check value 21).
    """
    positive_arguments(locals())
    f = encroachment_angle_deg / 360.0
    phi_ct_r2 = porosity_frac * total_compressibility_per_psi * reservoir_radius_ft**2
    return VehConstants(
        U_CONSTANT_RADIAL * f * thickness_ft * phi_ct_r2,
        TD_CONSTANT_PER_DAY * k_md / (viscosity_cp * phi_ct_r2),
    )


def veh_linear_constants(
    *, k_md, porosity_frac, viscosity_cp, total_compressibility_per_psi, thickness_ft, width_ft, length_ft
) -> VehConstants:
    """U = 0.1781 w L h φ c_t [bbl/psi] and t_D/t = 0.0063283 k/(φ μ c_t L²) [1/day] (Dake 9.9-9.10)."""
    positive_arguments(locals())
    phi_ct = porosity_frac * total_compressibility_per_psi
    return VehConstants(
        U_CONSTANT_LINEAR * width_ft * length_ft * thickness_ft * phi_ct,
        TD_CONSTANT_PER_DAY * k_md / (viscosity_cp * phi_ct * length_ft**2),
    )


def fetkovich_radial_constants(
    *,
    k_md,
    porosity_frac,
    viscosity_cp,
    total_compressibility_per_psi,
    thickness_ft,
    reservoir_radius_ft,
    aquifer_radius_ft,
    initial_pressure_psia,
    encroachment_angle_deg=360.0,
) -> FetkovichConstants:
    """Wei = c_t π (r_a² − r_o²) h φ f p_i / 5.615 [bbl]; J = 2π C_Darcy k h f / (μ (ln r_a/r_o − ¾)).

    The productivity index is the radial pseudo-steady-state one of Fetkovich (1971); the
    field constant 0.00708 (domain reference §3.2, from memory) is recomputed here from SI
    as 2π x 0.0011271.
    """
    positive_arguments(locals())
    red = aquifer_radius_ft / reservoir_radius_ft
    _check_red_for_pss(red)
    f = encroachment_angle_deg / 360.0
    wi_rb = (
        pi * (aquifer_radius_ft**2 - reservoir_radius_ft**2) * thickness_ft * porosity_frac * f / FT3_PER_BBL
    )
    wei = total_compressibility_per_psi * wi_rb * initial_pressure_psia
    j = 2.0 * pi * DARCY_CONSTANT_BBL_PER_DAY * k_md * thickness_ft * f / (viscosity_cp * (log(red) - 0.75))
    return FetkovichConstants(wei, j)


def fetkovich_from_veh_radial(
    u_rb_per_psi: float, td_per_day: float, red: float, initial_pressure_psia: float
) -> FetkovichConstants:
    """The Fetkovich constants of the same bounded radial aquifer in van Everdingen-Hurst terms.

    c_t W_i = U (r_eD² − 1)/2 and J p_i / Wei = 2 (t_D/t) / ((r_eD² − 1)(ln r_eD − ¾))
    (check value 22; derived from the definitions of U, t_D, Wei and J).
    """
    _check_red_for_pss(red)
    ct_wi = u_rb_per_psi * (red * red - 1.0) / 2.0
    decay = 2.0 * td_per_day / ((red * red - 1.0) * (log(red) - 0.75))
    return FetkovichConstants(ct_wi * initial_pressure_psia, decay * ct_wi)


def _check_red_for_pss(red: float) -> None:
    if not red > np.exp(0.75):
        raise InputRangeError(
            f"r_eD = {red:g}: the pseudo-steady-state productivity needs ln(r_eD) > 3/4 (r_eD > 2.117)"
        )


def positive_arguments(arguments: dict) -> None:
    """Raise unless every numeric argument (a function's ``locals()`` on entry) is finite and > 0."""
    for name, v in arguments.items():
        if isinstance(v, int | float) and not (np.isfinite(v) and v > 0):
            raise InputRangeError(f"{name} must be a positive number (got {v})")
