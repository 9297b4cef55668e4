"""The review's workbook on both databases, read back with openpyxl (an independent XLSX reader):
the same numbers as the review's read model, dates as dates, user text never a formula."""

import copy
import datetime as dt
import io

import openpyxl
import pytest

from server.services.reserves import booking as bk
from server.services.reserves import reconcile, views, workflow
from server.services.reserves_report import content, workbook
from tests.factories import make_field
from tests.services.reserves.conftest import add_estimate, add_production

YE24, YE25 = dt.date(2024, 12, 31), dt.date(2025, 12, 31)
REL = 1e-15  # xlsxwriter writes a number with 16 significant digits (format ".16g")


def _book(session, review):
    return openpyxl.load_workbook(io.BytesIO(workbook.report_xlsx(content.build_report(session, review))))


def _records(ws, header_row=1):
    rows = list(ws.iter_rows(min_row=header_row, values_only=True))
    return [dict(zip(rows[0], r, strict=True)) for r in rows[1:]]


def test_workbook_rereads_to_the_review_numbers_and_dates(session, portfolio, people):
    last = workflow.create_review(session, people["eng"], "YE24", YE24)
    workflow.submit(session, people["eng"], last)
    workflow.approve(session, people["appr"], last, "ok")
    r = workflow.create_review(session, people["eng"], "YE25", YE25)
    detail = views.review_detail(session, r)
    wb = _book(session, r)
    assert wb.sheetnames == [
        "notes", "summary", "bookings", "reconciliation", "reconciliation totals", "profiles",
        "yearly profiles", "justifications", "columns",
    ]  # fmt: skip
    notes = {row[0]: row[1] for row in wb["notes"].iter_rows(values_only=True) if row[0]}
    assert notes["effective date"] == dt.datetime(2025, 12, 31) and notes["draft (not approved)"] == "yes"
    books = {row["field"]: row for row in _records(wb["bookings"])}
    for f in detail.fields:
        row = books[f.field_name]
        assert row["booked best [Bscf]"] == pytest.approx(f.booked_best_bscf, rel=REL)
        assert row["booked condensate low [stb]"] == pytest.approx(f.booked_condensate_low_stb, rel=REL)
        assert row["produced gas to the effective date [Bscf]"] == pytest.approx(f.produced_gas_bscf, rel=REL)
        assert row["last production month [date]"] == dt.datetime.combine(f.production_last_month, dt.time())
        assert isinstance(row["estimate computed at [date and time (UTC)]"], dt.datetime)
        assert row["input fingerprint"] == f.inputs_fingerprint
    summary = {(t["group"], t["category"]): t for t in _records(wb["summary"])}
    for t in detail.totals:
        assert summary[(t.group, t.category)]["gas [Bscf]"] == pytest.approx(t.gas_bscf, rel=REL)
        assert summary[(t.group, t.category)]["condensate [stb]"] == pytest.approx(t.condensate_stb, rel=REL)
    lines = {(ln["field"], ln["category"]): ln for ln in _records(wb["reconciliation"])}
    for ln in detail.reconciliation:
        got = lines[(ln["field_name"], ln["category"])]
        assert got["opening [Bscf]"] == pytest.approx(ln["opening_bscf"], rel=REL)
        assert got["production [Bscf]"] == pytest.approx(ln["production_bscf"], rel=REL)
        assert got["closing [Bscf]"] == pytest.approx(ln["closing_bscf"], rel=REL)
    # the cases' summaries (this forecast has no yearly rows: the yearly sheet has only its header)
    prof = wb["profiles"]
    assert "yearly profiles" in prof["A1"].value
    assert _records(wb["yearly profiles"]) == []
    cases = _records(prof, header_row=3)
    assert [(c["field"], c["case"], c["category"]) for c in cases] == [
        ("Lowmoor", "low", "1P"), ("Lowmoor", "best", "2P"), ("Lowmoor", "high", "3P"),
    ]  # fmt: skip
    assert cases[1]["cumulative gas at the commercial limit [Bscf]"] == 22.0
    # every column of every data sheet is described once, with its unit
    described = {(c["sheet"], c["column"]) for c in _records(wb["columns"])}
    for name in ("summary", "bookings", "reconciliation", "reconciliation totals", "yearly profiles"):
        heads = next(wb[name].iter_rows(max_row=1, values_only=True))
        assert {(name, h) for h in heads} <= described, name
    assert {(c["sheet"], c["unit"]) for c in _records(wb["columns"]) if c["column"] == "gas [Bscf]"} == {
        ("summary", "Bscf"),
        ("yearly profiles", "Bscf"),
    }


def test_text_that_looks_like_a_formula_is_stored_as_text(session, people):
    f = make_field(session, name='=HYPERLINK("http://example.invalid","x")', asset="+North")
    add_estimate(session, f, flags=[{"code": "a", "severity": "alert", "title": "@SUM(A1)", "reason": "r"}])
    add_production(session, f, dt.date(2024, 1, 1), 12, 1e6 / 12)
    r = workflow.create_review(session, people["eng"], "-1+2", YE24)
    snap, b = next(iter(reconcile.bookings_of(session, r.id).values()))
    bk.change_booking(session, people["eng"], r, snap, b, bk.BookingChange(justification="=1+1 checked"))
    wb = _book(session, r)
    cells = [c for ws in wb.worksheets for row in ws.iter_rows() for c in row if c.value is not None]
    assert not [c.coordinate for c in cells if c.data_type == "f"]
    texts = {c.value for c in cells if c.data_type == "s"}
    for typed in ('=HYPERLINK("http://example.invalid","x")', "+North", "-1+2", "=1+1 checked"):
        assert "'" + typed in texts, typed
    assert "alert: @SUM(A1)" in texts  # starts with a letter: unchanged


def test_yearly_profiles_are_the_frozen_forecast_years(session, portfolio, people):
    e = add_estimate(session, portfolio["low"], eur=(20.0, 25.0, 30.0), forecast_eur=(18.0, 22.0, 27.0))
    detail = copy.deepcopy(e.detail)
    years = [
        {"year": 2026, "gas_bscf": 1.5, "condensate_stb": 100.0, "cumulative_bscf": 3.0},
        {"year": 2027, "gas_bscf": 1.25, "condensate_stb": None, "cumulative_bscf": 4.25},
    ]
    for p in detail["forecast"]["profiles"]:
        p["yearly"] = years
    e.detail = detail
    session.flush()
    r = workflow.create_review(session, people["eng"], "YE25", YE25)
    rows = [x for x in _records(_book(session, r)["yearly profiles"]) if x["field"] == "Lowmoor"]
    assert [(x["case"], x["category"], x["year"]) for x in rows] == [
        ("low", "1P", 2026), ("low", "1P", 2027), ("best", "2P", 2026), ("best", "2P", 2027),
        ("high", "3P", 2026), ("high", "3P", 2027),
    ]  # fmt: skip
    y = rows[0]
    assert (y["gas [Bscf]"], y["condensate [stb]"], y["cumulative gas [Bscf]"]) == (1.5, 100.0, 3.0)
    assert rows[1]["condensate [stb]"] is None and rows[1]["cumulative gas [Bscf]"] == 4.25
    # the snapshot holds a copy: changing the estimate afterwards changes nothing in the review
    e.detail = {**detail, "forecast": None}
    session.flush()
    again = [x for x in _records(_book(session, r)["yearly profiles"]) if x["field"] == "Lowmoor"]
    assert again == rows
