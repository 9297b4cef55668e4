"""Which gas gravity z uses for a wet gas: recombined, given, or the separator gas's own.

Teams describe a gas-condensate fluid in one of two ways:

* the separator (sales) gas gravity with the condensate's API gravity, the yield coming
  from production; the reservoir gas is then recombined from them
  (:func:`.condensate.wellstream_gravity`, the Gold et al. form in Craft & Hawkins);
* the well-stream (reservoir) gravity itself, from a laboratory recombination or a
  PVT report; it is then used as it is.

When both are given the well-stream gravity is used and the recombination is only a
check: they should agree within :data:`AGREEMENT_TOLERANCE_FRAC`. When only the
separator gravity is given, a separator gas that is already as heavy as a well stream
(:data:`SEPARATOR_GAS_GRAVITY_USUAL_MAX`) is probably a well-stream gravity entered in
the wrong column; recombining it a second time makes the gas far heavier than any
usual separator gas could give at that yield, and z wrong (issue 12: +9 % GIIP).

References
----------
Gold, D.K., McCain, W.D. Jr. and Jennings, J.W. (1989). An improved method for the
    determination of the reservoir-gas specific gravity for retrograde gases. JPT
    41(7), 747-752, SPE-17310-PA (from memory; the recombination form
    (R g_g + 4,584 g_o)/(R + 132,800 g_o/M_o) is the one in Craft & Hawkins (1991) and
    docs/domain-reference.md section 2.6).
Craft, B.C. and Hawkins, M.F. (1991). Applied Petroleum Reservoir Engineering, 2nd
    ed. rev. R.E. Terry, ch. "Gas-condensate reservoirs" (from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

from ..units import OILFIELD_60F, StandardConditions
from .condensate import wellstream_gravity
from .pseudocritical import hydrocarbon_gravity

#: The usual separator (sales) gas of a gas-condensate field: hydrocarbon gravity about
#: 0.60-0.85 (common practice, from memory: a separator flash leaves mostly methane to
#: butanes in the gas; the heavier stock-tank vent gas is a small share of the total).
SEPARATOR_GAS_GRAVITY_USUAL_MIN = 0.60
SEPARATOR_GAS_GRAVITY_USUAL_MAX = 0.85
#: A recombination that adds less than this to the gravity changes z by about 1 % or less
#: (computed: at most 1.1 % with DAK/Sutton over 1,000-8,000 psia, 150-230 degF, gravity
#: 0.7-1.0; docs/domain-reference.md section 2.6): no warning about it.
MATERIAL_GRAVITY_CHANGE = 0.02
#: Given and recombined well-stream gravities that differ by more than this (relative)
#: are reported: 3 % in gravity moves z by 0.1-1.6 % (computed on the same grid, domain
#: reference section 2.6); the recombination itself is good to a few per cent
#: (common practice, from memory).
AGREEMENT_TOLERANCE_FRAC = 0.03


@dataclass(frozen=True)
class GravityForZ:
    """The gravity z is computed for, where it came from, and what to tell the reader.

    ``source``: "separator" (no condensate correction applies), "recombined" (from the
    separator gas, the yield and the API gravity) or "given" (the well-stream gravity
    as entered). ``warning`` is set when the gravity needs a person's check.
    """

    gravity: float
    source: str
    note: str | None = None
    warning: str | None = None
    recombined: float | None = None  # the recombination, when it could be made


def usual_wellstream_range(
    condensate_yield_stb_per_mmscf: float, api: float, conditions: StandardConditions = OILFIELD_60F
) -> tuple[float, float]:
    """Well-stream gravities a usual separator gas (0.60-0.85) recombines to at this yield and API [-]."""
    return tuple(
        wellstream_gravity(g, condensate_yield_stb_per_mmscf, api, conditions)
        for g in (SEPARATOR_GAS_GRAVITY_USUAL_MIN, SEPARATOR_GAS_GRAVITY_USUAL_MAX)
    )


def recombination_warning(
    separator_gas_gravity: float,
    condensate_yield_stb_per_mmscf: float,
    api: float,
    inerts: tuple[float, float, float] = (0.0, 0.0, 0.0),
    conditions: StandardConditions = OILFIELD_60F,
) -> str | None:
    """A plain-words warning when recombining this separator gravity is implausible, else None.

    Fires when the separator gas's hydrocarbon gravity is above the usual separator gas
    (:data:`SEPARATOR_GAS_GRAVITY_USUAL_MAX`), so that the recombined gravity lies beyond
    the well-stream range a usual separator gas gives at this yield, and the recombination
    adds at least :data:`MATERIAL_GRAVITY_CHANGE`.

    Parameters
    ----------
    separator_gas_gravity : float
        As entered [-] (air = 1), inerts included.
    condensate_yield_stb_per_mmscf : float
        Condensate per separator gas [stb/MMscf].
    api : float
        Condensate API gravity [degAPI].
    inerts : (y_CO2, y_H2S, y_N2)
        Mole fractions [-]; the rule looks at the hydrocarbon part.
    """
    recombined = wellstream_gravity(separator_gas_gravity, condensate_yield_stb_per_mmscf, api, conditions)
    gh = hydrocarbon_gravity(separator_gas_gravity, *inerts)
    if gh <= SEPARATOR_GAS_GRAVITY_USUAL_MAX or recombined - separator_gas_gravity < MATERIAL_GRAVITY_CHANGE:
        return None
    lo, hi = usual_wellstream_range(condensate_yield_stb_per_mmscf, api, conditions)
    looks = (
        f"; {separator_gas_gravity:.3f} itself lies in that range, as a well-stream gravity would"
        if lo <= separator_gas_gravity <= hi
        else ""
    )
    return (
        f"the separator gas gravity {separator_gas_gravity:.3f} is heavier than separator gas usually is "
        f"(about {SEPARATOR_GAS_GRAVITY_USUAL_MIN:.2f} to {SEPARATOR_GAS_GRAVITY_USUAL_MAX:.2f}); recombined "
        f"with {condensate_yield_stb_per_mmscf:.0f} stb/MMscf of {api:g} °API condensate it becomes "
        f"{recombined:.3f}, while a usual separator gas gives {lo:.3f} to {hi:.3f} at this yield{looks}. "
        "If it is the well-stream (reservoir) gravity, enter it as the well-stream gravity: recombining "
        "it again makes the gas too heavy and z, and so the gas in place, wrong"
    )


def gravity_for_z(
    *,
    separator_gas_gravity: float | None,
    given_wellstream_gravity: float | None,
    condensate_yield_stb_per_mmscf: float,
    api: float | None,
    recombine: bool,
    inerts: tuple[float, float, float] = (0.0, 0.0, 0.0),
    conditions: StandardConditions = OILFIELD_60F,
) -> GravityForZ:
    """Choose the gravity z uses and say why.

    Parameters
    ----------
    separator_gas_gravity : float or None
        Separator gas gravity [-], None when only the well-stream gravity is known.
    given_wellstream_gravity : float or None
        Well-stream (reservoir gas) gravity as entered [-]; when given, z uses it as it is.
    condensate_yield_stb_per_mmscf : float
        Produced condensate per separator gas [stb/MMscf] (0 when none was produced).
    api : float or None
        Condensate API gravity [degAPI].
    recombine : bool
        The condensate correction is on: without a given well-stream gravity the
        separator gas is recombined (when there is condensate and an API gravity).
    """
    if separator_gas_gravity is None and given_wellstream_gravity is None:
        raise ValueError("a separator gas gravity or a well-stream gravity is needed")
    y = condensate_yield_stb_per_mmscf
    can_recombine = separator_gas_gravity is not None and (y == 0 or (y > 0 and api is not None))
    recombined = None
    if can_recombine:
        recombined = separator_gas_gravity
        if y > 0:
            recombined = wellstream_gravity(separator_gas_gravity, y, api, conditions)
    if given_wellstream_gravity is None:
        if recombine and y > 0 and api is not None:
            return GravityForZ(
                recombined,
                "recombined",
                warning=recombination_warning(separator_gas_gravity, y, api, inerts, conditions),
                recombined=recombined,
            )
        return GravityForZ(separator_gas_gravity, "separator", recombined=recombined)
    gw = given_wellstream_gravity
    if separator_gas_gravity is None:
        return GravityForZ(gw, "given", note=f"z uses the well-stream gravity {gw:.4f} as given")
    if recombined is None:
        return GravityForZ(
            gw,
            "given",
            note=f"z uses the well-stream gravity {gw:.4f} as given (separator gas "
            f"{separator_gas_gravity:.4f}; no API gravity to check it by recombination)",
        )
    what = (
        f"recombining the separator gas {separator_gas_gravity:.4f} with {y:.0f} stb/MMscf of "
        f"{api:g} °API condensate gives {recombined:.4f}"
        if y > 0
        else f"with no condensate produced the separator gas {separator_gas_gravity:.4f} is the whole stream"
    )
    note = f"z uses the well-stream gravity {gw:.4f} as given; {what}"
    warning = None
    differ = abs(recombined / gw - 1.0)
    if differ > AGREEMENT_TOLERANCE_FRAC:
        warning = (
            f"the given well-stream gravity {gw:.3f} and the separator gas data disagree: {what[0].lower()}"
            f"{what[1:]}, {100 * differ:.0f} % apart (more than {100 * AGREEMENT_TOLERANCE_FRAC:.0f} %). "
            "z uses the given well-stream gravity; check which is right"
        )
    return GravityForZ(gw, "given", note=note, warning=warning, recombined=recombined)
