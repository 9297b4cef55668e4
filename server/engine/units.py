"""Units, conversions and standard conditions.

Internally the engine works in oilfield units: psia, degF/degR, ft, scf, stb, with
every standard gas volume counted at the field's :class:`StandardConditions`.
Conversions happen at the edges with the functions here, named ``x_from_y``, or with
:func:`convert`, which knows our unit names and raises on any other.
Constants are exact SI definitions (NIST SP 811, 2008 edition) unless said otherwise.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .errors import EngineError

KPA_PER_PSI = 6.894757293168361  # 1 lbf/in^2 = 4.4482216152605 N / (0.0254 m)^2
M3_PER_FT3 = 0.028316846592  # (0.3048 m)^3, exact
M3_PER_BBL = 0.158987294928  # 42 US gal x 3.785411784 L, exact
FT3_PER_BBL = M3_PER_BBL / M3_PER_FT3  # 5.614583...
FT_PER_M = 1.0 / 0.3048
KG_PER_LB = 0.45359237  # exact
DEGR_OFFSET = 459.67
DEGR_PER_K = 1.8
STANDARD_ATMOSPHERE_KPA = 101.325  # exact by definition
STANDARD_ATMOSPHERE_PSIA = STANDARD_ATMOSPHERE_KPA / KPA_PER_PSI  # 14.69595
GAS_CONSTANT_J_PER_MOL_K = 8.314462618  # CODATA 2018, exact
MOL_PER_LBMOL = 453.59237
#: R in psia ft3 / (lbmol degR), from the SI value (10.7316).
GAS_CONSTANT_PSIA_FT3_PER_LBMOL_DEGR = (
    GAS_CONSTANT_J_PER_MOL_K * MOL_PER_LBMOL / (KPA_PER_PSI * 1000.0 * M3_PER_FT3) / DEGR_PER_K
)
LB_PER_FT3_PER_KG_PER_M3 = M3_PER_FT3 / KG_PER_LB  # 0.06242796


class UnitError(EngineError):
    """An unknown unit, or a conversion between units of different kinds."""


@dataclass(frozen=True)
class StandardConditions:
    """Reference state that every standard volume is stated at (z = 1 assumed there)."""

    name: str
    p_sc_psia: float
    t_sc_degR: float

    @property
    def label(self) -> str:
        return self.name

    @property
    def molar_volume_scf_per_lbmol(self) -> float:
        """Ideal-gas volume of one lbmol at these conditions, R T_sc / p_sc [scf/lbmol]."""
        return GAS_CONSTANT_PSIA_FT3_PER_LBMOL_DEGR * self.t_sc_degR / self.p_sc_psia

    @property
    def molar_volume_m3_per_kmol(self) -> float:
        """Ideal-gas volume of one kmol, R T_sc / p_sc [m3/kmol]."""
        return GAS_CONSTANT_J_PER_MOL_K * (self.t_sc_degR / DEGR_PER_K) / (self.p_sc_psia * KPA_PER_PSI)

    @property
    def bg_coefficient_rcf_per_scf(self) -> float:
        """p_sc / T_sc: Bg [ft3/scf] = this x z T[degR] / p[psia] (check value 1)."""
        return self.p_sc_psia / self.t_sc_degR


def standard_conditions_at(name: str, *, p_sc_psia: float, t_sc_degF: float) -> StandardConditions:
    """Standard conditions from a pressure [psia] and temperature [degF]."""
    if not (p_sc_psia > 0 and math.isfinite(p_sc_psia) and t_sc_degF > -DEGR_OFFSET):
        raise EngineError(f"standard conditions need a positive pressure and temperature, got {name!r}")
    return StandardConditions(name, p_sc_psia, t_sc_degF + DEGR_OFFSET)


#: US oilfield: 60 degF and 14.696 psia.
OILFIELD_60F = StandardConditions("60 °F, 14.696 psia", 14.696, 60.0 + DEGR_OFFSET)
#: ISO 13443: 15 degC and 101.325 kPa.
ISO_15C = StandardConditions("15 °C, 101.325 kPa", STANDARD_ATMOSPHERE_PSIA, 288.15 * DEGR_PER_K)
#: Other pressure bases some US jurisdictions use (60 degF).
OILFIELD_60F_14_65 = StandardConditions("60 °F, 14.65 psia", 14.65, 60.0 + DEGR_OFFSET)
OILFIELD_60F_14_73 = StandardConditions("60 °F, 14.73 psia", 14.73, 60.0 + DEGR_OFFSET)

STANDARD_CONDITIONS = {
    "oilfield": OILFIELD_60F,
    "iso": ISO_15C,
    "oilfield_14.65": OILFIELD_60F_14_65,
    "oilfield_14.73": OILFIELD_60F_14_73,
}


def standard_conditions(name: str) -> StandardConditions:
    """Look up a named standard condition; raise on an unknown name."""
    try:
        return STANDARD_CONDITIONS[name]
    except KeyError:
        raise ValueError(
            f"unknown standard conditions {name!r}; choose one of {sorted(STANDARD_CONDITIONS)}"
        ) from None


def standard_volume_ratio(from_conditions: StandardConditions, to_conditions: StandardConditions) -> float:
    """Volume at ``to_conditions`` of gas that fills one volume at ``from_conditions``.

    Equal moles, ideal gas at both states: V2/V1 = (p1/T1) / (p2/T2).
    """
    return (from_conditions.p_sc_psia / from_conditions.t_sc_degR) / (
        to_conditions.p_sc_psia / to_conditions.t_sc_degR
    )


# --- temperature -----------------------------------------------------------------------


def degR_from_degF(t_degF):
    """Rankine from Fahrenheit."""
    return t_degF + DEGR_OFFSET


def degF_from_degR(t_degR):
    """Fahrenheit from Rankine."""
    return t_degR - DEGR_OFFSET


def degF_from_degC(t_degC):
    """Fahrenheit from Celsius."""
    return t_degC * 1.8 + 32.0


def degC_from_degF(t_degF):
    """Celsius from Fahrenheit."""
    return (t_degF - 32.0) / 1.8


def degR_from_K(t_K):
    """Rankine from kelvin."""
    return t_K * DEGR_PER_K


def K_from_degR(t_degR):
    """Kelvin from Rankine."""
    return t_degR / DEGR_PER_K


def degF_from_K(t_K):
    """Fahrenheit from kelvin."""
    return t_K * DEGR_PER_K - DEGR_OFFSET


def K_from_degF(t_degF):
    """Kelvin from Fahrenheit."""
    return (t_degF + DEGR_OFFSET) / DEGR_PER_K


# --- pressure (absolute unless the name says gauge) -----------------------------------


def psia_from_kpa(p_kpa):
    """psi from kPa (absolute in, absolute out)."""
    return p_kpa / KPA_PER_PSI


def kpa_from_psia(p_psia):
    """kPa from psi (absolute in, absolute out)."""
    return p_psia * KPA_PER_PSI


def psia_from_mpa(p_mpa):
    """psia from MPa (absolute)."""
    return p_mpa * 1000.0 / KPA_PER_PSI


def mpa_from_psia(p_psia):
    """MPa from psia (absolute)."""
    return p_psia * KPA_PER_PSI / 1000.0


def psia_from_bar(p_bar):
    """psia from bar (absolute; 1 bar = 100 kPa)."""
    return p_bar * 100.0 / KPA_PER_PSI


def bar_from_psia(p_psia):
    """bar (absolute) from psia."""
    return p_psia * KPA_PER_PSI / 100.0


def psia_from_psig(p_psig, atmosphere_psia: float = 14.696):
    """Absolute from gauge pressure with a stated atmosphere [psia].

    The default is the 14.696 psia standard atmosphere; pass the local barometric
    pressure where it is known (a gauge at altitude reads against less).
    """
    return p_psig + atmosphere_psia


def psig_from_psia(p_psia, atmosphere_psia: float = 14.696):
    """Gauge from absolute pressure with a stated atmosphere [psia]."""
    return p_psia - atmosphere_psia


def psia_from_barg(p_barg, atmosphere_psia: float = 14.696):
    """Absolute psia from a gauge pressure in bar with a stated atmosphere [psia]."""
    return psia_from_bar(p_barg) + atmosphere_psia


# --- volumes and depth ----------------------------------------------------------------


def scf_from_sm3(v_sm3, from_conditions=ISO_15C, to_conditions=OILFIELD_60F):
    """Standard ft3 from standard m3, each at its own standard conditions (equal moles)."""
    return v_sm3 / M3_PER_FT3 * standard_volume_ratio(from_conditions, to_conditions)


def sm3_from_scf(v_scf, from_conditions=OILFIELD_60F, to_conditions=ISO_15C):
    """Standard m3 from standard ft3, each at its own standard conditions (equal moles)."""
    return v_scf * M3_PER_FT3 * standard_volume_ratio(from_conditions, to_conditions)


def stb_from_m3(v_m3):
    """Barrels from cubic metres (a stock-tank m3 to a stock-tank barrel)."""
    return v_m3 / M3_PER_BBL


def m3_from_stb(v_stb):
    """Cubic metres from barrels."""
    return v_stb * M3_PER_BBL


def ft_from_m(d_m):
    """Feet from metres."""
    return d_m * FT_PER_M


def m_from_ft(d_ft):
    """Metres from feet."""
    return d_ft / FT_PER_M


# --- generic conversion at the edges ---------------------------------------------------

# unit (lower case) -> (kind, factor to the kind's base unit, offset added after scaling).
# Bases: psia, degR, scf (at the unit's standard conditions), stb, ft.
_UNITS: dict[str, tuple[str, float, float]] = {
    "psia": ("pressure", 1.0, 0.0),
    "kpa": ("pressure", 1.0 / KPA_PER_PSI, 0.0),
    "kpaa": ("pressure", 1.0 / KPA_PER_PSI, 0.0),
    "mpa": ("pressure", 1000.0 / KPA_PER_PSI, 0.0),
    "mpaa": ("pressure", 1000.0 / KPA_PER_PSI, 0.0),
    "bar": ("pressure", 100.0 / KPA_PER_PSI, 0.0),
    "bara": ("pressure", 100.0 / KPA_PER_PSI, 0.0),
    "psig": ("gauge_pressure", 1.0, 0.0),
    "barg": ("gauge_pressure", 100.0 / KPA_PER_PSI, 0.0),
    "kpag": ("gauge_pressure", 1.0 / KPA_PER_PSI, 0.0),
    "degr": ("temperature", 1.0, 0.0),
    "degf": ("temperature", 1.0, DEGR_OFFSET),
    "degc": ("temperature", DEGR_PER_K, 273.15 * DEGR_PER_K),
    "k": ("temperature", DEGR_PER_K, 0.0),
    "scf": ("gas_volume", 1.0, 0.0),
    "mscf": ("gas_volume", 1e3, 0.0),
    "mmscf": ("gas_volume", 1e6, 0.0),
    "bscf": ("gas_volume", 1e9, 0.0),
    "sm3": ("gas_volume", 1.0 / M3_PER_FT3, 0.0),
    "e3m3": ("gas_volume", 1e3 / M3_PER_FT3, 0.0),
    "e6m3": ("gas_volume", 1e6 / M3_PER_FT3, 0.0),
    "stb": ("liquid_volume", 1.0, 0.0),
    "bbl": ("liquid_volume", 1.0, 0.0),
    "m3": ("liquid_volume", 1.0 / M3_PER_BBL, 0.0),
    "ft": ("length", 1.0, 0.0),
    "m": ("length", FT_PER_M, 0.0),
}
#: Standard conditions a gas-volume unit is counted at unless the caller says otherwise.
_DEFAULT_GAS_CONDITIONS = {"scf": OILFIELD_60F, "sm3": ISO_15C}

UNIT_NAMES = tuple(sorted(_UNITS))


def unit_kind(unit: str) -> str:
    """'pressure', 'gauge_pressure', 'temperature', 'gas_volume', 'liquid_volume' or 'length'."""
    return _lookup(unit)[0]


def _lookup(unit: str):
    try:
        return _UNITS[unit.strip().lower()]
    except (KeyError, AttributeError):
        raise UnitError(f"unknown unit {unit!r}; known units: {', '.join(UNIT_NAMES)}") from None


def convert(
    value,
    from_unit: str,
    to_unit: str,
    *,
    atmosphere_psia: float | None = None,
    from_conditions: StandardConditions | None = None,
    to_conditions: StandardConditions | None = None,
):
    """Convert a value (or array) between two of Tankbook's unit names.

    Units are case-insensitive: psia, kPa, MPa, bar (absolute), psig, barg, kPag
    (gauge), degF, degR, degC, K, scf, Mscf, MMscf, Bscf, sm3, e3m3, e6m3 (standard
    gas volumes), stb, bbl, m3 (liquid volumes), ft, m.

    Parameters
    ----------
    atmosphere_psia : float
        Required whenever a gauge unit is involved: the atmosphere the gauge read
        against [psia]. There is no silent default.
    from_conditions, to_conditions : StandardConditions
        The standard state of each gas volume. By default the scf family is at
        60 degF/14.696 psia and the m3 family at 15 degC/101.325 kPa; volumes at
        different states are converted on an equal-moles, ideal-gas basis.

    Raises
    ------
    UnitError
        An unknown unit, units of different kinds, or a gauge unit without an
        atmosphere.
    """
    k_from, s_from, o_from = _lookup(from_unit)
    k_to, s_to, o_to = _lookup(to_unit)
    x = np.asarray(value, float) if not isinstance(value, int | float) else float(value)
    kinds = {k_from, k_to}
    if k_from != k_to and not kinds <= {"pressure", "gauge_pressure"}:
        raise UnitError(f"cannot convert {from_unit!r} ({k_from}) to {to_unit!r} ({k_to})")
    if k_from != k_to:  # gauge <-> absolute
        if atmosphere_psia is None or not atmosphere_psia > 0:
            raise UnitError(
                f"converting {from_unit!r} to {to_unit!r} needs the atmosphere the gauge read against"
            )
        p_psia = x * s_from + (atmosphere_psia if k_from == "gauge_pressure" else 0.0)
        return (p_psia - (atmosphere_psia if k_to == "gauge_pressure" else 0.0)) / s_to
    base = x * s_from + o_from
    if k_from == "gas_volume":
        c_from = from_conditions or _DEFAULT_GAS_CONDITIONS[_gas_family(from_unit)]
        c_to = to_conditions or _DEFAULT_GAS_CONDITIONS[_gas_family(to_unit)]
        base = base * standard_volume_ratio(c_from, c_to)
    return (base - o_to) / s_to


def _gas_family(unit: str) -> str:
    return "sm3" if unit.strip().lower().endswith("m3") else "scf"
