"""Checks of an upload's rows against each other, with no database: repeated keys, cumulative
columns, a field's lab table. Shared by the upload (``service``, ``history``, ``portfolio``)
and ``tankbook analyse`` (``offline``), which imports no database code, so that it starts fast
(issue 17)."""

from __future__ import annotations

import datetime as dt

from ...engine.errors import InputRangeError
from ...engine.pvt.pseudocritical import hydrocarbon_gravity
from ...engine.pvt.wellstream import SEPARATOR_GAS_GRAVITY_USUAL_MAX
from .kinds import CASES, MC_PARAMETERS, FileKind
from .report import ValidationReport

INITIAL_PRESSURE_MARGIN = 1.02  # a survey 2 % above p_i is flagged (gauge noise is smaller)
CUMULATIVE_TOLERANCE_FRAC = 0.01
_UNIT = {"cum_gas": "Mscf", "cum_condensate": "stb", "cum_water": "stb"}
VOLUMETRIC_CHECK_FRAC = 0.25  # best GIIP vs the product of the best inputs (common practice: a sanity check)
MC_STORED = {
    "rock_volume": "rock_volume_ft3",
    "net_to_gross": "net_to_gross_frac",
    "porosity": "porosity_frac",
    "gas_saturation": "gas_saturation_frac",
    "bgi": "bgi_rcf_per_scf",
}


def _iso(v) -> str:
    return v.isoformat() if isinstance(v, dt.date) else str(v)


def check_repeated_keys(kind: FileKind, records: list[dict], report: ValidationReport) -> list[dict]:
    """Drop and report rows whose key repeats an earlier row's (names compared without case)."""
    columns = []
    for k in kind.key:
        values = [r[k] for r in records]
        if values and isinstance(values[0], str):
            folded = {v: v.casefold() for v in set(values)}
            values = [folded[v] for v in values]
        columns.append(values)
    seen: dict[tuple, int] = {}
    out = []
    for r, key in zip(records, zip(*columns, strict=True), strict=True):
        first = seen.setdefault(key, r["_row"])
        if first == r["_row"]:
            out.append(r)
        elif kind.name == "production":
            month = _iso(r["month"])[:7]
            report.add(
                r["_row"],
                "month",
                month,
                f"overlaps row {first}: both give production of this well for {month}",
            )
        else:
            report.add(r["_row"], None, None, f"duplicates row {first} ({', '.join(kind.key)})")
    return out


