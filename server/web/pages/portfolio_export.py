"""CSV and XLSX of the portfolio table, in the user's display units.

Row 1 is the header, each volume column naming its unit and gas-volume basis; the data
follow; then, after a blank row (CSV) or on the "notes" sheet (XLSX), the caution, the
basis and the filters. Text cells that a spreadsheet would run as a formula get a leading
apostrophe (``ingest.files.export.safe_cell``); numbers are written as numbers.
"""

from __future__ import annotations

import datetime as dt
import io
import math

import xlsxwriter

from ...services.forecast import CAUTION as FORECAST_CAUTION
from ...services.ingest.files.export import csv_bytes, safe_cell
from ...services.portfolio.produced import ProducedToDate
from ...services.portfolio.rows import PortfolioRow
from ..display import DisplayUnits
from ..templating import status_text

CAUTION = (
    "Caution: these estimates support, and do not replace, the judgement of qualified reservoir "
    "engineers; reserves must be classified and booked under the rules that apply to your company "
    "(regulator, SPE-PRMS). Material-balance ranges hold the parts the basis names (data scatter, "
    "model spread, metering, gauge and z-factor errors), not every uncertainty."
)


def _e(attr):
    return lambda r: getattr(r.estimate, attr) if r.estimate is not None else None


def _v(attr):
    return lambda r: getattr(r.volumetric, attr) if r.volumetric is not None else None


def _columns(du: DisplayUnits, produced: dict[int, ProducedToDate]):
    """(header, display kind or None, value of a row in stored units)."""
    gas = "gas_bscf"

    def made(attr):
        return lambda r: getattr(produced[r.field_id], attr) if r.field_id in produced else None

    return [
        ("field", None, lambda r: r.name),
        ("asset", None, lambda r: r.asset),
        ("basin", None, lambda r: r.basin),
        ("status", None, lambda r: status_text(r.estimate.status if r.estimate else None)),
        ("dynamic GIIP low (P90)", gas, _e("giip_low_bscf")),
        ("dynamic GIIP best", gas, _e("giip_best_bscf")),
        ("dynamic GIIP high (P10)", gas, _e("giip_high_bscf")),
        ("basis of the dynamic GIIP", None, lambda r: r.estimate.basis_words or None if r.estimate else None),
        ("straight p/z line GIIP low (P90)", gas, _e("line_giip_low_bscf")),
        ("straight p/z line GIIP best", gas, _e("line_giip_best_bscf")),
        ("straight p/z line GIIP high (P10)", gas, _e("line_giip_high_bscf")),
        ("volumetric GIIP low (P90)", gas, _v("low_bscf")),
        ("volumetric GIIP best", gas, _v("best_bscf")),
        ("volumetric GIIP high (P10)", gas, _v("high_bscf")),
        ("volumetric estimate date", None, _v("estimate_date")),
        ("dynamic best / volumetric best [ratio]", None, lambda r: r.dynamic_to_volumetric),
        ("dynamic best against volumetric range", None, lambda r: r.volumetric_position),
        ("EUR", gas, _e("eur_bscf")),
        ("recovery factor [fraction]", None, _e("recovery_factor_frac")),
        ("remaining", gas, _e("remaining_bscf")),
        ("forecast EUR at the commercial limit, low", gas, _e("forecast_eur_low_bscf")),
        ("forecast EUR at the commercial limit, best", gas, _e("forecast_eur_best_bscf")),
        ("forecast EUR at the commercial limit, high", gas, _e("forecast_eur_high_bscf")),
        ("forecast end date (best)", None, _e("forecast_end_date")),
        ("forecast stops because (best)", None, _e("forecast_stop_reason")),
        ("produced", gas, _e("cumulative_gas_bscf")),
        ("depletion, produced / dynamic best GIIP [fraction]", None, lambda r: r.depletion_frac),
        ("last survey date", None, lambda r: r.last_survey_date),
        ("flag codes", None, lambda r: "; ".join(r.flag_codes)),
        ("flags", None, lambda r: "; ".join(f"{f.get('severity')}: {f.get('title')}" for f in r.flags)),
        # "produced" above is the estimate's cumulative gas: say which gas it is, and what was measured
        (
            "produced is",
            None,
            lambda r: produced[r.field_id].basis if r.estimate and r.field_id in produced else None,
        ),
        ("separator gas produced", gas, made("separator_gas_bscf")),
        ("condensate produced", "liquid_stb", made("condensate_stb")),
        ("water produced", "liquid_stb", made("water_stb")),
    ]


def _rounded(value, du: DisplayUnits, kind: str | None):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if kind is None:
        return round(value, 4) if isinstance(value, float) else value
    shown = du.value(kind, value)
    return None if shown is None else round(shown, 3)


