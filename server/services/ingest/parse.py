"""From a :class:`Table` to typed rows in stored units, with every problem reported.

Headers are matched to columns with a little tolerance (case, spaces, units in
brackets, a few documented aliases) and the report says how each one was read. Cells
are parsed column by column (distinct values cached), converted to stored units and
checked against physical bounds. Nothing here touches the database.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import re
import unicodedata
from dataclasses import dataclass, field

import numpy as np

from ...engine.units import standard_conditions
from .files import cells
from .files.tabular import Table
from .kinds import Column, FileKind
from .report import ColumnReading, ValidationReport
from .units import FORM_UNIT_CHOICES, Quantity, quantities

DECIMALS = {".": "decimal point", ",": "decimal comma"}


@dataclass(frozen=True)
class ReadOptions:
    """Choices made on the upload form (or API query); all optional."""

    units: dict[str, str] = field(default_factory=dict)  # quantity -> unit for columns named without one
    atmosphere_psia: float = 14.696
    standard_conditions: str = "oilfield"
    delimiter: str | None = None
    decimal: str | None = None
    date_order: str = "iso"
    encoding: str | None = None  # "utf-8" or "cp1252"; None: found from the bytes

    def as_dict(self) -> dict:
        return {
            "units": dict(self.units),
            "atmosphere_psia": self.atmosphere_psia,
            "standard_conditions": self.standard_conditions,
            "delimiter": self.delimiter,
            "decimal": self.decimal,
            "date_order": self.date_order,
            "encoding": self.encoding,
        }

    @classmethod
    def from_dict(cls, d: dict) -> ReadOptions:
        return cls(**{**d, "units": dict(d.get("units") or {})})


def check_options(opts: ReadOptions) -> list[str]:
    """Problems with the form's choices themselves (shown as file-level errors)."""
    problems = []
    q = quantities(opts.atmosphere_psia, standard_conditions(opts.standard_conditions))
    for name, unit in opts.units.items():
        if name not in FORM_UNIT_CHOICES:
            problems.append(f"no unit can be chosen for {name!r}")
        elif unit and unit.lower() not in q[name].units:
            problems.append(
                f"unit {unit!r} is not known for {q[name].name}; use one of {', '.join(q[name].choices)}"
            )
    if opts.delimiter not in (None, ",", ";", "\t"):
        problems.append("the delimiter must be comma, semicolon or tab")
    if opts.decimal not in (None, ".", ","):
        problems.append("the decimal mark must be a point or a comma")
    if opts.encoding not in (None, "utf-8", "cp1252"):
        problems.append("the encoding must be utf-8 or cp1252 (Windows-1252)")
    if opts.date_order not in cells.DATE_ORDERS:
        problems.append(f"the date order must be one of {', '.join(cells.DATE_ORDERS)}")
    if not 10.0 < opts.atmosphere_psia < 16.0:
        problems.append("the atmosphere must be between 10 and 16 psia")
    return problems


def normalise_header(h: str) -> str:
    """Lower case, units in brackets joined with an underscore, other punctuation as '_'."""
    s = unicodedata.normalize("NFKC", str(h)).strip().lower().replace("°", "deg")
    s = s.replace("/", "_per_")
    s = re.sub(r"[^a-z0-9]+", "_", s)
    return s.strip("_")


@dataclass(frozen=True)
class Mapped:
    index: int
    column: Column
    unit_key: str | None  # alias as found (header or form), None for unit-less columns


