"""Writing cells that a spreadsheet will open: text never runs as a formula."""

from __future__ import annotations

import csv
import io

from .cells import FORMULA_START


def safe_cell(value):
    """Text that a spreadsheet would take as a formula gets a leading apostrophe (OWASP
    "CSV injection" advice); numbers and other values pass unchanged."""
    if isinstance(value, str) and value.startswith(FORMULA_START):
        return "'" + value
    return value


def csv_bytes(header: list[str], rows: list[list]) -> bytes:
    """UTF-8 CSV (with a byte-order mark so spreadsheets pick the encoding) of safe cells."""
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\r\n")
    writer.writerow([safe_cell(h) for h in header])
    for r in rows:
        writer.writerow(["" if v is None else safe_cell(v) for v in r])
    return ("\ufeff" + buf.getvalue()).encode("utf-8")


def report_csv(report: dict) -> bytes:
    """The problems of a validation report as CSV (values come from the user's file)."""
    rows = [[p["row"], p["column"], p["value"], p["message"], p["severity"]] for p in report["problems"]]
    return csv_bytes(["row", "column", "value", "problem", "severity"], rows)
