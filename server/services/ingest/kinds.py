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
    future: bool = False  # a date column that may lie in the future (plans); others may not

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
            Column("basin", "name", required=False, default="", examples=("Example Basin",) * 2),
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
                required=False,
                aliases=("separator_gas_gravity", "separator_gravity"),
                bounds=Range(0.55, 1.8, True, True),
                help="separator (sales) gas specific gravity (air = 1); with condensate and its API "
                "gravity the well-stream gas is recombined from it",
                examples=(0.65, 0.65),
            ),
            Column(
                "wellstream_gravity",
                "number",
                required=False,
                aliases=("well_stream_gravity", "wellstream_gas_gravity", "reservoir_gas_gravity"),
                bounds=Range(0.55, 1.8, True, True),
                help="well-stream (reservoir) gas specific gravity (air = 1), when known; z then uses it "
                "as it is. Give this, gas_gravity, or both",
                examples=("", ""),
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
    kinds = (fields, wells, fluids, lab, surveys, production, volumetrics, *_forecast_kinds())
    return {k.name: k for k in kinds}


_RATE = Range(0.0, 1e9, lo_open=True, unit="Mscf/d")
_EXPONENT = Range(0.5, 1.0)  # back-pressure n (Rawlins & Schellhardt 1936): 0.5 turbulent .. 1 laminar


def _forecast_kinds() -> tuple[FileKind, ...]:
    """Well tests, field plans and planned wells: what the forecast needs besides the history."""
    tests = FileKind(
        "well_tests",
        "Well tests (multi-rate)",
        (
            FIELD,
            WELL,
            Column("test_date", "date", aliases=("date",), examples=("2021-03-04", "2021-03-04")),
            Column(
                "rate",
                "number",
                "gas_rate",
                bounds=_RATE,
                template_unit="mscf_per_day",
                help="stabilised gas rate of the flow period (separator gas)",
                examples=(4200, 7900),
            ),
            Column(
                "flowing_pressure",
                "number",
                "pressure",
                aliases=("flowing_bhp", "pwf"),
                bounds=_P,
                template_unit="psia",
                help="stabilised flowing bottom-hole pressure",
                examples=(3650, 3180),
            ),
            Column(
                "static_pressure",
                "number",
                "pressure",
                bounds=_P,
                template_unit="psia",
                help="average (shut-in) reservoir pressure of the test",
                examples=(4100, 4100),
            ),
        ),
        key=("field", "well", "test_date", "rate"),
        help="one row per flow period; the rows of one well and date are one multi-rate test",
    )
    plans = FileKind(
        "field_plans",
        "Field plans",
        (
            FIELD,
            Column(
                "plateau_rate",
                "number",
                "gas_rate",
                required=False,
                bounds=_RATE,
                template_unit="mscf_per_day",
                help="contract or plant rate of the field; blank: no limit",
                examples=(60000, ""),
            ),
            Column(
                "uptime",
                "number",
                "fraction",
                required=False,
                default=0.95,
                bounds=Range(0.0, 1.0, lo_open=True, unit="(fraction)"),
                template_unit="frac",
                help="share of calendar time on stream",
                examples=(0.95, 0.95),
            ),
            Column(
                "min_flowing_pressure",
                "number",
                "pressure",
                required=False,
                bounds=_P,
                template_unit="psia",
                help="lowest flowing bottom-hole pressure the wells produce against; blank: from the "
                "abandonment pressure",
                examples=(900, ""),
            ),
            Column(
                "compression_date",
                "date",
                required=False,
                future=True,
                help="date compression starts (optional; give its minimum pressure too)",
                examples=("2031-01-01", ""),
            ),
            Column(
                "compression_min_flowing_pressure",
                "number",
                "pressure",
                required=False,
                bounds=_P,
                template_unit="psia",
                help="the lower minimum flowing pressure once compression runs",
                examples=(450, ""),
            ),
            Column(
                "economic_limit_rate",
                "number",
                "gas_rate",
                required=False,
                default=0.0,
                bounds=Range(0.0, 1e9, unit="Mscf/d"),
                template_unit="mscf_per_day",
                help="field rate below which production no longer pays",
                examples=(2500, 0),
            ),
            Column(
                "licence_end",
                "date",
                required=False,
                future=True,
                help="date the production licence ends (optional)",
                examples=("2040-12-31", ""),
            ),
            Column(
                "deliverability_exponent",
                "number",
                required=False,
                default=0.85,
                bounds=_EXPONENT,
                help="n used when C is calibrated from monthly rates (0.5 to 1; 0.85 common practice)",
                examples=(0.85, 0.85),
            ),
            Column(
                "deliverability_form",
                "choice",
                required=False,
                default="pressure_squared",
                choices=("pressure_squared", "pseudo_pressure"),
                choice_aliases={"p2": "pressure_squared", "m(p)": "pseudo_pressure", "m": "pseudo_pressure"},
                help="the back-pressure equation's form: pressure_squared, q = C (p² − pwf²)^n, or "
                "pseudo_pressure, q = C [m(p) − m(pwf)]^n (Al-Hussainy, Ramey & Crawford 1966)",
                examples=("pressure_squared", "pressure_squared"),
            ),
        ),
        key=("field",),
        help="one row per field: how it will be produced; replaces the field's plan with 'replace existing'",
        example_rows=1,
    )
    planned = FileKind(
        "planned_wells",
        "Planned wells",
        (
            FIELD,
            Column(
                "well",
                "name",
                aliases=("well_name", "planned_well"),
                help="name of the planned well",
                examples=("EX-3", "EX-4"),
            ),
            Column(
                "start_date",
                "date",
                future=True,
                help="first day on production",
                examples=("2028-07-01", "2029-01-01"),
            ),
            Column(
                "compartment",
                "name",
                required=False,
                max_len=60,
                help="compartment label (optional)",
                examples=("north", ""),
            ),
            Column(
                "c_mscf_per_day_psi2n",
                "number",
                aliases=("c",),
                bounds=Range(0.0, 1e6, lo_open=True),
                help="expected back-pressure coefficient C of q = C (p² − pwf²)^n, q in Mscf/d, p in psia",
                examples=(0.0004, 0.0006),
            ),
            Column(
                "n",
                "number",
                bounds=_EXPONENT,
                help="expected back-pressure exponent (0.5 to 1)",
                examples=(0.85, 0.8),
            ),
        ),
        key=("field", "well"),
        help="one row per planned well; names must not be those of existing wells",
    )
    return tests, plans, planned


KINDS = _kinds()
#: In the order a new portfolio is loaded.
UPLOAD_KINDS = (
    "fields",
    "wells",
    "fluids",
    "lab_table",
    "surveys",
    "production",
    "volumetrics",
    "well_tests",
    "field_plans",
    "planned_wells",
)


def file_kind(name: str) -> FileKind:
    """The definition of an upload kind; raise on an unknown name."""
    try:
        return KINDS[name]
    except KeyError:
        raise ValueError(f"unknown upload kind {name!r}; choose one of {', '.join(UPLOAD_KINDS)}") from None