def map_headers(
    kind: FileKind, header: list[str], opts: ReadOptions, q: dict[str, Quantity], report: ValidationReport
) -> list[Mapped]:
    """Match each header to a column and its unit, or report why it cannot be."""
    mapped: list[Mapped] = []
    used: dict[str, str] = {}
    expected = ", ".join(c.template_header for c in kind.columns)
    for i, raw in enumerate(header):
        h = normalise_header(raw)
        shown = raw if raw else f"#{i + 1}"
        col, unit, problem = _match(kind, h, q)
        if problem:
            report.add(1, shown, None, problem)
            continue
        if col is None:
            report.add(
                1, shown, None, f"unknown column for a {kind.title.lower()} file; expected: {expected}"
            )
            continue
        if col.name in used:
            report.add(1, shown, None, f"gives {col.name} again (already given by column {used[col.name]!r})")
            continue
        used[col.name] = shown
        unit_from = "header" if unit else "none"
        if col.quantity and not unit:
            chosen = opts.units.get(col.quantity)
            if chosen:
                unit, unit_from = chosen.lower(), "form"
            elif q[col.quantity].default:
                unit, unit_from = q[col.quantity].default, "default"
            else:
                qq = q[col.quantity]
                on_form = ""
                if col.quantity in FORM_UNIT_CHOICES:
                    on_form = f" or choose the {qq.name} unit on the form"
                examples = ", ".join(f"{col.name}_{u}" for u in qq.choices[:4])
                report.add(
                    1,
                    shown,
                    None,
                    f"has no unit: write it in the header ({examples}, ...)" + on_form,
                )
                continue
        mapped.append(Mapped(i, col, unit))
        report.columns.append(_reading(raw, col, unit, unit_from, q, h))
    for c in kind.columns:
        if c.required and c.name not in used:
            report.add(1, c.template_header, None, "required column is missing")
    return mapped


def _match(kind: FileKind, h: str, q: dict[str, Quantity]):
    best = None
    for c in kind.columns:
        for base in (c.name, *c.aliases):
            if h == base:
                return c, None, None
            if c.quantity and h.startswith(base + "_") and (best is None or len(base) > len(best[1])):
                best = (c, base)
    if best is None:
        return None, None, None
    c, base = best
    suffix = h[len(base) + 1 :]
    qq = q[c.quantity]
    if suffix in qq.units:
        return c, suffix, None
    if suffix in qq.refused:
        return None, None, qq.refused[suffix]
    return None, None, f"unit {suffix!r} is not known for {qq.name}; use one of {', '.join(qq.choices)}"


def _reading(raw, col: Column, unit, unit_from, q, h) -> ColumnReading:
    spelled = "" if h == (f"{col.name}_{unit}" if unit else col.name) else f"read as {col.name}; "
    if unit:
        u = q[col.quantity].units[unit]
        meaning = f"{spelled}{u.label}"
        return ColumnReading(raw, col.name, u.name, unit_from, meaning)
    return ColumnReading(raw, col.name, None, "none", f"{spelled}{col.help or col.type}".rstrip("; "))


def detect_decimal(
    table: Table, mapped: list[Mapped], delimiter_is_comma: bool, chosen: str | None, report: ValidationReport
) -> str:
    """Decimal point or comma for a CSV file; never guessed when the file is ambiguous."""
    if chosen:
        report.note(f"numbers read with a {DECIMALS[chosen]} (chosen on the form)")
        return chosen
    if table.source != "csv" or delimiter_is_comma:
        return "."
    point = comma = None
    comma_three = True
    for m in mapped:
        if m.column.type != "number":
            continue
        for i, row in enumerate(table.rows):
            if m.index >= len(row):
                continue
            s = row[m.index].strip()
            if "," in s and cells._NUM_COMMA.fullmatch(s):
                comma = comma or (i + 2, s)
                frac = s.split(",", 1)[1].split("e")[0].split("E")[0]
                comma_three = comma_three and len(frac) == 3
            elif "." in s and cells._NUM.fullmatch(s):
                point = point or (i + 2, s)
    if point and comma:
        report.add(
            None,
            None,
            None,
            f"the file mixes decimal points (row {point[0]}: {point[1]!r}) and decimal "
            f"commas (row {comma[0]}: {comma[1]!r}); choose the decimal mark on the form",
        )
        return "."
    if comma:
        if comma_three:
            report.add(
                comma[0],
                None,
                comma[1],
                "could be a decimal comma or a thousands separator; choose the "
                "decimal mark on the form (or write numbers without thousands separators)",
            )
            return ","
        report.note(f"numbers read with a decimal comma (e.g. row {comma[0]}: {comma[1]!r})")
        return ","
    return "."


