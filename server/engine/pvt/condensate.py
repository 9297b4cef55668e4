"""Wet-gas equivalents of produced condensate and water vapour; well-stream gravity.

Gas material balance counts moles leaving the reservoir. Condensate that drops out
in the separator and stock tank left the reservoir as gas, so its moles are added to
the separator gas as a gas equivalent; so is water produced from the vapour that the
reservoir gas carried. The constants follow from the standard conditions: one stock-
tank barrel of a liquid of gravity g_o holds rho_w g_o lb, i.e. rho_w g_o / M_o lbmol,
which occupy V_m rho_w g_o / M_o scf as an ideal gas at standard conditions.

    GE_o = (rho_w V_m) g_o / M_o        [scf/stb]   (the textbook "133,000 g_o/M_o")
    GE_w = (rho_w V_m) / M_w            [scf/stb]   (the textbook "about 7,390")
    g_o = 141.5 / (131.5 + API)          M_o = 6084 / (API - 5.9)  (Cragoe 1929)

References
----------
Craft, B.C. and Hawkins, M.F. (1991). Applied Petroleum Reservoir Engineering, 2nd
    ed. rev. R.E. Terry, ch. "Gas-condensate reservoirs" (133,000 and 7,390 constants,
    well-stream gravity; from memory).
Cragoe, C.S. (1929). Thermodynamic properties of petroleum products. US Bureau of
    Standards Misc. Pub. 97 (M_o from API; from memory).
Standing, M.B. (1977). Volumetric and Phase Behavior of Oil Field Hydrocarbon
    Systems. SPE (alternative M_o = 5954/(API - 8.811); from memory).
"""

from __future__ import annotations

import numpy as np

from ..errors import InputRangeError
from ..units import KG_PER_LB, M3_PER_BBL, OILFIELD_60F, StandardConditions
from .gas import AIR_MOLAR_MASS_LB_PER_LBMOL

#: Water at 60 degF and 1 atm, IAPWS-95 (CoolProp 8.0.0 'Water': 999.0171 kg/m3).
WATER_DENSITY_60F_KG_PER_M3 = 999.0171
WATER_MOLAR_MASS_LB_PER_LBMOL = 18.015268  # IAPWS-95 value used by CoolProp
WATER_LB_PER_STB = WATER_DENSITY_60F_KG_PER_M3 * M3_PER_BBL / KG_PER_LB  # 350.16
#: The printed textbook constant, for checking against published examples only.
TEXTBOOK_GE_CONSTANT_SCF_PER_STB = 133000.0
API_MIN, API_MAX = 10.0, 100.0


def _api(api):
    a = np.asarray(api, float)
    if np.any(~np.isfinite(a)) or np.any((a <= API_MIN) | (a >= API_MAX)):
        raise InputRangeError(
            f"condensate API gravity must lie between {API_MIN:g} and {API_MAX:g}, got {api!r}"
        )
    return a


def condensate_specific_gravity(api):
    """Liquid specific gravity (water at 60 degF = 1) from API gravity: 141.5/(131.5 + API)."""
    return 141.5 / (131.5 + _api(api))


def condensate_molar_mass_cragoe(api):
    """Molar mass of a stock-tank liquid from API gravity, Cragoe (1929): 6084/(API - 5.9) [lb/lbmol].

    References
    ----------
    Cragoe (1929), US Bureau of Standards Misc. Pub. 97 (from memory; the form
    44.29 g_o/(1.03 - g_o) is algebraically the same to 0.1 %).
    """
    return 6084.0 / (_api(api) - 5.9)


def condensate_molar_mass_standing(api):
    """Molar mass of a stock-tank liquid, Standing's form 5954/(API - 8.811) [lb/lbmol] (from memory)."""
    return 5954.0 / (_api(api) - 8.811)


MOLAR_MASS_METHODS = {"cragoe": condensate_molar_mass_cragoe, "standing": condensate_molar_mass_standing}


def condensate_molar_mass(api, method: str = "cragoe"):
    """Molar mass of a condensate by the named correlation [lb/lbmol]."""
    try:
        return MOLAR_MASS_METHODS[method](api)
    except KeyError:
        raise ValueError(
            f"unknown condensate molar-mass method {method!r}; choose one of {sorted(MOLAR_MASS_METHODS)}"
        ) from None


def gas_equivalent_constant_scf_per_stb(conditions: StandardConditions = OILFIELD_60F) -> float:
    """rho_w V_m: scf of ideal gas per stb per unit (g_o/M_o) at the given conditions.

    132,880 at 60 degF/14.696 psia against the textbook's rounded 133,000.
    """
    return WATER_LB_PER_STB * conditions.molar_volume_scf_per_lbmol


