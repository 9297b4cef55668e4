"""Display units: every number a page, chart or export shows passes through here.

Tankbook stores oilfield units (psia, degF, ft, stb) and standard gas volumes at the
installation's storage basis (``Settings.standard_conditions``). A user chooses to see
"oilfield" or "si" units; SI gas volumes are shown at 15 °C / 101.325 kPa (ISO 13443),
converted on an equal-moles ideal-gas basis, and every gas-volume label names its basis.

Use one :class:`DisplayUnits` per request (``units_for(settings, user)``): in Python,
``du.value("pressure", 4632.8)`` and ``du.label("pressure")``; in templates, the
``du`` global with ``du.show("gas_bscf", x)`` (formatted text with a dash for missing
values) and ``du.label(...)``; in chart builders, pass ``du`` and convert arrays with
``du.values(kind, array)``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from ..engine.units import (
    FT_PER_M,
    ISO_15C,
    KPA_PER_PSI,
    M3_PER_BBL,
    M3_PER_FT3,
    OILFIELD_60F,
    StandardConditions,
    degC_from_degF,
    standard_volume_ratio,
)

FT3_PER_ACRE_FT = 43560.0  # 1 acre = 43,560 ft² (exact) × 1 ft
UnitSystemName = Literal["oilfield", "si"]
UNIT_SYSTEMS: tuple[UnitSystemName, ...] = ("oilfield", "si")
DASH = "–"


@dataclass(frozen=True)
class _Unit:
    label: str
    digits: int
    scale: float = 1.0  # display = stored * scale (+ offset via function for temperature)


def _table(system: UnitSystemName, basis: StandardConditions) -> dict[str, _Unit]:
    if system == "oilfield":
        b = basis.label
        return {
            "pressure": _Unit("psia", 1),
            "pressure_difference": _Unit("psi", 1),
            "pz": _Unit("psia", 1),
            "depth": _Unit("ft", 0),
            "temperature": _Unit("°F", 0),
            "gas_bscf": _Unit(f"Bscf ({b})", 1),
            "gas_mscf": _Unit(f"Mscf ({b})", 0),
            "rate_mmscf_per_day": _Unit(f"MMscf/d ({b})", 2),
            "rate_mscf_per_day": _Unit(f"Mscf/d ({b})", 0),
            "liquid_stb": _Unit("stb", 0),
            "compressibility_per_psi": _Unit("1/psi", 8),
            "pz_slope_psia_per_bscf": _Unit("psia/Bscf", 2),
            "bg": _Unit(f"rcf/scf ({b})", 6),
            "rock_volume": _Unit("acre-ft", 0, 1.0 / FT3_PER_ACRE_FT),
        }
    # Volume at ISO conditions per volume at the storage basis (equal moles), times ft3 -> m3.
    m3_per_scf = standard_volume_ratio(basis, ISO_15C) * M3_PER_FT3
    return {
        "pressure": _Unit("kPa", 0, KPA_PER_PSI),
        "pressure_difference": _Unit("kPa", 0, KPA_PER_PSI),
        "pz": _Unit("kPa", 0, KPA_PER_PSI),
        "depth": _Unit("m", 1, 1.0 / FT_PER_M),
        "temperature": _Unit("°C", 1),
        "gas_bscf": _Unit("10⁶ m³ (15 °C, 101.325 kPa)", 1, 1e9 * m3_per_scf / 1e6),
        "gas_mscf": _Unit("10³ m³ (15 °C, 101.325 kPa)", 1, 1e3 * m3_per_scf / 1e3),
        "rate_mmscf_per_day": _Unit("10³ m³/d (15 °C, 101.325 kPa)", 1, 1e6 * m3_per_scf / 1e3),
        "rate_mscf_per_day": _Unit("10³ m³/d (15 °C, 101.325 kPa)", 2, 1e3 * m3_per_scf / 1e3),
        "liquid_stb": _Unit("m³", 1, M3_PER_BBL),
        "compressibility_per_psi": _Unit("1/kPa", 9, 1.0 / KPA_PER_PSI),
        "pz_slope_psia_per_bscf": _Unit("kPa per 10⁶ m³", 3, KPA_PER_PSI / (1e9 * m3_per_scf / 1e6)),
        # Bg is reservoir volume per standard volume: rm³ per m³ at ISO conditions (ft³ per ft³
        # cancels, so only the standard volume's basis changes: divide by m³(ISO) per m³(basis)).
        "bg": _Unit("rm³/m³ (15 °C, 101.325 kPa)", 6, 1.0 / standard_volume_ratio(basis, ISO_15C)),
        "rock_volume": _Unit("10⁶ m³", 3, M3_PER_FT3 / 1e6),
    }


class DisplayUnits:
    """Converts stored values to the chosen unit system and formats them."""

    def __init__(self, system: UnitSystemName = "oilfield", basis: StandardConditions = OILFIELD_60F):
        if system not in UNIT_SYSTEMS:
            raise ValueError(f"unknown unit system {system!r}; choose one of {UNIT_SYSTEMS}")
        self.system = system
        self.basis = basis
        self._units = _table(system, basis)

    def _unit(self, kind: str) -> _Unit:
        try:
            return self._units[kind]
        except KeyError:
            raise ValueError(f"unknown display quantity {kind!r}") from None

    def label(self, kind: str) -> str:
        """The unit label of a quantity, e.g. "psia" or "10⁶ m³ (15 °C, 101.325 kPa)"."""
        return self._unit(kind).label

    def short_label(self, kind: str) -> str:
        """The unit without its standard-conditions basis ("Bscf"), where the basis is said nearby."""
        return self.label(kind).split(" (")[0]

    def value(self, kind: str, stored: float | None) -> float | None:
        """A stored value in display units (None stays None)."""
        if stored is None or (isinstance(stored, float) and not math.isfinite(stored)):
            return None
        if kind == "temperature":
            return float(degC_from_degF(stored)) if self.system == "si" else float(stored)
        return float(stored) * self._unit(kind).scale

    def values(self, kind: str, stored) -> list[float | None]:
        """A sequence of stored values in display units (for charts)."""
        arr = np.asarray(stored, dtype=float)
        if kind == "temperature":
            out = degC_from_degF(arr) if self.system == "si" else arr
        else:
            out = arr * self._unit(kind).scale
        return [None if not math.isfinite(v) else float(v) for v in out.tolist()]

    def show(self, kind: str, stored: float | None, digits: int | None = None) -> str:
        """Formatted text with thousands separators; a dash for missing values."""
        v = self.value(kind, stored)
        if v is None:
            return DASH
        d = self._unit(kind).digits if digits is None else digits
        return f"{v:,.{d}f}"

    def show_with_unit(self, kind: str, stored: float | None, digits: int | None = None) -> str:
        text = self.show(kind, stored, digits)
        return text if text == DASH else f"{text} {self.label(kind)}"


def units_for_request(request) -> DisplayUnits:
    """The display units of this request: the user's choice if they made one, else the
    team's default (team settings, falling back to ``Settings.display_units``), at the
    storage basis of the stored volumes."""
    from .deps import team_settings_for

    team = team_settings_for(request)
    principal = getattr(request.state, "principal", None)
    system = getattr(principal, "unit_system", None) or team.display_units
    return DisplayUnits(system, team.storage_basis)
