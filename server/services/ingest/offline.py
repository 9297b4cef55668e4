"""One field's engine inputs from upload files, with no database (``tankbook analyse``).

The files are read and checked by the same parsers as uploads; the checks that need
stored rows become checks between the files (a survey's well must be in the wells
file when one is given).
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from dataclasses import dataclass, field
from pathlib import Path
from types import SimpleNamespace

from ...engine.inputs import AnalysisChoices, FieldInputs
from ...engine.units import standard_conditions
from ..fieldwork.planrules import DEFAULT_PLAN, PLAN_COLUMNS, engine_field_plan, plan_problems
from ..jobs.field_inputs import (
    ProductionRecord,
    SurveyRecord,
    VolumetricRecord,
    WellTestRecord,
    build_field_inputs,
    field_volumetric,
    fluid_inputs,
    lab_table_from_points,
)
from .files.tabular import TableError, read_table
from .kinds import file_kind
from .parse import ReadOptions, parse_table
from .report import ValidationReport
from .rowchecks import (
    INITIAL_PRESSURE_MARGIN,
    check_cumulatives,
    check_fluid_row,
    check_repeated_keys,
    check_volumetric_row,
    lab_points,
)


class OfflineInputError(Exception):
    """The files cannot describe the field; ``reports`` says why, file by file."""

    def __init__(self, message: str, reports: dict[str, dict] | None = None):
        super().__init__(message)
        self.reports = reports or {}


@dataclass
class OfflineField:
    name: str
    inputs: FieldInputs
    reports: dict[str, dict] = field(default_factory=dict)  # per file: how it was read, warnings


def _read(kind: str, path: Path, options: ReadOptions, today: dt.date, reports: dict) -> list[dict]:
    report = ValidationReport(kind=kind)
    try:
        table = read_table(
            path.read_bytes(), filename=path.name, delimiter=options.delimiter, encoding=options.encoding
        )
    except (OSError, TableError) as exc:
        report.add(None, None, None, str(exc))
        reports[str(path)] = report.as_dict()
        raise OfflineInputError(f"{path}: {exc}", reports) from None
    parsed = parse_table(file_kind(kind), table, options, report, today=today)
    records = check_repeated_keys(file_kind(kind), parsed.records, report)
    reports[str(path)] = report.as_dict()
    if report.error_count:
        raise OfflineInputError(f"{path}: {report.error_count} error(s)", reports)
    for r in records:
        r["_columns"] = parsed.columns
    return records


def _only(records: list[dict], name: str | None, what: str, path: Path) -> dict:
    rows = [r for r in records if name is None or r["field"].casefold() == name.casefold()]
    if len(rows) == 1:
        return rows[0]
    if not rows:
        raise OfflineInputError(f"{path}: no {what} row for field {name!r}")
    names = ", ".join(sorted({r["field"] for r in rows}))
    raise OfflineInputError(f"{path}: several fields ({names}); choose one with --field")


def load_offline_field(
    *,
    fields: Path,
    fluids: Path,
    surveys: Path,
    production: Path,
    wells: Path | None = None,
    lab_table: Path | None = None,
    volumetrics: Path | None = None,
    field_name: str | None = None,
    options: ReadOptions | None = None,
    choices: dict | None = None,
    today: dt.date | None = None,
    well_tests: Path | None = None,
    plan: Path | None = None,
    planned_wells: Path | None = None,
) -> OfflineField:
    """Read the files of one field and build its :class:`FieldInputs`.

    ``volumetrics`` (the upload kind's format) gives the static estimate the flags compare
    with, chosen as the app chooses it (the newest by estimate date).
    """
    options = options or ReadOptions()
    today = today or dt.date.today()
    reports: dict[str, dict] = {}
    f = _only(_read("fields", fields, options, today, reports), field_name, "fields", fields)
    name = f["field"]
    key = name.casefold()
    if f["abandonment_pressure"] >= f["initial_pressure"]:
        raise OfflineInputError(
            f"{fields}: the abandonment pressure must be below the initial pressure", reports
        )
    fl = _only(_read("fluids", fluids, options, today, reports), name, "fluids", fluids)
    fluid_report = ValidationReport("fluids")
    if not check_fluid_row(fl, fluid_report):
        reports[f"{fluids} (rows)"] = fluid_report.as_dict()
        raise OfflineInputError(f"{fluids}: {fluid_report.errors[0].message}", reports)
    if fluid_report.warning_count:
        reports[f"{fluids} (warnings)"] = fluid_report.as_dict()
    well_info: dict[str, dict] | None = None
    if wells is not None:
        well_info = {
            r["well"].casefold(): r
            for r in _read("wells", wells, options, today, reports)
            if r["field"].casefold() == key
        }
    lab = None
    if lab_table is not None:
        rows = [
            r for r in _read("lab_table", lab_table, options, today, reports) if r["field"].casefold() == key
        ]
        if rows:
            report = ValidationReport("lab_table")
            points = lab_points(name, rows, report)
            if points is None:
                reports[str(lab_table)] = report.as_dict()
                raise OfflineInputError(f"{lab_table}: the lab table of {name!r} is unusable", reports)
            lab = lab_table_from_points(
                [(p["pressure_psia"], p["z_factor"], p["bg_rcf_per_scf"]) for p in points]
            )
    volumetric = None
    if volumetrics is not None:
        volumetric = _volumetric(volumetrics, key, name, options, today, reports)
    survey_rows = [
        r for r in _read("surveys", surveys, options, today, reports) if r["field"].casefold() == key
    ]
    prod_rows = [
        r for r in _read("production", production, options, today, reports) if r["field"].casefold() == key
    ]
    problems = ValidationReport("surveys")
    for r in survey_rows + prod_rows:
        if well_info is not None and r["well"].casefold() not in well_info:
            problems.add(r["_row"], "well", r["well"], f"is not in the wells file for field {name!r}")
    if problems.error_count:
        reports["wells check"] = problems.as_dict()
        raise OfflineInputError("surveys or production name wells that the wells file does not list", reports)
    by_well: dict[str, list[dict]] = {}
    for r in prod_rows:
        by_well.setdefault(r["well"].casefold(), []).append(r)
    cumulative = ValidationReport("production")
    check_cumulatives(by_well.values(), prod_rows[0]["_columns"] if prod_rows else set(), cumulative)
    if cumulative.error_count:
        reports[f"{production} (cumulatives)"] = cumulative.as_dict()
        raise OfflineInputError(f"{production}: a cumulative column decreases", reports)

    def info(well: str) -> dict:
        return (well_info or {}).get(well.casefold(), {})

    survey_records = []
    warnings = ValidationReport("surveys")
    for r in survey_rows:
        depth = r.get("gauge_depth")
        if depth is None:
            depth = info(r["well"]).get("gauge_reference_depth") or f["datum_depth"]
        if r["pressure"] > f["initial_pressure"] * INITIAL_PRESSURE_MARGIN:
            warnings.add(
                r["_row"],
                "pressure",
                round(r["pressure"], 2),
                "is above the field's initial pressure",
                "warning",
            )
        survey_records.append(
            SurveyRecord(
                survey_date=r["survey_date"],
                pressure_psia=r["pressure"],
                gauge_depth_ft=depth,
                well=r["well"],
                compartment=info(r["well"]).get("compartment"),
                quality=r["quality"],
                kind=r["kind"],
            )
        )
    if warnings.warning_count:
        reports[f"{surveys} (warnings)"] = warnings.as_dict()
    production_records = [
        ProductionRecord(
            month=r["month"],
            gas_mscf=r["gas"],
            condensate_stb=r["condensate"],
            water_stb=r["water"],
            compartment=info(r["well"]).get("compartment"),
            well=r["well"],
        )
        for r in prod_rows
    ]
    forecast_inputs = _forecast_inputs(name, f, well_tests, plan, planned_wells, options, today, reports)
    inputs = build_field_inputs(
        **fluid_inputs(fl.get("gas_gravity"), fl.get("wellstream_gravity"), fl["co2"], fl["h2s"], fl["n2"]),
        reservoir_temperature_degF=f["reservoir_temperature"],
        initial_pressure_psia=f["initial_pressure"],
        abandonment_pressure_psia=f["abandonment_pressure"],
        datum_depth_ft=f["datum_depth"],
        surveys=survey_records,
        production=production_records,
        condensate_api=fl.get("condensate_api"),
        lab_table=lab,
        choices=analysis_choices(choices or {}),
        **forecast_inputs,
    )
    inputs = dataclasses.replace(
        inputs, standard_conditions=standard_conditions(options.standard_conditions), volumetric=volumetric
    )
    return OfflineField(name, inputs, reports)


def _forecast_inputs(name, f, well_tests, plan, planned_wells, options, today, reports) -> dict:
    """The well tests and the field plan (with its planned wells) from their files."""
    key = name.casefold()
    out: dict = {}
    if well_tests is not None:
        rows = [
            r
            for r in _read("well_tests", well_tests, options, today, reports)
            if r["field"].casefold() == key
        ]
        problems = ValidationReport("well_tests")
        for r in rows:
            if r["flowing_pressure"] >= r["static_pressure"]:
                problems.add(
                    r["_row"], "flowing_pressure", r["flowing_pressure"], "must be below the static pressure"
                )
        if problems.error_count:
            reports[f"{well_tests} (checks)"] = problems.as_dict()
            raise OfflineInputError(
                f"{well_tests}: a flowing pressure is not below its static pressure", reports
            )
        out["well_tests"] = [
            WellTestRecord(r["test_date"], r["well"], r["rate"], r["flowing_pressure"], r["static_pressure"])
            for r in rows
        ]
    if plan is None:
        if planned_wells is not None:
            raise OfflineInputError(
                f"{planned_wells}: planned wells count only with a field plan (--plan)", reports
            )
        return out
    row = _only(_read("field_plans", plan, options, today, reports), name, "field plan", plan)
    values = DEFAULT_PLAN | {stored: row.get(col) for stored, col in PLAN_COLUMNS if col in row["_columns"]}
    problems = plan_problems(SimpleNamespace(initial_pressure_psia=f["initial_pressure"]), values)
    if problems:
        report = ValidationReport("field_plans")
        columns = dict(PLAN_COLUMNS)
        for k, message in problems.items():
            report.add(row["_row"], columns[k], row.get(columns[k]), message)
        reports[f"{plan} (checks)"] = report.as_dict()
        raise OfflineInputError(f"{plan}: the plan of {name!r} is not acceptable", reports)
    wells = []
    if planned_wells is not None:
        wells = [
            SimpleNamespace(
                name=r["well"],
                start_date=r["start_date"],
                compartment=r.get("compartment"),
                c_mscf_per_day_psi2n=r["c_mscf_per_day_psi2n"],
                n=r["n"],
            )
            for r in _read("planned_wells", planned_wells, options, today, reports)
            if r["field"].casefold() == key
        ]
    out["plan"] = engine_field_plan(SimpleNamespace(**values), wells)
    return out


def _volumetric(path: Path, key: str, name: str, options, today, reports):
    """The field's static estimate from a volumetrics file, checked as an upload checks it."""
    rows = [r for r in _read("volumetrics", path, options, today, reports) if r["field"].casefold() == key]
    report = ValidationReport("volumetrics")
    kept = [r for r in rows if check_volumetric_row(r, report) is not None]
    if not rows:
        report.note(f"no volumetric estimate for field {name!r}: the flags do not compare with one")
    if report.error_count or report.warning_count or report.notes:
        reports[f"{path} (rows)"] = report.as_dict()
    if report.error_count:
        raise OfflineInputError(f"{path}: {report.errors[0].message} (row {report.errors[0].row})", reports)
    return field_volumetric(
        [VolumetricRecord(r["estimate_date"], r["giip_low"], r["giip_best"], r["giip_high"]) for r in kept]
    )


def analysis_choices(values: dict) -> AnalysisChoices:
    """Analysis choices from a JSON object; unknown names are refused."""
    known = {f.name for f in dataclasses.fields(AnalysisChoices)}
    unknown = sorted(set(values) - known)
    if unknown:
        raise OfflineInputError(
            f"unknown analysis choice(s): {', '.join(unknown)}; known: {', '.join(sorted(known))}"
        )
    return AnalysisChoices(**values)
