"""Numbers and dates beyond what a float or a calendar holds, and impossible times (issue 18,
points 4 and 13): each is a clear cell error naming row and column, never an exception, and
one rule serves CSV, XLSX and JSON rows."""

import datetime as dt
import sys

import pytest

from server.services.ingest.files import cells
from server.services.ingest.files.table import ExcelDate, IsoDateText
from server.services.ingest.service import check_upload, store_upload
from tests.factories import make_field
from tests.xlsx_parts import DATE_STYLES, Package, Sheet, row_xml, sheet_xml, workbook

TODAY = dt.date(2026, 12, 1)
RULES = cells.DateRules("iso", TODAY)
HEADER = ["field", "well", "survey_date", "pressure_psia"]

# IEEE 754 binary64 (the float every database column here holds): the largest finite value is
# (2 - 2^-52) x 2^1023 ~ 1.7976931348623157e308 (IEEE 754-2019, Table 3.5; sys.float_info.max),
# the smallest positive subnormal 2^-1074 ~ 4.9e-324.
assert sys.float_info.max == pytest.approx(1.7976931348623157e308)


@pytest.mark.parametrize(
    "cell, message",
    [
        (10**400, "beyond ±1.8e308"),  # an XLSX or JSON integer of 401 digits
        (-(10**400), "beyond ±1.8e308"),
        ("1e400", "beyond ±1.8e308"),
        ("1e99999", "beyond ±1.8e308"),  # a huge exponent is not "not a number"
        ("-1.8e308", "beyond ±1.8e308"),
        ("1" * 400, "longer than 100 characters"),
        ("9" * 90 + "e300", "beyond ±1.8e308"),
        ("1e-400", "is too small a number"),
        ("0.5e-330", "is too small a number"),
        (float("inf"), "beyond ±1.8e308"),
        (float("nan"), "is not a number (NaN)"),
        ("nan", "is not a number (NaN)"),
        ("NaN", "is not a number (NaN)"),
        ("-inf", "is not a finite number: infinity"),
        ("Infinity", "is not a finite number: infinity"),
        ("1.#INF", "is not a finite number: infinity"),  # what some Windows programs print
        (ExcelDate(43000.0), "is a date, not a number"),
        (IsoDateText("2018-11-14"), "is a date, not a number"),
    ],
)
def test_numbers_beyond_a_float_are_cell_errors(cell, message):
    with pytest.raises(cells.CellError, match=message.replace("(", r"\(").replace(")", r"\)")):
        cells.number(cell)


def test_numbers_within_a_float_still_read():
    assert cells.number("1.7976931348623157e308") == sys.float_info.max
    assert cells.number("0e-400") == 0.0  # zero written with a huge exponent is still zero
    assert cells.number("1,5e3", ",") == 1500.0
    assert cells.number(10**300) == 1e300
    assert cells.fast_numbers(["1", "2.5", "1e-400"]) is None  # the slow path names the underflow


@pytest.mark.parametrize(
    "cell, message",
    [
        (10**400, "out of range"),
        (float("nan"), "not a finite number"),
        (float("inf"), "not a finite number"),
        (1e300, "out of range"),
        ("9" * 200, "longer than 100 characters"),
        # A date-formatted workbook number beyond 9999-12-31 (serial 2,958,465 in the 1900 system)
        (ExcelDate(2958467.0), "outside the dates a spreadsheet can show"),
        (ExcelDate(-1.0), "outside the dates a spreadsheet can show"),
        (ExcelDate(float("inf")), "outside the dates a spreadsheet can show"),
        (ExcelDate(0.5), "time of day"),
        (ExcelDate(60.0), "1900-02-29"),  # Excel's 1900 leap-year error (ECMA-376 Part 1, 18.17.4.1)
    ],
)
def test_dates_beyond_the_calendar_are_cell_errors(cell, message):
    with pytest.raises(cells.CellError, match=message):
        cells.date(cell, RULES)


def test_date_formatted_numbers_follow_the_workbooks_date_system():
    # ECMA-376 Part 1, 18.17.4.1: in the 1900 system serial 1 is 1900-01-01 and serial 61 is
    # 1900-03-01; in the 1904 system serial 0 is 1904-01-01.
    assert cells.date(ExcelDate(61.0), RULES) == dt.date(1900, 3, 1)
    assert cells.date(ExcelDate(1.0), RULES) == dt.date(1900, 1, 1)
    assert cells.date(ExcelDate(43418.75), RULES) == dt.date(2018, 11, 14)  # the time is a real one
    rules_1904 = cells.DateRules("iso", TODAY, dt.date(1904, 1, 1))
    assert cells.date(ExcelDate(41956.0), rules_1904) == dt.date(2018, 11, 14)


