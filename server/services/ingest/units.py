"""Units accepted in upload columns, and their conversion to the stored units.

Stored units are oilfield with absolute pressures (psia, degF, ft, Mscf, stb, Bscf).
Gas volumes in scf-based units are taken at the app's standard conditions; volumes in
cubic metres at 15 degC and 101.325 kPa (ISO 13443) and converted by the ideal-gas ratio
of the two reference states. Liquid volumes convert geometrically (common practice).

Every factor comes from :mod:`server.engine.units` (exact SI definitions, NIST SP 811);
this module only names the spellings a header may use and says in words what each means.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from ...engine.units import (
    FT3_PER_BBL,
    ISO_15C,
    M3_PER_FT3,
    StandardConditions,
    degF_from_degC,
    degF_from_K,
    ft_from_m,
    psia_from_bar,
    psia_from_kpa,
    psia_from_mpa,
    scf_from_sm3,
    stb_from_m3,
)

FT3_PER_M3 = 1.0 / M3_PER_FT3
FT3_PER_ACRE_FT = 43560.0  # 1 acre (43,560 ft2, exact) x 1 ft


def scf_per_sm3(target: StandardConditions) -> float:
    """Standard cubic feet at ``target`` per cubic metre at 15 degC, 101.325 kPa (ideal gas)."""
    return scf_from_sm3(1.0, ISO_15C, target)


@dataclass(frozen=True)
class Unit:
    """How to turn a value in this unit into the stored unit."""

    name: str  # canonical spelling used in templates and messages
    label: str  # what the preview says
    convert: Callable[[float], float]
    gauge: bool = False


@dataclass(frozen=True)
class Quantity:
    name: str
    stored_unit: str
    units: dict[str, Unit]  # alias (normalised) -> Unit
    choices: tuple[str, ...]  # canonical names offered on the upload form
    refused: dict[str, str]  # aliases refused with a reason (never guessed)
    default: str | None = None  # unit assumed when neither header nor form says (fractions only)


def _pressure(atmosphere_psia: float) -> Quantity:
    a = atmosphere_psia

    def absolute(name, label, factor):
        return Unit(name, label, lambda x, f=factor: x * f)

    def gauge(name, label, factor):
        return Unit(
            name,
            f"{label}, converted to psia with an atmosphere of {a:g} psia",
            lambda x, f=factor: x * f + a,
            gauge=True,
        )

    psia = absolute("psia", "psi absolute", 1.0)
    psig = gauge("psig", "psi gauge", 1.0)
    bara = absolute("bara", "bar absolute", psia_from_bar(1.0))
    barg = gauge("barg", "bar gauge", psia_from_bar(1.0))
    kpa = absolute("kpa", "kPa absolute", psia_from_kpa(1.0))
    kpag = gauge("kpag", "kPa gauge", psia_from_kpa(1.0))
    mpa = absolute("mpa", "MPa absolute", psia_from_mpa(1.0))
    mpag = gauge("mpag", "MPa gauge", psia_from_mpa(1.0))
    return Quantity(
        "pressure",
        "psia",
        {
            "psia": psia,
            "psig": psig,
            "bar": bara,
            "bara": bara,
            "bar_a": bara,
            "barg": barg,
            "bar_g": barg,
            "kpa": kpa,
            "kpaa": kpa,
            "kpa_a": kpa,
            "kpag": kpag,
            "kpa_g": kpag,
            "mpa": mpa,
            "mpaa": mpa,
            "mpa_a": mpa,
            "mpag": mpag,
            "mpa_g": mpag,
        },
        ("psia", "psig", "bara", "barg", "kpa", "kpag", "mpa", "mpag"),
        {"psi": "'psi' does not say absolute or gauge: write psia or psig"},
    )


def _gas(sc: StandardConditions) -> Quantity:
    k = scf_per_sm3(sc)
    at = f"at {sc.label}"
    metric = f"at 15 °C, 101.325 kPa, converted with {k:.4f} scf per m³"
    units = {
        "scf": Unit("scf", f"scf {at}", lambda x: x / 1000.0),
        "mscf": Unit("mscf", f"thousand scf {at}", lambda x: x),
        "mcf": Unit("mscf", f"thousand scf {at}", lambda x: x),
        "mmscf": Unit("mmscf", f"million scf {at}", lambda x: x * 1e3),
        "mmcf": Unit("mmscf", f"million scf {at}", lambda x: x * 1e3),
        "bscf": Unit("bscf", f"billion scf {at}", lambda x: x * 1e6),
        "bcf": Unit("bscf", f"billion scf {at}", lambda x: x * 1e6),
        "sm3": Unit("sm3", f"m³ {metric}", lambda x: x * k / 1000.0),
        "e3m3": Unit("e3m3", f"thousand m³ {metric}", lambda x: x * k),
        "e6m3": Unit("e6m3", f"million m³ {metric}", lambda x: x * k * 1e3),
    }
    return Quantity("gas volume", "mscf", units, ("mscf", "mmscf", "bscf", "sm3", "e3m3", "e6m3"), {})


def _gas_rate(sc: StandardConditions) -> Quantity:
    """Gas rates (stored Mscf/d); the same standard-condition rules as gas volumes."""
    k = scf_per_sm3(sc)
    at = f"at {sc.label}"
    metric = f"at 15 °C, 101.325 kPa, converted with {k:.4f} scf per m³"
    mscfd = Unit("mscf_per_day", f"thousand scf per day {at}", lambda x: x)
    mmscfd = Unit("mmscf_per_day", f"million scf per day {at}", lambda x: x * 1e3)
    e3m3d = Unit("e3m3_per_day", f"thousand m³ per day {metric}", lambda x: x * k)
    units = {
        "mscf_per_day": mscfd,
        "mscfd": mscfd,
        "mcfd": mscfd,
        "mmscf_per_day": mmscfd,
        "mmscfd": mmscfd,
        "sm3_per_day": Unit("sm3_per_day", f"m³ per day {metric}", lambda x: x * k / 1000.0),
        "e3m3_per_day": e3m3d,
        "e3m3d": e3m3d,
    }
    return Quantity(
        "gas rate",
        "mscf_per_day",
        units,
        ("mscf_per_day", "mmscf_per_day", "sm3_per_day", "e3m3_per_day"),
        {},
    )


def _giip(sc: StandardConditions) -> Quantity:
    k = scf_per_sm3(sc)
    metric = f"at 15 °C, 101.325 kPa, converted with {k:.4f} scf per m³"
    units = {
        "bscf": Unit("bscf", f"billion scf at {sc.label}", lambda x: x),
        "bcf": Unit("bscf", f"billion scf at {sc.label}", lambda x: x),
        "mmscf": Unit("mmscf", f"million scf at {sc.label}", lambda x: x / 1e3),
        "tscf": Unit("tscf", f"trillion scf at {sc.label}", lambda x: x * 1e3),
        "e6m3": Unit("e6m3", f"million m³ {metric}", lambda x: x * k / 1e3),
        "e9m3": Unit("e9m3", f"billion m³ {metric}", lambda x: x * k),
    }
    return Quantity("gas in place", "bscf", units, ("bscf", "e6m3", "e9m3"), {})


def _liquid() -> Quantity:
    stb = Unit("stb", "stock-tank barrels", lambda x: x)
    m3 = Unit("m3", "m³ at stock-tank conditions, 6.2898 bbl per m³", stb_from_m3)
    return Quantity("liquid volume", "stb", {"stb": stb, "bbl": stb, "m3": m3, "sm3": m3}, ("stb", "m3"), {})


def _depth() -> Quantity:
    ft = Unit("ft", "feet", lambda x: x)
    m = Unit("m", "metres, converted to feet", ft_from_m)
    return Quantity("depth", "ft", {"ft": ft, "feet": ft, "m": m, "metres": m, "meters": m}, ("ft", "m"), {})


def _temperature() -> Quantity:
    f = Unit("degF", "°F", lambda x: x)
    c = Unit("degC", "°C, converted to °F", degF_from_degC)
    k = Unit("K", "kelvin, converted to °F", degF_from_K)
    return Quantity(
        "temperature",
        "degF",
        {"degf": f, "deg_f": f, "f": f, "degc": c, "deg_c": c, "c": c, "k": k, "kelvin": k},
        ("degF", "degC"),
        {},
    )


def _fraction() -> Quantity:
    frac = Unit("frac", "fraction (0 to 1)", lambda x: x)
    pct = Unit("pct", "per cent, divided by 100", lambda x: x / 100.0)
    return Quantity(
        "fraction",
        "frac",
        {"frac": frac, "fraction": frac, "pct": pct, "percent": pct, "mol_pct": pct, "mol_frac": frac},
        ("frac", "pct"),
        {},
        default="frac",
    )


def _bg(sc: StandardConditions) -> Quantity:
    k = scf_per_sm3(sc)
    return Quantity(
        "gas formation volume factor",
        "rcf_per_scf",
        {
            "rcf_per_scf": Unit("rcf_per_scf", f"reservoir ft³ per scf at {sc.label}", lambda x: x),
            "rm3_per_sm3": Unit(
                "rm3_per_sm3", "reservoir m³ per m³ at 15 °C, 101.325 kPa", lambda x: x * FT3_PER_M3 / k
            ),
            "rb_per_mscf": Unit("rb_per_mscf", "reservoir bbl per Mscf", lambda x: x * FT3_PER_BBL / 1000.0),
        },
        ("rcf_per_scf", "rm3_per_sm3", "rb_per_mscf"),
        {},
    )


def _rock_volume() -> Quantity:
    return Quantity(
        "rock volume",
        "ft3",
        {
            "acre_ft": Unit("acre_ft", "acre-feet", lambda x: x * FT3_PER_ACRE_FT),
            "ft3": Unit("ft3", "cubic feet", lambda x: x),
            "m3": Unit("m3", "cubic metres", lambda x: x * FT3_PER_M3),
            "e6m3": Unit("e6m3", "million cubic metres", lambda x: x * 1e6 * FT3_PER_M3),
        },
        ("acre_ft", "m3", "e6m3"),
        {},
    )


def quantities(atmosphere_psia: float, sc: StandardConditions) -> dict[str, Quantity]:
    """Every quantity an upload column can hold, keyed by a short name."""
    return {
        "pressure": _pressure(atmosphere_psia),
        "gas": _gas(sc),
        "gas_rate": _gas_rate(sc),
        "giip": _giip(sc),
        "liquid": _liquid(),
        "depth": _depth(),
        "temperature": _temperature(),
        "fraction": _fraction(),
        "bg": _bg(sc),
        "rock_volume": _rock_volume(),
    }


#: The quantities whose unit the upload form can choose for columns named without one.
FORM_UNIT_CHOICES = ("pressure", "gas", "liquid", "depth", "temperature")
