"""The review as a workbook (XLSX, xlsxwriter like the portfolio export).

Sheets: notes (the review, the cautions), summary, bookings, reconciliation, reconciliation
totals, profiles, justifications and columns (every column of every sheet with its unit).
Numbers are written as numbers, dates as dates, and text always as text: text that a
spreadsheet would take as a formula (``= + - @``) also gets a leading apostrophe
(``ingest.files.export.safe_cell``), so no cell ever holds a formula made of user text.
Units are the services': gas in Bscf (stored separator-gas basis; sales gas where the column
says so), condensate in stb.
"""

from __future__ import annotations

import datetime as dt
import io
import math

import xlsxwriter

from ..ingest.files.export import safe_cell
from ..reserves.reconcile import ASSIGNABLE
from .content import Report

B, S = "Bscf", "stb"
PROFILES_NOTE = (
    "Per field and case: cumulative gas at the commercial limit, the remaining volume when forecast "
    "and why the case stops. The year-by-year volumes are on the sheet 'yearly profiles' (reviews "
    "frozen before the snapshot kept them have none there)."
)

# sheet -> [(header, unit, meaning, value of a row)]
BOOKING_COLUMNS = [
    ("field", "", "field name", lambda f: f.field_name),
    ("asset", "", "asset name", lambda f: f.asset_name),
    ("resource class", "", "reserves or contingent resources (SPE-PRMS 2018)", lambda f: f.resource_class),
    ("status", "", "project maturity status (SPE-PRMS 2018)", lambda f: f.status),
    ("categories", "", "the cumulative categories of the class", lambda f: "/".join(f.categories)),
    *[
        (
            f"{what} {case}",
            B,
            f"{meaning}, {case} case",
            (lambda a: lambda f: getattr(f, a))(f"{key}_{case}_bscf"),
        )
        for what, key, meaning in (
            ("computed", "computed", "remaining at the effective date as computed"),
            ("override", "override", "engineer's override (blank: none)"),
            ("booked", "booked", "booked remaining gas (override where given, else computed)"),
        )
        for case in ("low", "best", "high")
    ],
    (
        "sales-gas factor",
        "fraction",
        "share of separator gas delivered for sale after fuel, flare and shrinkage, frozen with the "
        "snapshot (blank: frozen before the factor existed)",
        lambda f: f.sales_gas_frac,
    ),
    ("sales-gas factor from", "", "team default or the field's own", lambda f: f.sales_gas_frac_source),
    *[
        (
            f"booked sales gas {case}",
            B,
            f"booked separator gas times the sales-gas factor, {case} case",
            (lambda a: lambda f: getattr(f, a))(f"booked_sales_{case}_bscf"),
        )
        for case in ("low", "best", "high")
    ],
    *[
        (
            f"booked condensate {case}",
            S,
            f"condensate with the booked gas, {case} case",
            (lambda a: lambda f: getattr(f, a))(f"booked_condensate_{case}_stb"),
        )
        for case in ("low", "best", "high")
    ],
    (
        "condensate-gas ratio",
        "stb/MMscf",
        "condensate per gas produced to the date",
        lambda f: f.condensate_gas_ratio_stb_per_mmscf,
    ),
    (
        "produced gas to the effective date",
        B,
        "separator gas of the months ended by the date",
        lambda f: f.produced_gas_bscf,
    ),
    (
        "produced condensate to the effective date",
        S,
        "condensate of the same months",
        lambda f: f.produced_condensate_stb,
    ),
    (
        "last production month",
        "date",
        "first day of the last month with production",
        lambda f: f.production_last_month,
    ),
    (
        "last year's 2P",
        B,
        "2P reserves of the last approved review (blank: not booked then)",
        lambda f: f.last_2p_bscf,
    ),
    ("2P change", B, "this year's 2P less last year's", lambda f: f.change_2p_bscf),
    (
        "volumes from",
        "",
        "forecast (cases to the commercial limit), basis (EUR) or none",
        lambda f: f.volume_source,
    ),
    ("basis", "", "the headline basis of the estimate", lambda f: f.basis_title),
    ("basis chosen by", "", "automatic rules or an engineer", lambda f: f.basis_source),
    *[
        (
            f"GIIP {case}",
            B,
            f"gas initially in place of the basis, {case}",
            (lambda a: lambda f: getattr(f, a))(f"giip_{case}_bscf"),
        )
        for case in ("low", "best", "high")
    ],
    *[
        (
            f"EUR {case}",
            B,
            f"estimated ultimate recovery frozen with the review, {case}",
            (lambda a: lambda f: getattr(f, a))(f"eur_{case}_bscf"),
        )
        for case in ("low", "best", "high")
    ],
    ("estimate id", "", "the stored estimate the review froze", lambda f: f.estimate_id),
    (
        "estimate computed at",
        "date and time (UTC)",
        "when that estimate was computed",
        lambda f: f.estimate_computed_at,
    ),
    ("engine version", "", "engine version of the estimate", lambda f: f.engine_version),
    ("input fingerprint", "", "fingerprint of the estimate's inputs", lambda f: f.inputs_fingerprint),
]
SUMMARY_COLUMNS = [
    ("group", "", "an asset or the portfolio", lambda t: t.group),
    ("category", "", "1P/2P/3P reserves or 1C/2C/3C contingent resources", lambda t: t.category),
    ("gas", B, "arithmetic sum of the fields' booked separator gas", lambda t: t.gas_bscf),
    (
        "sales gas",
        B,
        "arithmetic sum of the fields' booked sales gas (blank: some field states none)",
        lambda t: t.sales_gas_bscf,
    ),
    ("condensate", S, "arithmetic sum of the fields' booked condensate", lambda t: t.condensate_stb),
    ("fields", "count", "fields in the sum", lambda t: t.fields),
]
_STEPS = ("opening_bscf", "production_bscf", *ASSIGNABLE, "closing_bscf")
_STEP_WORDS = {
    "opening_bscf": "last approved review's remaining reserves",
    "production_bscf": "gas produced between the two effective dates",
    "revisions_bscf": "revisions of previous estimates",
    "extensions_discoveries_bscf": "extensions and discoveries",
    "improved_recovery_bscf": "improved recovery",
    "acquisitions_bscf": "acquisitions",
    "disposals_bscf": "disposals (a positive amount leaves)",
    "closing_bscf": "this review's remaining reserves",
}
_STEP_COLUMNS = [
    (k.removesuffix("_bscf").replace("_", " "), B, _STEP_WORDS[k], (lambda a: lambda x: _get(x, a))(k))
    for k in _STEPS
]
RECONCILIATION_COLUMNS = [
    ("field", "", "field name", lambda ln: ln["field_name"]),
    ("asset", "", "asset name", lambda ln: ln["asset_name"]),
    ("category", "", "reserves category", lambda ln: ln["category"]),
    ("presence", "", "both years, new this year, or left the portfolio", lambda ln: ln["presence"]),
    *_STEP_COLUMNS,
    ("out of balance", B, "closing less opening carried through every line", lambda ln: ln["imbalance_bscf"]),
    (
        "assigned by an engineer",
        "yes/no",
        "whether the split was assigned (else the default)",
        lambda ln: "yes" if ln["assigned"] else "no",
    ),
]
TOTAL_COLUMNS = [
    ("group", "", "an asset or the portfolio", lambda t: t.group),
    ("category", "", "reserves category", lambda t: t.category),
    *_STEP_COLUMNS,
]
PROFILE_COLUMNS = [
    ("field", "", "field name", lambda r: r[0]),
    ("case", "", "forecast case (low, best, high)", lambda r: r[1]),
    ("category", "", "the category the case books", lambda r: r[2]),
    ("cumulative gas at the commercial limit", B, "the case's EUR", lambda r: r[3].get("eur_bscf")),
    (
        "remaining at the forecast start",
        B,
        "the case's remaining volume when forecast",
        lambda r: r[3].get("remaining_bscf"),
    ),
    ("stops because", "", "why the case's forecast stops", lambda r: r[3].get("stop_reason")),
]
YEARLY_COLUMNS = [
    ("field", "", "field name", lambda r: r[0]),
    ("case", "", "forecast case (low, best, high)", lambda r: r[1]),
    ("category", "", "the category the case books", lambda r: r[2]),
    ("year", "", "calendar year", lambda r: r[3]["year"]),
    ("gas", B, "separator gas forecast in the year", lambda r: r[3].get("gas_bscf")),
    ("condensate", S, "condensate forecast in the year", lambda r: r[3].get("condensate_stb")),
    (
        "cumulative gas",
        B,
        "cumulative gas at the year's last forecast month, history included",
        lambda r: r[3].get("cumulative_bscf"),
    ),
]
JUSTIFICATION_COLUMNS = [
    ("field", "", "field name", lambda f: f.field_name),
    (
        "justification required because",
        "",
        "why one is required (blank: not required)",
        lambda f: "; ".join(f.justification_required),
    ),
    ("justification", "", "the engineer's written justification", lambda f: f.justification),
    ("override reason", "", "why a volume was overridden", lambda f: f.override_reason),
    (
        "flags",
        "",
        "severity: title of each flag of the estimate",
        lambda f: "; ".join(f"{x.get('severity')}: {x.get('title')}" for x in f.flags),
    ),
]


