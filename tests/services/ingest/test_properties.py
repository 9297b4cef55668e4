"""Property-based checks (hypothesis): any bytes give a clean report, never an exception;
well-formed files read back exactly through every delimiter, decimal mark and encoding."""

import csv
import datetime as dt
import io
import random
import unicodedata

import openpyxl
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from server.services.ingest.files.tabular import read_table
from server.services.ingest.kinds import file_kind
from server.services.ingest.parse import ReadOptions, parse_table
from server.services.ingest.report import ValidationReport
from server.services.ingest.service import check_upload
from tests.factories import make_field

TODAY = dt.date(2026, 12, 1)
FIXTURE_SETTINGS = settings(
    max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)


def _workbook(rows) -> bytes:
    wb = openpyxl.Workbook()
    for r in rows:
        wb.active.append(r)
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


GOOD_XLSX = _workbook(
    [["field", "well", "survey_date", "pressure_psia"], ["Upland", "W-1", "2017-01-15", 1200]]
)


@pytest.fixture
def upland(session):
    return make_field(session, name="Upland")


def _assert_clean(plan):
    report = plan.report.as_dict()  # renders: every problem has its message
    assert report["error_count"] == plan.report.error_count
    assert all(isinstance(p["message"], str) and p["message"] for p in report["problems"])
    plan.preview()


@FIXTURE_SETTINGS
@given(data=st.binary(max_size=3000))
def test_any_bytes_as_a_csv_give_a_clean_report(session, data):
    _assert_clean(check_upload(session, kind="surveys", data=data, filename="x.csv", today=TODAY))


@FIXTURE_SETTINGS
@given(data=st.binary(max_size=3000))
def test_any_bytes_as_an_xlsx_give_a_clean_report(session, data):
    plan = check_upload(session, kind="surveys", data=b"PK\x03\x04" + data, filename="x.xlsx", today=TODAY)
    assert not plan.report.ok
    _assert_clean(plan)


@FIXTURE_SETTINGS
@given(seed=st.integers(0, 2**32 - 1), flips=st.integers(1, 40))
def test_damaged_workbooks_give_a_clean_report(session, seed, flips):
    rng = random.Random(seed)
    data = bytearray(GOOD_XLSX)
    for _ in range(flips):
        data[rng.randrange(len(data))] = rng.randrange(256)
    _assert_clean(check_upload(session, kind="surveys", data=bytes(data), filename="x.xlsx", today=TODAY))


cell_text = st.text(st.characters(codec="utf-8", exclude_categories=("Cs",)), max_size=30)


@FIXTURE_SETTINGS
@given(
    kind=st.sampled_from(["surveys", "production", "fields", "wells", "fluids", "lab_table", "volumetrics"]),
    rows=st.lists(st.lists(cell_text, min_size=0, max_size=8), max_size=6),
    delimiter=st.sampled_from([",", ";", "\t"]),
)
def test_any_cells_under_a_real_header_give_a_clean_report(session, upland, kind, rows, delimiter):
    header = [c.template_header for c in file_kind(kind).columns][:8]
    buf = io.StringIO()
    writer = csv.writer(buf, delimiter=delimiter)
    writer.writerow(header)
    writer.writerows(rows)
    _assert_clean(check_upload(session, kind=kind, data=buf.getvalue().encode(), today=TODAY))


def _is_plain_name(s: str) -> bool:
    """A name stored as written: stripped, not formula-like, already in NFKC, without hidden
    characters, with a letter or digit (issue 18: names are normalised and checked)."""
    return (
        s == s.strip()
        and bool(s)
        and not s.startswith(("=", "+", "-", "@"))
        and unicodedata.normalize("NFKC", s) == s
        and all(unicodedata.category(c) not in ("Cf", "Zs") or c == " " for c in s)
        and not unicodedata.category(s[0]).startswith("M")
        and any(unicodedata.category(c)[0] in "LN" for c in s)
    )


names = st.text(
    st.characters(codec="cp1252", exclude_categories=("Cc", "Cs", "Zl", "Zp")), min_size=1, max_size=15
).filter(_is_plain_name)
survey_row = st.tuples(
    names,
    names,
    st.dates(dt.date(1950, 1, 1), TODAY),
    st.floats(1.0, 29000.0).map(lambda x: round(x, 2)),
    st.none() | st.floats(0.0, 39000.0).map(lambda x: round(x, 1)),
)


def _also_utf8(data: bytes) -> bool:
    try:
        return not data.decode("utf-8").isascii()
    except UnicodeDecodeError:
        return False


def _encode(text: str, encoding: str) -> bytes:
    if encoding == "utf-16":
        return text.encode("utf-16")  # with a byte-order mark
    return text.encode(encoding)


@settings(max_examples=200, deadline=None)
@given(
    rows=st.lists(
        survey_row, min_size=1, max_size=12, unique_by=lambda r: (r[0].casefold(), r[1].casefold(), r[2])
    ),
    delimiter=st.sampled_from([",", ";", "\t"]),
    decimal=st.sampled_from([".", ","]),
    encoding=st.sampled_from(["utf-8", "utf-8-sig", "cp1252", "utf-16"]),
    crlf=st.booleans(),
)
def test_surveys_round_trip_through_every_csv_variant(rows, delimiter, decimal, encoding, crlf):
    if decimal == "," and delimiter == ",":
        decimal = "."  # a comma-separated file cannot use decimal commas unquoted
    buf = io.StringIO()
    writer = csv.writer(buf, delimiter=delimiter, lineterminator="\r\n" if crlf else "\n")
    writer.writerow(["field", "well", "survey_date", "pressure_psia", "gauge_depth_ft"])
    for f, w, d, p, depth in rows:
        cells = [repr(p), "" if depth is None else repr(depth)]
        writer.writerow([f, w, d.isoformat(), *[c.replace(".", decimal) for c in cells]])
    data = _encode(buf.getvalue(), encoding)
    chosen = None
    if encoding == "cp1252" and _also_utf8(data):
        chosen = "cp1252"  # Windows-1252 bytes that are valid UTF-8 too: the user picks (the preview says)
    report = ValidationReport("surveys")
    parsed = parse_table(
        file_kind("surveys"), read_table(data, encoding=chosen), ReadOptions(), report, today=TODAY
    )
    assert report.ok, report.as_dict()
    got = [(r["field"], r["well"], r["survey_date"], r["pressure"], r["gauge_depth"]) for r in parsed.records]
    assert got == rows


@settings(max_examples=60, deadline=None)
@given(rows=st.lists(survey_row, min_size=1, max_size=8), dates_as_text=st.booleans())
def test_surveys_round_trip_through_xlsx(rows, dates_as_text):
    header = ["field", "well", "survey_date", "pressure_psia", "gauge_depth_ft"]
    body = [[f, w, d.isoformat() if dates_as_text else d, p, depth] for f, w, d, p, depth in rows]
    report = ValidationReport("surveys")
    parsed = parse_table(
        file_kind("surveys"), read_table(_workbook([header, *body])), ReadOptions(), report, today=TODAY
    )
    assert report.ok, report.as_dict()
    got = [(r["field"], r["well"], r["survey_date"], r["pressure"], r["gauge_depth"]) for r in parsed.records]
    assert got == [tuple(r) for r in rows]