def condensate_gas_equivalent_scf_per_stb(
    api,
    conditions: StandardConditions = OILFIELD_60F,
    *,
    molar_mass_method: str = "cragoe",
    constant_scf_per_stb: float | None = None,
):
    """Gas equivalent of one stock-tank barrel of condensate [scf/stb].

    GE = C g_o / M_o with C = rho_w V_m from ``conditions`` (or the constant given,
    e.g. the textbook 133,000 to reproduce a published example).

    Parameters
    ----------
    api : float or array
        Condensate API gravity [degAPI], 10-100.
    conditions : StandardConditions
        The standard state the gas equivalent is counted at.
    molar_mass_method : {"cragoe", "standing"}
    constant_scf_per_stb : float, optional
        Overrides rho_w V_m.

    References
    ----------
    Craft & Hawkins (1991) (from memory); domain reference section 2.6, check value 30.
    """
    c = (
        gas_equivalent_constant_scf_per_stb(conditions)
        if constant_scf_per_stb is None
        else constant_scf_per_stb
    )
    return c * condensate_specific_gravity(api) / condensate_molar_mass(api, molar_mass_method)


def water_vapour_gas_equivalent_scf_per_stb(conditions: StandardConditions = OILFIELD_60F) -> float:
    """Gas equivalent of one stb of water that was vapour in the reservoir, rho_w V_m / M_w [scf/stb].

    7,376 at 60 degF/14.696 psia (the textbook quotes about 7,390).
    """
    return gas_equivalent_constant_scf_per_stb(conditions) / WATER_MOLAR_MASS_LB_PER_LBMOL


def wellstream_gravity(
    separator_gas_gravity: float,
    condensate_yield_stb_per_mmscf: float,
    api: float,
    conditions: StandardConditions = OILFIELD_60F,
    *,
    molar_mass_method: str = "cragoe",
) -> float:
    """Gravity of the reservoir gas recombined from separator gas and condensate.

    g_w = (R g_g + rho_w V_m g_o / M_air) / (R + rho_w V_m g_o / M_o), with R the
    producing gas-condensate ratio [scf/stb] = 1e6 / yield. This is a mass balance
    over one stb: the gas's mass R g_g M_air / V_m plus the liquid's rho_w g_o,
    divided by their moles R / V_m + rho_w g_o / M_o, over M_air.

    Parameters
    ----------
    separator_gas_gravity : float
        Gravity of the separator (sales) gas [-], air = 1.
    condensate_yield_stb_per_mmscf : float
        Stock-tank condensate per MMscf of separator gas [stb/MMscf], >= 0.
    api : float
        Condensate API gravity [degAPI].

    References
    ----------
    Craft & Hawkins (1991), gas-condensate chapter (textbook constants 4,584 and
    132,800; from memory). Domain reference section 2.6.
    """
    if not condensate_yield_stb_per_mmscf >= 0:
        raise InputRangeError("condensate yield must not be negative")
    if condensate_yield_stb_per_mmscf == 0:
        return float(separator_gas_gravity)
    r = 1e6 / condensate_yield_stb_per_mmscf
    go = float(condensate_specific_gravity(api))
    c = gas_equivalent_constant_scf_per_stb(conditions)
    mo = float(condensate_molar_mass(api, molar_mass_method))
    return (r * separator_gas_gravity + c * go / AIR_MOLAR_MASS_LB_PER_LBMOL) / (r + c * go / mo)


def wet_gas_mscf(
    gas_mscf,
    condensate_stb=None,
    api: float | None = None,
    vapour_water_stb=None,
    conditions: StandardConditions = OILFIELD_60F,
    *,
    molar_mass_method: str = "cragoe",
):
    """Wet-gas equivalent production: Gp + GE_o Np + GE_w Wp,vapour [Mscf].

    Parameters
    ----------
    gas_mscf : array
        Separator (and stock-tank) gas per period [Mscf].
    condensate_stb : array, optional
        Condensate per period [stb]; needs ``api``.
    vapour_water_stb : array, optional
        Only the water that was vapour in the reservoir [stb]. Free water produced
        from the formation or an aquifer is a liquid withdrawal, not gas: never pass
        all produced water here unless it is known to be condensed.
    """
    wet = np.asarray(gas_mscf, float).copy()
    if condensate_stb is not None:
        if api is None:
            raise InputRangeError("condensate volumes need the condensate API gravity")
        ge = condensate_gas_equivalent_scf_per_stb(api, conditions, molar_mass_method=molar_mass_method)
        wet += ge * np.asarray(condensate_stb, float) / 1e3
    if vapour_water_stb is not None:
        wet += water_vapour_gas_equivalent_scf_per_stb(conditions) * np.asarray(vapour_water_stb, float) / 1e3
    return wet
