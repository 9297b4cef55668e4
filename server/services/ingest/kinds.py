"""The kinds of upload file, their columns and their row-level checks."""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from . import cells
from .report import ValidationReport
from .tabular import Table

SURVEY_KINDS = ("static", "buildup", "formation_test")
SURVEY_QUALITIES = ("good", "fair", "poor")


@dataclass(frozen=True)
class Column:
    name: str
    parse: Callable[[str], Any]
    required: bool = True
    default: Any = None
    help: str = ""


@dataclass(frozen=True)
class FileKind:
    name: str
    title: str
    columns: tuple[Column, ...]
    key: tuple[str, ...]  # columns that identify a row; duplicates are errors
    alternatives: dict[str, tuple[str, ...]] = field(default_factory=dict)

    def column(self, name: str) -> Column:
        return next(c for c in self.columns if c.name == name)


def _survey_columns(atmosphere_psia: float, today: dt.date) -> tuple[Column, ...]:
    return (
        Column("field", cells.text, help="field name, as in Tankbook"),
        Column("well", cells.text, help="well name within the field"),
        Column("survey_date", lambda s: cells.iso_date(s, today=today), help="YYYY-MM-DD"),
        Column("pressure_psia", cells.number, required=False, help="absolute pressure at the gauge"),
        Column(
            "pressure_psig",
            lambda s: cells.number(s) + atmosphere_psia,
            required=False,
            help=f"gauge pressure; converted with an atmosphere of {atmosphere_psia} psia",
        ),
        Column("gauge_depth_ft", cells.number, required=False, help="true vertical depth of the gauge"),
        Column("kind", lambda s: cells.choice(s, SURVEY_KINDS), required=False, default="static"),
        Column("quality", lambda s: cells.choice(s, SURVEY_QUALITIES), required=False, default="good"),
    )


def _production_columns(today: dt.date) -> tuple[Column, ...]:
    return (
        Column("field", cells.text),
        Column("well", cells.text),
        Column("month", lambda s: cells.iso_month(s, today=today), help="YYYY-MM"),
        Column("gas_mscf", cells.number, help="gas produced in the month, Mscf"),
        Column("condensate_stb", cells.number, required=False, default=0.0),
        Column("water_stb", cells.number, required=False, default=0.0),
    )


def file_kind(name: str, *, atmosphere_psia: float = 14.696, today: dt.date | None = None) -> FileKind:
    """The definition of an upload kind ("surveys" or "production")."""
    today = today or dt.date.today()
    if name == "surveys":
        return FileKind(
            "surveys",
            "Pressure surveys",
            _survey_columns(atmosphere_psia, today),
            key=("field", "well", "survey_date"),
            alternatives={"pressure": ("pressure_psia", "pressure_psig")},
        )
    if name == "production":
        return FileKind(
            "production", "Monthly production", _production_columns(today), key=("field", "well", "month")
        )
    raise ValueError(f"unknown upload kind {name!r}")


UPLOAD_KINDS = ("surveys", "production")


def parse_rows(kind: FileKind, table: Table, report: ValidationReport) -> list[dict]:
    """Check the header, parse every cell and flag duplicate keys; return typed rows."""
    header = [h.strip().lower() for h in table.header]
    known = {c.name for c in kind.columns}
    for i, h in enumerate(header):
        if h not in known:
            report.add(
                1,
                h or f"#{i + 1}",
                None,
                f"unknown column; expected some of: {', '.join(c.name for c in kind.columns)}",
            )
    seen_cols = set()
    for h in header:
        if h in seen_cols:
            report.add(1, h, None, "column appears twice")
        seen_cols.add(h)
    for c in kind.columns:
        if c.required and c.name not in header:
            report.add(1, c.name, None, "required column is missing")
    for group, names in kind.alternatives.items():
        present = [n for n in names if n in header]
        if len(present) != 1:
            report.add(
                1, " or ".join(names), None, f"exactly one {group} column is required, found {len(present)}"
            )
    if report.errors:
        return []
    report.rows_total = len(table.rows)
    out: list[dict] = []
    seen: dict[tuple, int] = {}
    for i, raw in enumerate(table.rows):
        rownum = i + 2
        if not any(cell.strip() for cell in raw):
            report.add(rownum, None, None, "blank row")
            continue
        if len(raw) != len(header):
            report.add(rownum, None, None, f"has {len(raw)} cells but the header has {len(header)}")
            continue
        rec: dict[str, Any] = {"_row": rownum}
        ok = True
        for h, cell in zip(header, raw, strict=True):
            col = kind.column(h)
            if not cell.strip() and not col.required:
                rec[h] = col.default
                continue
            try:
                rec[h] = col.parse(cell)
            except cells.CellError as exc:
                report.add(rownum, h, cell, f"{exc}")
                ok = False
        if not ok:
            continue
        for c in kind.columns:
            rec.setdefault(c.name, c.default)
        key = tuple(str(rec[k]).lower() for k in kind.key)
        if key in seen:
            report.add(rownum, None, None, f"duplicates row {seen[key]} ({', '.join(kind.key)})")
            continue
        seen[key] = rownum
        out.append(rec)
    return out