def _get(x, key):
    return x[key] if isinstance(x, dict) else getattr(x, key)


class _Writer:
    def __init__(self, book):
        self.book = book
        self.head = book.add_format({"bold": True, "text_wrap": True, "valign": "top"})
        self.date = book.add_format({"num_format": "yyyy-mm-dd"})
        self.time = book.add_format({"num_format": "yyyy-mm-dd hh:mm"})
        self.num = book.add_format({"num_format": "#,##0.000"})

    def cell(self, ws, r, c, v):
        if v is None:
            return
        if isinstance(v, bool):
            ws.write_boolean(r, c, v)
        elif isinstance(v, int | float):
            if math.isfinite(v):
                ws.write_number(r, c, v, self.num if isinstance(v, float) else None)
        elif isinstance(v, dt.datetime):
            ws.write_datetime(r, c, v.astimezone(dt.UTC).replace(tzinfo=None) if v.tzinfo else v, self.time)
        elif isinstance(v, dt.date):
            ws.write_datetime(r, c, dt.datetime(v.year, v.month, v.day), self.date)
        else:
            ws.write_string(r, c, safe_cell(str(v)))

    def table(self, name, columns, rows, first_row=0):
        ws = self.book.add_worksheet(name)
        for c, (head, unit, _, _) in enumerate(columns):
            ws.write_string(first_row, c, f"{head} [{unit}]" if unit else head, self.head)
            ws.set_column(c, c, 16)
        for r, row in enumerate(rows, start=first_row + 1):
            for c, (_, _, _, get) in enumerate(columns):
                self.cell(ws, r, c, get(row))
        ws.freeze_panes(first_row + 1, 0)
        return ws