@dataclass
class Parsed:
    """Typed rows in stored units: ``records[k]['_row']`` is the spreadsheet row."""

    records: list[dict]
    columns: set[str]  # columns present in the file


def parse_table(
    kind: FileKind, table: Table, opts: ReadOptions, report: ValidationReport, *, today: dt.date
) -> Parsed:
    """Check the header, parse every cell and return the rows that have no error."""
    for n in table.notes:
        report.note(n)
    for w in table.warnings:
        report.add(w.row, w.column, w.value, w.message, w.severity)
    q = quantities(opts.atmosphere_psia, standard_conditions(opts.standard_conditions))
    mapped = map_headers(kind, table.header, opts, q, report)
    report.rows_total = len(table.rows)
    if report.error_count:
        return Parsed([], set())
    decimal = detect_decimal(table, mapped, table.delimiter == ",", opts.decimal, report)
    if report.error_count:
        return Parsed([], set())
    width = len(table.header)
    bad: set[int] = set()
    blank: list[int] = []
    live: list[int] = []
    text_rows = table.source == "csv"  # every cell a string: one join tells a blank row
    rownum = table.row_number
    for i, row in enumerate(table.rows):
        empty = not "".join(row).strip() if text_rows else all(cells.is_blank(c) for c in row)
        if empty:
            blank.append(rownum(i))
        elif len(row) != width:
            report.add(rownum(i), None, None, f"has {len(row)} cells but the header has {width}")
            bad.add(i)
            if report.full:
                report.stop(f"row {rownum(i)}")
                return Parsed([], set())
        else:
            live.append(i)
    if blank:
        shown = ", ".join(map(str, blank[:10])) + (" …" if len(blank) > 10 else "")
        report.note(f"{len(blank)} blank row(s) skipped (rows {shown})")
    if table.blank_rows:
        report.note(f"{table.blank_rows} blank row(s) skipped")
    rules = cells.DateRules(opts.date_order, today, table.excel_epoch)
    live_rows = [rownum(i) for i in live]
    columns: dict[str, list] = {}
    for m in mapped:
        raw = [table.rows[i][m.index] for i in live]
        columns[m.column.name] = _parse_column(m, raw, live, live_rows, decimal, rules, q, report, bad)
        if report.full:
            report.stop(f"column {m.column.name!r}")
            return Parsed([], set())
    names = [*columns, *(c.name for c in kind.columns if c.name not in columns), "_row"]
    defaults = [c.default for c in kind.columns if c.name not in columns]
    rows = zip(*columns.values(), *([d] * len(live) for d in defaults), live_rows, strict=True)
    records = [dict(zip(names, r, strict=True)) for r in rows]
    if bad:
        records = [r for r, i in zip(records, live, strict=True) if i not in bad]
    return Parsed(records, set(columns))


class _Bad:
    __slots__ = ("message",)

    def __init__(self, message: str):
        self.message = message


_BLANK = object()


LATEST_PLAN_DATE = dt.date(2200, 12, 31)  # the last date a plan's columns take


