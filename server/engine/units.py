"""Units, conversions and standard conditions.

Internally the engine works in oilfield units: psia, degF/degR, ft, scf, stb.
Conversions happen at the edges with the functions here, named ``x_from_y``.
Constants are exact SI definitions (NIST SP 811, 2008 edition).
"""

from __future__ import annotations

from dataclasses import dataclass

KPA_PER_PSI = 6.894757293168361  # 1 lbf/in^2 = 4.4482216152605 N / (0.0254 m)^2
M3_PER_FT3 = 0.028316846592  # (0.3048 m)^3, exact
M3_PER_BBL = 0.158987294928  # 42 US gal x 3.785411784 L, exact
FT3_PER_BBL = M3_PER_BBL / M3_PER_FT3  # 5.614583...
FT_PER_M = 1.0 / 0.3048
DEGR_OFFSET = 459.67
GAS_CONSTANT_J_PER_MOL_K = 8.314462618  # CODATA 2018, exact
MOL_PER_LBMOL = 453.59237
#: R in psia ft3 / (lbmol degR), from the SI value.
GAS_CONSTANT_PSIA_FT3_PER_LBMOL_DEGR = (
    GAS_CONSTANT_J_PER_MOL_K * MOL_PER_LBMOL / (KPA_PER_PSI * 1000.0 * M3_PER_FT3) / 1.8
)


@dataclass(frozen=True)
class StandardConditions:
    """Reference state that every standard volume is stated at."""

    name: str
    p_sc_psia: float
    t_sc_degR: float

    @property
    def label(self) -> str:
        return self.name


#: US oilfield: 60 degF and 14.696 psia.
OILFIELD_60F = StandardConditions("60 °F, 14.696 psia", 14.696, 60.0 + DEGR_OFFSET)
#: ISO 13443: 15 degC and 101.325 kPa.
ISO_15C = StandardConditions("15 °C, 101.325 kPa", 101.325 / KPA_PER_PSI, 288.15 * 1.8)

STANDARD_CONDITIONS = {"oilfield": OILFIELD_60F, "iso": ISO_15C}


def standard_conditions(name: str) -> StandardConditions:
    """Look up a named standard condition; raise on an unknown name."""
    try:
        return STANDARD_CONDITIONS[name]
    except KeyError:
        raise ValueError(
            f"unknown standard conditions {name!r}; choose one of {sorted(STANDARD_CONDITIONS)}"
        ) from None


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


def psia_from_kpa(p_kpa):
    """psi from kPa (absolute in, absolute out)."""
    return p_kpa / KPA_PER_PSI


def kpa_from_psia(p_psia):
    """kPa from psi (absolute in, absolute out)."""
    return p_psia * KPA_PER_PSI


def psia_from_psig(p_psig, atmosphere_psia: float = 14.696):
    """Absolute from gauge pressure with a stated atmosphere [psia]."""
    return p_psig + atmosphere_psia