def report_xlsx(report: Report) -> bytes:
    d, rv = report.detail, report.detail.review
    buf = io.BytesIO()
    book = xlsxwriter.Workbook(
        buf, {"in_memory": True, "strings_to_formulas": False, "strings_to_urls": False}
    )
    w = _Writer(book)
    notes = book.add_worksheet("notes")
    facts = [
        ("review", rv.name),
        ("review id", rv.id),
        ("revision", rv.revision),
        ("effective date", rv.effective_date),
        ("status", rv.status if report.draft else "approved"),
        ("draft (not approved)", "yes" if report.draft else "no"),
        ("prepared by", rv.created_by_name),
        ("approver", rv.approved_by_name or "not approved"),
        ("approved at (UTC)", rv.approved_at),
        ("approval comment", rv.approval_comment),
        ("generated at (UTC)", report.generated_at),
        ("units", "gas in Bscf (separator-gas basis; sales gas where marked), condensate in stb"),
    ]
    for r, (k, v) in enumerate(facts):
        notes.write_string(r, 0, k, w.head)
        w.cell(notes, r, 1, v)
    for r, text in enumerate(report.cautions, start=len(facts) + 1):
        w.cell(notes, r, 0, text)
    notes.set_column(0, 0, 24)
    notes.set_column(1, 1, 60)
    sheets = [
        ("summary", SUMMARY_COLUMNS, d.totals),
        ("bookings", BOOKING_COLUMNS, d.fields),
        ("reconciliation", RECONCILIATION_COLUMNS, d.reconciliation),
        ("reconciliation totals", TOTAL_COLUMNS, d.reconciliation_totals),
    ]
    for name, cols, rows in sheets:
        w.table(name, cols, rows)
    profiles = [
        (f.field_name, case, cat, f.forecast["cases"][case])
        for f in d.fields
        if f.forecast
        for case, cat in zip(("low", "best", "high"), f.categories, strict=True)
    ]
    ws = w.table("profiles", PROFILE_COLUMNS, profiles, first_row=2)
    ws.write_string(0, 0, PROFILES_NOTE)
    yearly = [
        (name, case, cat, row) for name, case, cat, summary in profiles for row in summary.get("yearly") or []
    ]
    w.table("yearly profiles", YEARLY_COLUMNS, yearly)
    w.table("justifications", JUSTIFICATION_COLUMNS, d.fields)
    described = [
        *sheets,
        ("profiles", PROFILE_COLUMNS, None),
        ("yearly profiles", YEARLY_COLUMNS, None),
        ("justifications", JUSTIFICATION_COLUMNS, None),
    ]
    cols = book.add_worksheet("columns")
    for c, head in enumerate(("sheet", "column", "unit", "meaning")):
        cols.write_string(0, c, head, w.head)
    r = 1
    for name, columns, _ in described:
        for head, unit, meaning, _ in columns:
            for c, v in enumerate((name, f"{head} [{unit}]" if unit else head, unit or "text", meaning)):
                cols.write_string(r, c, v)
            r += 1
    book.close()
    return buf.getvalue()
