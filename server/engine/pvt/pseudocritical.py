"""Pseudo-critical temperature and pressure of a natural gas from its gravity.

Gravity correlations (Sutton; Standing for natural gas and for gas-condensate well
streams), the inerts procedure for gases with much CO2, N2 or any H2S, and the
Wichert-Aziz correction for the acid gases.

References
----------
Sutton, R.P. (1985). Compressibility factors for high-molecular-weight reservoir
    gases. SPE-14265-MS.
Standing, M.B. (1977). Volumetric and Phase Behavior of Oil Field Hydrocarbon
    Systems. SPE, Dallas, pp. 125-126.
Wichert, E. and Aziz, K. (1972). Calculate Z's for sour gases. Hydrocarbon
    Processing 51(5), 119-122.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputRangeError

#: Methane's gravity (16.043/28.9647): no hydrocarbon gas is lighter.
METHANE_GRAVITY = 0.5539
INERTS_METHODS = ("auto", "always", "never")
#: Wichert & Aziz (1972) data range (Mokhatab et al., Handbook of Natural Gas
#: Transmission and Processing, p. 39).
WA_CO2_MAX_FRAC = 0.544
WA_H2S_MAX_FRAC = 0.738


def _gravity(gas_gravity):
    g = np.asarray(gas_gravity, dtype=float)
    if np.any(~np.isfinite(g)) or np.any(g < METHANE_GRAVITY - 5e-4):
        raise InputRangeError(
            f"gas gravity {gas_gravity!r} is not a number or is lighter than methane ({METHANE_GRAVITY})"
        )
    return g


def pseudo_critical_sutton(gas_gravity):
    """Pseudo-critical temperature and pressure of a hydrocarbon gas (Sutton 1985).

    Tpc = 169.2 + 349.5 g - 74.0 g^2 [degR];  ppc = 756.8 - 131.0 g - 3.6 g^2 [psia].

    Parameters
    ----------
    gas_gravity : float or array
        Gas specific gravity [-], air = 1. Stated range 0.57-1.68.

    Returns
    -------
    (tpc_degR, ppc_psia)

    References
    ----------
    Sutton (1985), SPE-14265-MS.
    """
    g = _gravity(gas_gravity)
    return 169.2 + 349.5 * g - 74.0 * g**2, 756.8 - 131.0 * g - 3.6 * g**2


def pseudo_critical_standing_natural_gas(gas_gravity):
    """Pseudo-criticals of a natural gas (Standing 1977, natural-gas curve).

    Tpc = 168 + 325 g - 12.5 g^2 [degR];  ppc = 677 + 15.0 g - 37.5 g^2 [psia].
    Fitted to low-molecular-weight natural gases without inerts.

    Parameters
    ----------
    gas_gravity : float or array
        Gas specific gravity [-], air = 1.

    Returns
    -------
    (tpc_degR, ppc_psia)

    References
    ----------
    Standing (1977), Volumetric and Phase Behavior of Oil Field Hydrocarbon Systems, p. 125.
    """
    g = _gravity(gas_gravity)
    return 168.0 + 325.0 * g - 12.5 * g**2, 677.0 + 15.0 * g - 37.5 * g**2


def pseudo_critical_standing_condensate(gas_gravity):
    """Pseudo-criticals of a gas-condensate well stream (Standing 1977, condensate curve).

    Tpc = 187 + 330 g - 71.5 g^2 [degR];  ppc = 706 - 51.7 g - 11.1 g^2 [psia].

    Parameters
    ----------
    gas_gravity : float or array
        Well-stream (recombined) gravity [-], air = 1.

    Returns
    -------
    (tpc_degR, ppc_psia)

    References
    ----------
    Standing (1977), Volumetric and Phase Behavior of Oil Field Hydrocarbon Systems, p. 126.
    """
    g = _gravity(gas_gravity)
    return 187.0 + 330.0 * g - 71.5 * g**2, 706.0 - 51.7 * g - 11.1 * g**2


GRAVITY_CORRELATIONS = {
    "sutton": pseudo_critical_sutton,
    "standing_natural_gas": pseudo_critical_standing_natural_gas,
    "standing_condensate": pseudo_critical_standing_condensate,
}
CORRELATION_LABELS = {
    "sutton": "Sutton (1985)",
    "standing_natural_gas": "Standing (1977) natural gas",
    "standing_condensate": "Standing (1977) gas condensate",
}


def wichert_aziz(tpc_degR, ppc_psia, y_co2_frac, y_h2s_frac):
    """Wichert & Aziz (1972) correction of pseudo-criticals for CO2 and H2S.

    eps = 120 (A^0.9 - A^1.6) + 15 (B^0.5 - B^4) [degR], A = yCO2 + yH2S, B = yH2S;
    T'pc = Tpc - eps;  p'pc = ppc T'pc / (Tpc + B (1 - B) eps).

    Parameters
    ----------
    tpc_degR, ppc_psia : float
        Pseudo-criticals before the correction [degR, psia].
    y_co2_frac, y_h2s_frac : float
        Mole fractions of CO2 and H2S [-]; data range CO2 < 0.544, H2S < 0.738.

    Returns
    -------
    (tpc_degR, ppc_psia, epsilon_degR)

    Raises
    ------
    InputRangeError
        Fractions negative or beyond the range of the correlation's data.

    References
    ----------
    Wichert & Aziz (1972), Hydrocarbon Processing 51(5), 119-122 (equations from
    memory); range: Mokhatab et al., Handbook of Natural Gas Transmission and
    Processing, p. 39.
    """
    if not (0.0 <= y_co2_frac < WA_CO2_MAX_FRAC and 0.0 <= y_h2s_frac < WA_H2S_MAX_FRAC):
        raise InputRangeError(
            f"Wichert-Aziz covers CO2 below {WA_CO2_MAX_FRAC:.1%} and H2S below {WA_H2S_MAX_FRAC:.1%} "
            f"(got CO2 {y_co2_frac:.1%}, H2S {y_h2s_frac:.1%})"
        )
    a = y_co2_frac + y_h2s_frac
    b = y_h2s_frac
    eps = 120.0 * (a**0.9 - a**1.6) + 15.0 * (b**0.5 - b**4)
    tpc_new = tpc_degR - eps
    ppc_new = ppc_psia * tpc_new / (tpc_degR + b * (1.0 - b) * eps)
    return tpc_new, ppc_new, eps


def hydrocarbon_gravity(gas_gravity, y_co2_frac, y_h2s_frac, y_n2_frac, y_h2o_frac=0.0):
    """Gravity of the hydrocarbon part of a gas with inerts.

    g_h = (g - 1.1767 yH2S - 1.5196 yCO2 - 0.9672 yN2 - 0.622 yH2O) / (1 - sum y).

    Raises
    ------
    InputRangeError
        If the result is lighter than methane: the gravity and the inert fractions
        cannot both be right.

    References
    ----------
    The inerts procedure as transcribed for Sutton's correlation (Standing 1977;
    Whitson & Brule 2000, Phase Behavior, SPE Monograph 20 - from memory).
    """
    y_sum = y_co2_frac + y_h2s_frac + y_n2_frac + y_h2o_frac
    if not 0.0 <= y_sum < 1.0:
        raise InputRangeError(f"inert fractions must add up to less than 1 (got {y_sum:.3f})")
    gh = (
        gas_gravity - 1.1767 * y_h2s_frac - 1.5196 * y_co2_frac - 0.9672 * y_n2_frac - 0.622 * y_h2o_frac
    ) / (1.0 - y_sum)
    if gh < METHANE_GRAVITY - 5e-4:
        raise InputRangeError(
            f"gas gravity {gas_gravity:.4f} with {y_co2_frac:.1%} CO2, {y_h2s_frac:.1%} H2S and "
            f"{y_n2_frac:.1%} N2 leaves a hydrocarbon part of gravity {gh:.3f}, lighter than "
            "methane: check the gravity and the composition"
        )
    return gh


@dataclass(frozen=True)
class PseudoCriticals:
    """Pseudo-critical properties and how they were obtained."""

    tpc_degR: float
    ppc_psia: float
    correlation: str
    inerts_applied: bool
    hydrocarbon_gravity: float | None  # when the inerts procedure was used
    wichert_aziz_epsilon_degR: float  # 0 when there is no CO2 or H2S

    @property
    def description(self) -> str:
        parts = [CORRELATION_LABELS[self.correlation] + " pseudo-criticals"]
        if self.inerts_applied:
            parts.append(f"inerts mixed in (hydrocarbon gravity {self.hydrocarbon_gravity:.4f})")
        if self.wichert_aziz_epsilon_degR:
            parts.append(f"Wichert-Aziz for CO2/H2S (eps {self.wichert_aziz_epsilon_degR:.2f} degR)")
        return ", ".join(parts)


def inerts_needed(y_co2_frac, y_h2s_frac, y_n2_frac) -> bool:
    """The rule for the inerts procedure: CO2 above 12 %, N2 above 3 %, or any H2S."""
    return y_co2_frac > 0.12 or y_n2_frac > 0.03 or y_h2s_frac > 0.0


def pseudo_criticals(
    gas_gravity: float,
    y_co2_frac: float = 0.0,
    y_h2s_frac: float = 0.0,
    y_n2_frac: float = 0.0,
    *,
    correlation: str = "sutton",
    inerts: str = "auto",
) -> PseudoCriticals:
    """Pseudo-criticals of a natural gas with the inerts and sour-gas corrections.

    With inerts (``inerts="auto"`` applies the procedure when CO2 > 12 %, N2 > 3 % or
    any H2S; ``"always"``/``"never"`` force it) the gravity correlation is applied to
    the hydrocarbon gravity and mixed with the inerts' own constants:

        ppc = (1 - sum y) ppc_h + 1306 yH2S + 1071 yCO2 + 493.1 yN2      [psia]
        Tpc = (1 - sum y) Tpc_h + 672.35 yH2S + 547.58 yCO2 + 227.16 yN2 [degR]

    then Wichert-Aziz corrects for the acid gases (whenever CO2 or H2S is present).

    Parameters
    ----------
    gas_gravity : float
        Gravity of the whole gas [-], air = 1.
    y_co2_frac, y_h2s_frac, y_n2_frac : float
        Mole fractions [-].
    correlation : {"sutton", "standing_natural_gas", "standing_condensate"}
    inerts : {"auto", "always", "never"}

    Returns
    -------
    PseudoCriticals

    References
    ----------
    Sutton (1985); Standing (1977) pp. 125-126; Wichert & Aziz (1972). The inerts
    procedure: stored course handout "algorithm - Sutton correlation" (see
    docs/domain-reference.md section 1.4).
    """
    try:
        corr = GRAVITY_CORRELATIONS[correlation]
    except KeyError:
        raise ValueError(
            f"unknown pseudo-critical method {correlation!r}; choose one of {sorted(GRAVITY_CORRELATIONS)}"
        ) from None
    if inerts not in INERTS_METHODS:
        raise ValueError(f"unknown inerts method {inerts!r}; choose one of {list(INERTS_METHODS)}")
    use_inerts = inerts == "always" or (inerts == "auto" and inerts_needed(y_co2_frac, y_h2s_frac, y_n2_frac))
    gh = None
    if use_inerts:
        gh = hydrocarbon_gravity(gas_gravity, y_co2_frac, y_h2s_frac, y_n2_frac)
        tpc_h, ppc_h = corr(gh)
        y_hc = 1.0 - y_co2_frac - y_h2s_frac - y_n2_frac
        ppc = y_hc * ppc_h + 1306.0 * y_h2s_frac + 1071.0 * y_co2_frac + 493.1 * y_n2_frac
        tpc = y_hc * tpc_h + 672.35 * y_h2s_frac + 547.58 * y_co2_frac + 227.16 * y_n2_frac
    else:
        tpc, ppc = corr(gas_gravity)
    eps = 0.0
    if y_co2_frac > 0 or y_h2s_frac > 0:
        tpc, ppc, eps = wichert_aziz(tpc, ppc, y_co2_frac, y_h2s_frac)
    return PseudoCriticals(float(tpc), float(ppc), correlation, use_inerts, gh, float(eps))