def _next_month(d: dt.date) -> dt.date:
    return dt.date(d.year + d.month // 12, d.month % 12 + 1, 1)


def check_cumulatives(wells, columns: set[str], report) -> None:
    """Cumulative columns never decrease within a well; their steps should match the months.

    ``wells`` holds one list of production records per well."""
    pairs = [
        (c, m)
        for c, m in (("cum_gas", "gas"), ("cum_condensate", "condensate"), ("cum_water", "water"))
        if c in columns
    ]
    if not pairs:
        return
    for recs in wells:
        recs = sorted(recs, key=lambda r: r["month"])
        for cum, monthly in pairs:
            prev = None
            for r in recs:
                value = r.get(cum)
                if value is None:
                    continue
                if prev is not None:
                    step = value - prev[cum]
                    if step < 0:
                        report.add(
                            r["_row"],
                            cum,
                            None,
                            f"decreases from {prev[cum]:,.6g} to {value:,.6g} {_UNIT[cum]} "
                            f"(row {prev['_row']}, {prev['month'].isoformat()[:7]}); "
                            "a cumulative cannot fall",
                        )
                    elif monthly in columns and _next_month(prev["month"]) == r["month"]:
                        tol = max(0.5, CUMULATIVE_TOLERANCE_FRAC * max(step, r[monthly]))
                        if abs(step - r[monthly]) > tol:
                            report.add(
                                r["_row"],
                                cum,
                                None,
                                f"rises by {step:,.6g} {_UNIT[cum]} since row {prev['_row']} but the "
                                f"month's {monthly} is {r[monthly]:,.6g} {_UNIT[cum]}",
                                "warning",
                            )
                prev = r


def lab_points(field_name: str, rows: list[dict], report) -> list[dict] | None:
    """One field's lab table from its rows, sorted by pressure; None if it is unusable."""
    rows = sorted(rows, key=lambda r: r["pressure"])
    first = min(r["_row"] for r in rows)
    ok = True
    for r in rows:
        if r.get("z_factor") is None and r.get("bg") is None:
            report.add(r["_row"], None, None, "give z_factor or bg (or both)")
            ok = False
    if len(rows) < 2:
        report.add(
            first, None, None, f"the lab table of {field_name!r} has one pressure; at least two are needed"
        )
        return None
    for col in ("z_factor", "bg"):
        given = [r.get(col) is not None for r in rows]
        if any(given) and not all(given):
            missing = next(r["_row"] for r in rows if r.get(col) is None)
            report.add(
                missing, col, None, f"{col} is given for some pressures of {field_name!r} but not this one"
            )
            ok = False
    if not ok:
        return None
    return [
        {"pressure_psia": r["pressure"], "z_factor": r.get("z_factor"), "bg_rcf_per_scf": r.get("bg")}
        for r in rows
    ]


def check_fluid_row(r: dict, report) -> bool:
    """Row checks of a fluids row (uploads and ``tankbook analyse``); False: the row is refused."""
    if r["co2"] + r["h2s"] + r["n2"] >= 1.0:
        report.add(r["_row"], None, None, "CO2, H2S and N2 fractions add up to 1 or more")
        return False
    sep, ws = r.get("gas_gravity"), r.get("wellstream_gravity")
    if sep is None and ws is None:
        report.add(
            r["_row"],
            "gas_gravity",
            None,
            "no gas gravity: give the separator gas gravity (gas_gravity), the well-stream gravity "
            "(wellstream_gravity), or both",
        )
        return False
    if sep is not None and ws is None and r.get("condensate_api") is not None:
        try:
            heavy = hydrocarbon_gravity(sep, r["co2"], r["h2s"], r["n2"]) > SEPARATOR_GAS_GRAVITY_USUAL_MAX
        except InputRangeError as exc:
            report.add(r["_row"], "gas_gravity", sep, str(exc))
            return False
        if heavy:
            report.add(
                r["_row"],
                "gas_gravity",
                sep,
                f"is heavier than separator gas usually is (about {SEPARATOR_GAS_GRAVITY_USUAL_MAX:g} at "
                "most, without inerts) and will be recombined with the condensate; if it is the "
                "well-stream (reservoir) gravity, put it in a wellstream_gravity column instead",
                "warning",
            )
    return True


def check_volumetric_row(r: dict, report) -> tuple[str, dict | None] | None:
    """Row checks of a volumetrics row (uploads and ``tankbook analyse``): (method, Monte Carlo
    inputs or None), or None when the row is refused (the report says why)."""
    row = r["_row"]
    if not r["giip_low"] <= r["giip_best"] <= r["giip_high"]:
        report.add(row, None, None, "GIIP must be ordered low ≤ best ≤ high")
        return None
    inputs = _mc_inputs(r, report)
    if inputs is False:
        return None
    method = r.get("method") or ("monte_carlo" if inputs else "deterministic")
    if method == "monte_carlo" and not inputs:
        report.add(
            row,
            "method",
            method,
            "a Monte Carlo estimate needs the input ranges (rock_volume_low_… to bgi_high_…)",
        )
        return None
    return method, inputs


def _mc_inputs(r: dict, report) -> dict | None | bool:
    """The Monte Carlo ranges of a row (None if none given, False if they are unusable)."""
    given = {f"{p}_{c}": r.get(f"{p}_{c}") for p in MC_PARAMETERS for c in CASES}
    if all(v is None for v in given.values()):
        return None
    missing = [k for k, v in given.items() if v is None]
    if missing:
        report.add(r["_row"], None, None, f"Monte Carlo inputs are incomplete: missing {', '.join(missing)}")
        return False
    out = {}
    for p in MC_PARAMETERS:
        low, best, high = (given[f"{p}_{c}"] for c in CASES)
        if not low <= best <= high:
            report.add(r["_row"], f"{p}_low", low, f"{p} must be ordered low ≤ best ≤ high")
            return False
        out[MC_STORED[p]] = {"low": low, "best": best, "high": high}
    b = {p: given[f"{p}_best"] for p in MC_PARAMETERS}
    product_bscf = b["rock_volume"] * b["net_to_gross"] * b["porosity"] * b["gas_saturation"] / b["bgi"] / 1e9
    if abs(product_bscf - r["giip_best"]) > VOLUMETRIC_CHECK_FRAC * r["giip_best"]:
        report.add(
            r["_row"],
            "giip_best",
            r["giip_best"],
            f"differs by more than "
            f"{VOLUMETRIC_CHECK_FRAC:.0%} from the product of the best inputs ({product_bscf:,.4g} Bscf)",
            "warning",
        )
    return out