def _parse_column(
    m: Mapped, raw: list, live: list[int], live_rows: list[int], decimal: str, rules, q, report, bad
) -> list:
    """Parse one column; each distinct cell is parsed once (files repeat names and months)."""
    col = m.column
    header = col.name
    unit = q[col.quantity].units[m.unit_key] if m.unit_key else None
    present = None  # None: every cell was filled
    out = cells.fast_numbers(raw) if col.type == "number" and decimal == "." else None
    if out is None:
        parse = _cell_parser(col, decimal, rules)
        # CSV cells are all text; XLSX/JSON cells keep their type (True must not read as 1).
        keys = raw if all(type(c) is str for c in raw) else [(type(c), c) for c in raw]
        results = {}
        for key, cell in dict(zip(keys, raw, strict=True)).items():
            if cells.is_blank(cell):
                results[key] = _BLANK
                continue
            try:
                results[key] = parse(cell)
            except cells.CellError as exc:
                results[key] = _Bad(str(exc))
        out = [results[k] for k in keys]
        if any(v is _BLANK or isinstance(v, _Bad) for v in results.values()):
            present = [True] * len(out)
            for k, v in enumerate(out):
                if report.full:
                    break
                if v is _BLANK:
                    present[k] = False
                    out[k] = col.default
                    if col.required:
                        report.add(live_rows[k], header, None, "is empty")
                        bad.add(live[k])
                elif isinstance(v, _Bad):
                    present[k] = False
                    out[k] = None
                    report.add(live_rows[k], header, raw[k], v.message)
                    bad.add(live[k])
            if report.full:
                return out  # the caller stops here; nothing is converted
        if col.type == "text" and any(
            isinstance(v, str) and v.startswith(cells.FORMULA_START) for v in results.values()
        ):
            for k, v in enumerate(out):
                if isinstance(v, str) and v.startswith(cells.FORMULA_START):
                    report.add(
                        live_rows[k],
                        header,
                        raw[k],
                        "begins like a spreadsheet formula; it is stored "
                        "as text and exports prefix it with an apostrophe",
                        "warning",
                    )
    if col.type in ("date", "month"):
        numbers = {c for c in set(raw) if isinstance(c, str) and cells._SERIAL.fullmatch(c.strip())}
        native = not all(type(c) is str for c in raw)  # XLSX or JSON cells
        serials = sum(1 for c in raw if type(c) in (int, float) or c in numbers) if numbers or native else 0
        if serials:
            report.note(
                f"{header}: {serials} cell(s) read as Excel date serial numbers "
                f"(day 0 = {rules.epoch.isoformat()})"
            )
    if col.type == "number":
        _convert_and_check(col, unit, out, present, raw, live, live_rows, q, report, bad)
    return out


def _convert_and_check(col: Column, unit, out: list, present, raw, live, live_rows, q, report, bad) -> None:
    """Convert to the stored unit in place and check the physical bounds."""
    idx = range(len(out)) if present is None else [k for k, p in enumerate(present) if p]
    if unit is not None:
        conv = unit.convert
        for k in idx:
            out[k] = conv(out[k])
    if not idx or (col.bounds is None and col.warn is None):
        return
    values = np.fromiter((out[k] for k in idx), float, count=len(idx))
    for rng, severity in ((col.bounds, "error"), (col.warn, "warning")):
        if rng is None:
            continue
        above = values > rng.lo if rng.lo_open else values >= rng.lo
        below = values < rng.hi if rng.hi_open else values <= rng.hi
        for j in np.flatnonzero(~(above & below)):
            if report.full:
                return
            k = idx[j]
            if severity == "error":
                report.add(live_rows[k], col.name, raw[k], rng.problem(out[k]) + _in_stored(unit, col, q))
                bad.add(live[k])
            elif live[k] not in bad:
                report.add(live_rows[k], col.name, raw[k], f"is unusual: it {rng.describe()}", "warning")


def _in_stored(unit, col: Column, q) -> str:
    converted = unit is not None and unit.name.lower() != q[col.quantity].stored_unit.lower()
    return f" (after conversion from {unit.name})" if converted else ""


def _cell_parser(col: Column, decimal: str, rules):
    if col.type == "number":
        return lambda c: cells.number(c, decimal)
    if col.type == "name":
        return lambda c: cells.name(c, max_len=col.max_len)
    if col.type == "text":
        return lambda c: cells.text(c, max_len=col.max_len)
    if col.type == "date":
        if col.future:  # a plan's dates (compression, licence end, a planned well's start)
            rules = dataclasses.replace(rules, today=LATEST_PLAN_DATE)
        return lambda c: cells.date(c, rules)
    if col.type == "month":
        return lambda c: cells.month(c, rules)
    if col.type == "choice":
        return lambda c: cells.choice(c, col.choices, col.choice_aliases)
    raise ValueError(f"unknown column type {col.type!r}")
