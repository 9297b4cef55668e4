"""The kinds of upload file and their columns (names, units, ranges, examples).

Column names are written with their unit when they have one (``pressure_psig``,
``gauge_depth_m``); the unit may instead be chosen on the upload form. docs/uploads.md
is the user's version of this module.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

SURVEY_KINDS = ("static", "buildup", "formation_test")
SURVEY_KIND_ALIASES = {
    "build_up": "buildup",
    "build_up_extrapolated": "buildup",
    "formation": "formation_test",
}
SURVEY_QUALITIES = ("good", "fair", "poor")
VOLUMETRIC_METHODS = ("deterministic", "monte_carlo")
MC_PARAMETERS = ("rock_volume", "net_to_gross", "porosity", "gas_saturation", "bgi")
CASES = ("low", "best", "high")


@dataclass(frozen=True)
class Range:
    """Physical bounds in the stored unit; outside them a value is an error."""

    lo: float
    hi: float
    lo_open: bool = False
    hi_open: bool = False
    unit: str = ""
    below: str = ""  # message when the value is below the range, if not the generic one

    def problem(self, x: float) -> str:
        if self.below and not (x > self.lo if self.lo_open else x >= self.lo):
            return self.below
        return self.describe()

    def contains(self, x: float) -> bool:
        above = x > self.lo if self.lo_open else x >= self.lo
        below = x < self.hi if self.hi_open else x <= self.hi
        return above and below

    def describe(self) -> str:
        lo = "above" if self.lo_open else "at least"
        hi = "below" if self.hi_open else "at most"
        u = f" {self.unit}" if self.unit else ""
        return f"must be {lo} {self.lo:,g}{u} and {hi} {self.hi:,g}{u}"


@dataclass(frozen=True)
class Column:
    name: str  # Tankbook's column name without its unit
    type: str  # "name" | "text" | "number" | "date" | "month" | "choice"
    quantity: str | None = None  # key of services.ingest.units.quantities()
    required: bool = True
    default: Any = None
    help: str = ""
    choices: tuple[str, ...] = ()
    choice_aliases: dict[str, str] = field(default_factory=dict)
    aliases: tuple[str, ...] = ()  # other header spellings accepted, documented
    bounds: Range | None = None
    warn: Range | None = None  # outside this range: a warning
    template_unit: str | None = None
    examples: tuple[Any, Any] = ("", "")
    max_len: int = 120

    @property
    def template_header(self) -> str:
        return f"{self.name}_{self.template_unit}" if self.template_unit else self.name


@dataclass(frozen=True)
class FileKind:
    name: str
    title: str
    columns: tuple[Column, ...]
    key: tuple[str, ...]  # columns that identify a row; a repeated key is an error
    help: str = ""
    example_rows: int = 2  # rows of invented examples in the templates

    def column(self, name: str) -> Column:
        return next(c for c in self.columns if c.name == name)


_P = Range(0.0, 30000.0, lo_open=True, hi_open=True, unit="psia")
_DEPTH = Range(0.0, 40000.0, unit="ft")
# Non-negative; the upper bound only catches absurd numbers (1e12 Mscf is a thousand Tscf).
_VOL = Range(0.0, 1e12, below="volumes cannot be negative")
_FRAC = Range(0.0, 1.0, unit="(fraction)")

FIELD = Column(
    "field",
    "name",
    help="field name; new fields come from a fields file",
    aliases=("field_name",),
    examples=("Example Field", "Example Field"),
)
WELL = Column(
    "well", "name", help="well name within the field", aliases=("well_name",), examples=("EX-1", "EX-2")
)


def _kinds() -> dict[str, FileKind]:
    fields = FileKind(
        "fields",
        "Fields",
        (
            FIELD,
            Column(
                "asset",
                "name",
                help="asset or business unit; created if new",
                examples=("Example Asset",) * 2,
            ),
            Column("basin", "text", required=False, default="", examples=("Example Basin",) * 2),
            Column(
                "datum_depth",
                "number",
                "depth",
                bounds=_DEPTH,
                template_unit="ft",
                help="datum depth (true vertical) that pressures are referred to",
                examples=(10000, 10000),
            ),
            Column(
                "reservoir_temperature",
                "number",
                "temperature",
                bounds=Range(32.0, 700.0, True, True, "°F"),
                warn=Range(60.0, 450.0, unit="°F"),
                template_unit="degF",
                examples=(210, 210),
            ),
            Column(
                "initial_pressure",
                "number",
                "pressure",
                bounds=_P,
                template_unit="psia",
                help="initial reservoir pressure at the datum",
                examples=(5200, 5200),
            ),
            Column(
                "abandonment_pressure",
                "number",
                "pressure",
                bounds=_P,
                template_unit="psia",
                help="average reservoir pressure at abandonment",
                examples=(800, 800),
            ),
            Column("description", "text", required=False, default="", max_len=2000, examples=("", "")),
        ),
        key=("field",),
        help="one row per field; creates fields (and assets) or, with replace, corrects them",
        example_rows=1,
    )
    wells = FileKind(
        "wells",
        "Wells",
        (
            FIELD,
            WELL,
            Column(
                "compartment",
                "name",
                required=False,
                max_len=60,
                help="compartment label (optional)",
                examples=("north", "south"),
            ),
            Column(
                "gauge_reference_depth",
                "number",
                "depth",
                required=False,
                bounds=_DEPTH,
                template_unit="ft",
                help="usual gauge depth; surveys without a depth use it",
                examples=(9950, 10020),
            ),
        ),
        key=("field", "well"),
        help="one row per well; the field must exist",
    )
    fluids = FileKind(
        "fluids",
        "Fluid descriptions",
        (
            FIELD,
            Column(
                "gas_gravity",
                "number",
                bounds=Range(0.55, 1.8, True, True),
                help="gas specific gravity (air = 1)",
                examples=(0.65, 0.65),
            ),
            Column(
                "co2",
                "number",
                "fraction",
                required=False,
                default=0.0,
                bounds=_FRAC,
                template_unit="frac",
                help="CO2 mole fraction",
                examples=(0.01, 0.01),
            ),
            Column(
                "h2s",
                "number",
                "fraction",
                required=False,
                default=0.0,
                bounds=_FRAC,
                template_unit="frac",
                examples=(0.0, 0.0),
            ),
            Column(
                "n2",
                "number",
                "fraction",
                required=False,
                default=0.0,
                bounds=_FRAC,
                template_unit="frac",
                examples=(0.005, 0.005),
            ),
            Column(
                "condensate_api",
                "number",
                required=False,
                bounds=Range(10.0, 100.0, True, True),
                help="condensate API gravity (optional)",
                examples=(55, 55),
            ),
        ),
        key=("field",),
        help="one row per field",
        example_rows=1,
    )
    lab = FileKind(
        "lab_table",
        "Fluid lab tables",
        (
            FIELD,
            Column("pressure", "number", "pressure", bounds=_P, template_unit="psia", examples=(5200, 3000)),
            Column(
                "z_factor",
                "number",
                required=False,
                bounds=Range(0.1, 3.0, True, True),
                examples=(0.98, 0.87),
            ),
            Column(
                "bg",
                "number",
                "bg",
                required=False,
                bounds=Range(0.0, 2.0, True, False),
                template_unit="rcf_per_scf",
                help="gas formation volume factor",
                examples=("", ""),
            ),
        ),
        key=("field", "pressure"),
        help="the whole table of each field named (pressure → z or Bg at reservoir temperature)",
    )
    surveys = FileKind(
        "surveys",
        "Pressure surveys",
        (
            FIELD,
            WELL,
            Column(
                "survey_date",
                "date",
                aliases=("date",),
                help="date of the survey",
                examples=("2019-03-14", "2019-03-15"),
            ),
            Column(
                "pressure",
                "number",
                "pressure",
                bounds=_P,
                template_unit="psia",
                help="pressure at the gauge",
                examples=(4810.5, 4795.0),
            ),
            Column(
                "gauge_depth",
                "number",
                "depth",
                required=False,
                bounds=_DEPTH,
                template_unit="ft",
                help="true vertical depth of the gauge; blank uses the well's reference depth",
                examples=(9950, ""),
            ),
            Column(
                "kind",
                "choice",
                required=False,
                default="static",
                choices=SURVEY_KINDS,
                choice_aliases=SURVEY_KIND_ALIASES,
                examples=("static", "buildup"),
            ),
            Column(
                "quality",
                "choice",
                required=False,
                default="good",
                choices=SURVEY_QUALITIES,
                examples=("good", "fair"),
            ),
        ),
        key=("field", "well", "survey_date"),
        help="one row per survey",
    )
    production = FileKind(
        "production",
        "Monthly production",
        (
            FIELD,
            WELL,
            Column(
                "month",
                "month",
                aliases=("production_month",),
                help="YYYY-MM (a date is read as its month)",
                examples=("2019-01", "2019-01"),
            ),
            Column(
                "gas",
                "number",
                "gas",
                bounds=_VOL,
                template_unit="mscf",
                help="gas produced in the month",
                examples=(152000, 98000),
            ),
            Column(
                "condensate",
                "number",
                "liquid",
                required=False,
                default=0.0,
                bounds=_VOL,
                template_unit="stb",
                examples=(3100, 2050),
            ),
            Column(
                "water",
                "number",
                "liquid",
                required=False,
                default=0.0,
                bounds=_VOL,
                template_unit="stb",
                examples=(120, 40),
            ),
            Column(
                "cum_gas",
                "number",
                "gas",
                required=False,
                bounds=_VOL,
                template_unit="mscf",
                help="cumulative gas at month end (optional; checked, not stored)",
                examples=("", ""),
            ),
            Column(
                "cum_condensate",
                "number",
                "liquid",
                required=False,
                bounds=_VOL,
                template_unit="stb",
                help="cumulative condensate (optional; checked, not stored)",
                examples=("", ""),
            ),
            Column(
                "cum_water",
                "number",
                "liquid",
                required=False,
                bounds=_VOL,
                template_unit="stb",
                help="cumulative water (optional; checked, not stored)",
                examples=("", ""),
            ),
        ),
        key=("field", "well", "month"),
        help="one row per well and month",
    )
    mc = []
    for p in MC_PARAMETERS:
        for case in CASES:
            if p == "rock_volume":
                mc.append(
                    Column(
                        f"rock_volume_{case}",
                        "number",
                        "rock_volume",
                        required=False,
                        bounds=Range(0.0, 1e15, True),
                        template_unit="acre_ft",
                    )
                )
            elif p == "bgi":
                mc.append(
                    Column(
                        f"bgi_{case}",
                        "number",
                        "bg",
                        required=False,
                        bounds=Range(0.0, 2.0, True),
                        template_unit="rcf_per_scf",
                    )
                )
            else:
                hi = 0.5 if p == "porosity" else 1.0
                mc.append(
                    Column(
                        f"{p}_{case}",
                        "number",
                        "fraction",
                        required=False,
                        bounds=Range(0.0, hi, True, False, "(fraction)"),
                        template_unit="frac",
                    )
                )
    volumetrics = FileKind(
        "volumetrics",
        "Volumetric estimates",
        (
            FIELD,
            Column("estimate_date", "date", aliases=("date",), examples=("2018-06-30", "2018-06-30")),
            Column("author", "text", required=False, default="", examples=("geoscience team", "")),
            Column(
                "giip_low",
                "number",
                "giip",
                bounds=Range(0.0, 1e6, True),
                template_unit="bscf",
                examples=(80, 80),
            ),
            Column(
                "giip_best",
                "number",
                "giip",
                bounds=Range(0.0, 1e6, True),
                template_unit="bscf",
                examples=(100, 100),
            ),
            Column(
                "giip_high",
                "number",
                "giip",
                bounds=Range(0.0, 1e6, True),
                template_unit="bscf",
                examples=(125, 125),
            ),
            Column(
                "method", "choice", required=False, choices=VOLUMETRIC_METHODS, examples=("deterministic", "")
            ),
            *mc,
        ),
        key=("field", "estimate_date"),
        help="one row per field and estimate date; Monte Carlo input ranges optional",
        example_rows=1,
    )
    return {k.name: k for k in (fields, wells, fluids, lab, surveys, production, volumetrics)}


KINDS = _kinds()
#: In the order a new portfolio is loaded.
UPLOAD_KINDS = ("fields", "wells", "fluids", "lab_table", "surveys", "production", "volumetrics")


def file_kind(name: str) -> FileKind:
    """The definition of an upload kind; raise on an unknown name."""
    try:
        return KINDS[name]
    except KeyError:
        raise ValueError(f"unknown upload kind {name!r}; choose one of {', '.join(UPLOAD_KINDS)}") from None
