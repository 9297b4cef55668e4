"""CSV and XLSX of the portfolio table, in the user's display units.

Row 1 is the header, each volume column naming its unit and gas-volume basis; the data
follow; then, after a blank row (CSV) or on the "notes" sheet (XLSX), the caution, the
basis and the filters. Text cells that a spreadsheet would run as a formula get a leading
apostrophe (``ingest.export.safe_cell``); numbers are written as numbers.
"""

from __future__ import annotations

import datetime as dt
import io
import math

import xlsxwriter

from ..services.ingest.export import csv_bytes, safe_cell
from ..services.portfolio import PortfolioRow
from .display import DisplayUnits

CAUTION = (
    "Caution: these estimates support, and do not replace, the judgement of qualified reservoir "
    "engineers; reserves must be classified and booked under the rules that apply to your company "
    "(regulator, SPE-PRMS). Material-balance ranges reflect data scatter only, not model error."
)


def _e(attr):
    return lambda r: getattr(r.estimate, attr) if r.estimate is not None else None


def _v(attr):
    return lambda r: getattr(r.volumetric, attr) if r.volumetric is not None else None


def _columns(du: DisplayUnits):
    """(header, display kind or None, value of a row in stored units)."""
    gas = "gas_bscf"
    return [
        ("field", None, lambda r: r.name),
        ("asset", None, lambda r: r.asset),
        ("basin", None, lambda r: r.basin),
        ("status", None, lambda r: r.estimate.status if r.estimate else "not computed"),
        ("dynamic GIIP low (P90)", gas, _e("giip_low_bscf")),
        ("dynamic GIIP best", gas, _e("giip_best_bscf")),
        ("dynamic GIIP high (P10)", gas, _e("giip_high_bscf")),
        ("volumetric GIIP low (P90)", gas, _v("low_bscf")),
        ("volumetric GIIP best", gas, _v("best_bscf")),
        ("volumetric GIIP high (P10)", gas, _v("high_bscf")),
        ("volumetric estimate date", None, _v("estimate_date")),
        ("dynamic best / volumetric best [ratio]", None, lambda r: r.dynamic_to_volumetric),
        ("dynamic best against volumetric range", None, lambda r: r.volumetric_position),
        ("EUR", gas, _e("eur_bscf")),
        ("recovery factor [fraction]", None, _e("recovery_factor_frac")),
        ("remaining", gas, _e("remaining_bscf")),
        ("produced", gas, _e("cumulative_gas_bscf")),
        ("depletion, produced / dynamic best GIIP [fraction]", None, lambda r: r.depletion_frac),
        ("last survey date", None, lambda r: r.last_survey_date),
        ("flag codes", None, lambda r: "; ".join(r.flag_codes)),
        ("flags", None, lambda r: "; ".join(f"{f.get('severity')}: {f.get('title')}" for f in r.flags)),
    ]


def _rounded(value, du: DisplayUnits, kind: str | None):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if kind is None:
        return round(value, 4) if isinstance(value, float) else value
    shown = du.value(kind, value)
    return None if shown is None else round(shown, 3)


def portfolio_table(rows: list[PortfolioRow], du: DisplayUnits) -> tuple[list[str], list[list]]:
    """Header (with units) and values (display units; dates as dates, text as text)."""
    cols = _columns(du)
    header = [h if kind is None else f"{h} [{du.label(kind)}]" for h, kind, _ in cols]
    return header, [[_rounded(get(r), du, kind) for _, kind, get in cols] for r in rows]


def notes(du: DisplayUnits, filters: str, n_rows: int, now: dt.datetime) -> list[str]:
    basis = du.label("gas_bscf")
    return [
        CAUTION,
        f"Gas volumes in {basis}; unit system {du.system}; stored at {du.basis.label}.",
        "Dynamic GIIP low/high are the P90/P10 of the stored material-balance estimate; "
        "volumetric low/best/high are the latest static estimate.",
        f"Fields: {n_rows}" + (f" (filtered: {filters})" if filters else " (all fields you may see)") + ".",
        f"Exported {now.strftime('%Y-%m-%d %H:%M UTC')} from Tankbook.",
    ]


def _text(v):
    return v.isoformat() if isinstance(v, dt.date) else v


def portfolio_csv(rows, du: DisplayUnits, filters: str, now: dt.datetime) -> bytes:
    header, values = portfolio_table(rows, du)
    tail = [[]] + [[line] for line in notes(du, filters, len(rows), now)]
    return csv_bytes(header, [[_text(v) for v in row] for row in values] + tail)


def portfolio_xlsx(rows, du: DisplayUnits, filters: str, now: dt.datetime) -> bytes:
    header, values = portfolio_table(rows, du)
    buf = io.BytesIO()
    wb = xlsxwriter.Workbook(buf, {"in_memory": True, "strings_to_formulas": False, "strings_to_urls": False})
    bold = wb.add_format({"bold": True, "text_wrap": True, "valign": "top"})
    date_fmt = wb.add_format({"num_format": "yyyy-mm-dd"})
    ws = wb.add_worksheet("portfolio")
    for j, h in enumerate(header):
        ws.write_string(0, j, safe_cell(h), bold)
        ws.set_column(j, j, 14 if j else 20)
    for i, row in enumerate(values, start=1):
        for j, v in enumerate(row):
            if v is None or v == "":
                continue
            if isinstance(v, dt.date):
                ws.write_datetime(i, j, dt.datetime.combine(v, dt.time()), date_fmt)
            elif isinstance(v, int | float):
                ws.write_number(i, j, v)
            else:
                ws.write_string(i, j, str(safe_cell(v)))
    ws.freeze_panes(1, 1)
    about = wb.add_worksheet("notes")
    about.set_column(0, 0, 120)
    for i, line in enumerate(notes(du, filters, len(rows), now)):
        about.write_string(i, 0, safe_cell(line))
    wb.close()
    return buf.getvalue()
