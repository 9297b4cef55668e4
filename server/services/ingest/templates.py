"""Downloadable templates for each kind of upload file (CSV and XLSX)."""

from __future__ import annotations

import datetime as dt
import io
import re

import xlsxwriter

from .files.export import csv_bytes, safe_cell
from .kinds import FileKind

_ISO_DATE = re.compile(r"\d{4}-\d{2}-\d{2}")


def template_csv(kind: FileKind) -> bytes:
    """Header with units and two invented example rows."""
    header = [c.template_header for c in kind.columns]
    rows = [[c.examples[i] for c in kind.columns] for i in range(kind.example_rows)]
    return csv_bytes(header, rows)


def template_xlsx(kind: FileKind) -> bytes:
    """A workbook: sheet 1 holds the header and examples (dates as real dates), sheet 2
    describes every column. Only sheet 1 is read on upload."""
    buf = io.BytesIO()
    wb = xlsxwriter.Workbook(buf, {"in_memory": True, "strings_to_formulas": False, "strings_to_urls": False})
    bold = wb.add_format({"bold": True})
    date_fmt = wb.add_format({"num_format": "yyyy-mm-dd"})
    ws = wb.add_worksheet("data")
    for j, c in enumerate(kind.columns):
        ws.write_string(0, j, c.template_header, bold)
        ws.set_column(j, j, max(12, len(c.template_header) + 2))
        for i in range(kind.example_rows):
            v = c.examples[i]
            if v == "" or v is None:
                continue
            if c.type == "date" and isinstance(v, str) and _ISO_DATE.fullmatch(v):
                ws.write_datetime(i + 1, j, dt.datetime.fromisoformat(v), date_fmt)
            elif isinstance(v, int | float):
                ws.write_number(i + 1, j, v)
            else:
                ws.write_string(i + 1, j, str(safe_cell(v)))
    about = wb.add_worksheet("columns")
    for j, title in enumerate(("column", "required", "meaning")):
        about.write_string(0, j, title, bold)
    for i, c in enumerate(kind.columns, start=1):
        about.write_string(i, 0, c.template_header)
        about.write_string(i, 1, "yes" if c.required else "no")
        about.write_string(i, 2, c.help or c.type)
    about.set_column(0, 0, 28)
    about.set_column(2, 2, 80)
    wb.close()
    return buf.getvalue()