@pytest.mark.parametrize(
    "text, message",
    [
        ("2018-11-14T99:99", "impossible time of day (99:99)"),
        ("2018-11-14 10:61", "impossible time of day (10:61)"),
        ("2018-11-14T10:00:60", "impossible time of day"),  # datetime has no leap second
        ("2018-11-14T24:00", "24:00"),  # ISO 8601-1:2019 dropped 24:00 as the end of a day
        ("2018-11-14T10:00+02:00", "has a time zone"),
        ("2018-11-14T10:00Z", "has a time zone"),
        ("2018-11-14T10:00:00-0500", "has a time zone"),
    ],
)
@pytest.mark.parametrize("wrap", [str, IsoDateText], ids=["text", "xlsx-date-cell"])
def test_times_after_a_date_follow_one_rule(text, message, wrap):
    with pytest.raises(cells.CellError, match=message.replace("(", r"\(").replace(")", r"\)")):
        cells.date(wrap(text), RULES)


def test_real_times_after_a_date_are_read_as_that_date():
    for text in ("2018-11-14T23:59", "2018-11-14 00:00:00", "2018-11-14T10:30:15.250"):
        assert cells.date(text, RULES) == dt.date(2018, 11, 14)
        assert cells.date(IsoDateText(text), RULES) == dt.date(2018, 11, 14)
    with pytest.raises(cells.CellError, match="time zone"):
        cells.date(dt.datetime(2018, 11, 14, 10, tzinfo=dt.UTC), RULES)


@pytest.fixture
def upland(session):
    f = make_field(session, name="Upland")
    session.commit()
    return f


def _errors(plan):
    return [(p.row, p.column, p.message) for p in plan.report.errors]


def test_an_xlsx_cell_of_hundreds_of_digits_is_a_cell_error(session, upland):
    data = workbook([HEADER, ["Upland", "W-1", "2017-01-15", "9" * 400]])  # a string cell, see below
    big = Package(
        [Sheet("Data", sheet_xml([row_xml(1, HEADER), row_xml(2, ["Upland", "W-1", "2017-01-15", 10**400])]))]
    ).build()
    for d in (data, big):
        plan = check_upload(session, kind="surveys", data=d, filename="s.xlsx", today=TODAY)
        assert [(r, c) for r, c, _ in _errors(plan)] == [(2, "pressure")]


def test_xlsx_dates_out_of_range_and_with_time_zones_are_cell_errors(session, upland):
    rows = [
        row_xml(1, HEADER),
        # a date-formatted number far beyond 9999-12-31, and a date cell (t="d") with a time zone
        '<row r="2">'
        + "".join(
            [
                '<c r="A2" t="inlineStr"><is><t>Upland</t></is></c>',
                '<c r="B2" t="inlineStr"><is><t>W-1</t></is></c>',
                '<c r="C2" s="1"><v>1e300</v></c>',
                '<c r="D2"><v>1200</v></c>',
            ]
        )
        + "</row>",
        '<row r="3">'
        + "".join(
            [
                '<c r="A3" t="inlineStr"><is><t>Upland</t></is></c>',
                '<c r="B3" t="inlineStr"><is><t>W-1</t></is></c>',
                '<c r="C3" t="d"><v>2018-11-14T10:00:00+02:00</v></c>',
                '<c r="D3"><v>1200</v></c>',
            ]
        )
        + "</row>",
        '<row r="4">'
        + "".join(
            [
                '<c r="A4" t="inlineStr"><is><t>Upland</t></is></c>',
                '<c r="B4" t="inlineStr"><is><t>W-1</t></is></c>',
                '<c r="C4" t="d"><v>2018-11-14T99:99</v></c>',
                '<c r="D4"><v>1200</v></c>',
            ]
        )
        + "</row>",
    ]
    data = Package([Sheet("Data", sheet_xml(rows))], styles=DATE_STYLES).build()
    plan = check_upload(session, kind="surveys", data=data, filename="s.xlsx", today=TODAY)
    errors = _errors(plan)
    assert [(r, c) for r, c, _ in errors] == [(2, "survey_date"), (3, "survey_date"), (4, "survey_date")]
    assert "outside the dates a spreadsheet can show" in errors[0][2]
    assert "has a time zone" in errors[1][2]  # as a CSV file's "2018-11-14T10:00+02:00"
    assert "impossible time of day" in errors[2][2]


def test_csv_impossible_times_are_not_stored(db, upland):
    data = (
        b"field,well,survey_date,pressure_psia\n"
        b"Upland,W-1,2018-11-14T99:99,1200\nUpland,W-1,2018-12-14 24:00,1200\n"
    )
    result = store_upload(db, kind="surveys", data=data, filename="s.csv", today=TODAY)
    assert result.status == "rejected"
    assert [(r, c) for r, c, _ in _errors(result.plan)] == [(2, "survey_date"), (3, "survey_date")]