def portfolio_table(
    rows: list[PortfolioRow], produced: dict[int, ProducedToDate], du: DisplayUnits
) -> tuple[list[str], list[list]]:
    """Header (with units) and values (display units; dates as dates, text as text)."""
    cols = _columns(du, produced)
    header = [h if kind is None else f"{h} [{du.label(kind)}]" for h, kind, _ in cols]
    return header, [[_rounded(get(r), du, kind) for _, kind, get in cols] for r in rows]


def notes(du: DisplayUnits, filters: str, n_rows: int, now: dt.datetime) -> list[str]:
    basis = du.label("gas_bscf")
    return [
        CAUTION,
        f"Gas volumes in {basis}; unit system {du.system}; stored at {du.basis.label}.",
        "Dynamic GIIP (low/best/high = P90/P50/P10), EUR, recovery factor and remaining come from the "
        "basis of the stored material-balance estimate: the model the evidence supports, or the one an "
        "engineer chose; its range holds survey scatter, the models the data cannot tell apart and "
        "metering, gauge and z-factor errors. The straight p/z line's GIIP is given beside it. "
        "The comparison with the volumetric estimate uses the basis; volumetric low/best/high are the "
        "latest static estimate.",
        "Produced is the cumulative gas as the estimate counts it: separator gas, or the wet-gas "
        "equivalent (condensate added as gas) where 'produced is' says so; separator gas, condensate "
        "and water produced are the stored production as measured.",
        f"Fields: {n_rows}" + (f" (filtered: {filters})" if filters else " (all fields you may see)") + ".",
        f"Exported {now.strftime('%Y-%m-%d %H:%M UTC')} from Tankbook.",
    ]


def _text(v):
    return v.isoformat() if isinstance(v, dt.date) else v


def portfolio_csv(rows, produced, du: DisplayUnits, filters: str, now: dt.datetime) -> bytes:
    header, values = portfolio_table(rows, produced, du)
    tail = [[]] + [[line] for line in notes(du, filters, len(rows), now)]
    return csv_bytes(header, [[_text(v) for v in row] for row in values] + tail)


def portfolio_xlsx(rows, produced, du: DisplayUnits, filters: str, now: dt.datetime) -> bytes:
    header, values = portfolio_table(rows, produced, du)
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


def profiles_table(years: list[int], rows: list[list], du: DisplayUnits) -> tuple[list[str], list[list]]:
    """The yearly profiles' header (with the unit) and rows in display units."""
    unit = du.label("gas_bscf")
    header = ["field", "asset", "case", "stops because (best case)", f"EUR at the commercial limit [{unit}]"]
    header += [f"{y} [{unit}]" for y in years]
    values = [[*r[:4], *[_rounded(v, du, "gas_bscf") for v in r[4:]]] for r in rows]
    return header, values


def profile_notes(du: DisplayUnits, filters: str, n_fields: int, now: dt.datetime) -> list[str]:
    return [
        CAUTION,
        FORECAST_CAUTION,
        f"Gas per calendar year in {du.label('gas_bscf')}; unit system {du.system}; "
        f"stored at {du.basis.label}.",
        "Low, best and high are the forecast's cases from the basis model's P90, P50 and P10; "
        "summing fields' low (or high) cases does not give the portfolio's P90 (P10).",
        f"Fields with a forecast: {n_fields}" + (f" (filtered: {filters})" if filters else "") + ".",
        f"Exported {now.strftime('%Y-%m-%d %H:%M UTC')} from Tankbook.",
    ]


def profiles_csv(years, rows, du: DisplayUnits, filters: str, now: dt.datetime) -> bytes:
    header, values = profiles_table(years, rows, du)
    n_fields = len({r[0] for r in rows})
    tail = [[]] + [[line] for line in profile_notes(du, filters, n_fields, now)]
    return csv_bytes(header, values + tail)


def profiles_xlsx(years, rows, du: DisplayUnits, filters: str, now: dt.datetime) -> bytes:
    header, values = profiles_table(years, rows, du)
    buf = io.BytesIO()
    wb = xlsxwriter.Workbook(buf, {"in_memory": True, "strings_to_formulas": False, "strings_to_urls": False})
    bold = wb.add_format({"bold": True, "text_wrap": True, "valign": "top"})
    ws = wb.add_worksheet("profiles")
    for j, h in enumerate(header):
        ws.write_string(0, j, safe_cell(h), bold)
        ws.set_column(j, j, 12 if j > 1 else 20)
    for i, row in enumerate(values, start=1):
        for j, v in enumerate(row):
            if v is None or v == "":
                continue
            if isinstance(v, int | float):
                ws.write_number(i, j, v)
            else:
                ws.write_string(i, j, str(safe_cell(v)))
    ws.freeze_panes(1, 3)
    about = wb.add_worksheet("notes")
    about.set_column(0, 0, 120)
    for i, line in enumerate(profile_notes(du, filters, len({r[0] for r in rows}), now)):
        about.write_string(i, 0, safe_cell(line))
    wb.close()
    return buf.getvalue()
