"""How workbooks are read (issue 18, points 6 and 12): only what the user can see is read
silently, duplicate zip members are refused, rows stream within the upload budget instead of
being padded, and every budget refusal says what was over and by how much.

Workbooks are built part by part (tests/xlsx_parts.py, following ECMA-376); each that a real
spreadsheet program could write is also opened with openpyxl as an independent reader."""

import datetime as dt
import io
import warnings

import openpyxl
import pytest

from server.services.ingest.files.table import ReadLimits, TableError
from server.services.ingest.files.tabular import read_table
from server.services.ingest.kinds import file_kind
from server.services.ingest.parse import ReadOptions, parse_table
from server.services.ingest.report import ValidationReport
from server.services.ingest.service import check_upload, store_upload
from tests.factories import make_field
from tests.xlsx_parts import (
    DATE_STYLES,
    MAIN_NS,
    Package,
    Sheet,
    number_cell,
    row_xml,
    sheet_xml,
    table_sheet,
    text_cell,
    workbook,
)

TODAY = dt.date(2026, 12, 1)
HEADER = ["field", "well", "survey_date", "pressure_psia"]


def parse(data: bytes, limits: ReadLimits | None = None, kind: str = "surveys"):
    report = ValidationReport(kind)
    parsed = parse_table(file_kind(kind), read_table(data, limits=limits), ReadOptions(), report, today=TODAY)
    return parsed, report


def openpyxl_rows(data: bytes, sheet: int = 0) -> list[tuple]:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # openpyxl warns that these minimal packages have no named styles
        wb = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    try:
        return list(wb.worksheets[sheet].iter_rows(values_only=True))
    finally:
        wb.close()


# -- point 12: what the user cannot see -------------------------------------------------------


@pytest.mark.parametrize("state", ["hidden", "veryHidden"])
def test_a_hidden_first_sheet_is_not_read_and_the_report_names_the_sheet_read(state):
    hidden = table_sheet([HEADER, ["Upland", "W-1", "2017-01-15", 4280]])
    visible = table_sheet([HEADER, ["Upland", "W-1", "2017-01-15", 4100]])
    data = Package([Sheet("Old", hidden, state), Sheet("Surveys", visible)]).build()
    assert openpyxl_rows(data, 1)[1][3] == 4100  # an independent reader sees the same parts
    parsed, report = parse(data)
    assert [r["pressure"] for r in parsed.records] == [4100.0]
    assert (
        "sheet 'Surveys' (the first visible sheet of 2); hidden sheet(s) not read: 'Old'" in report.notes[0]
    )


def test_a_workbook_whose_sheets_are_all_hidden_is_refused():
    data = Package([Sheet("A", table_sheet([HEADER]), "hidden")]).build()
    with pytest.raises(TableError, match="every worksheet of the workbook is hidden"):
        read_table(data)


@pytest.mark.parametrize("name", ["xl/worksheets/sheet1.xml", "XL/Worksheets/Sheet1.xml"])
def test_two_zip_members_of_one_name_are_refused(name):
    second = table_sheet([HEADER, ["Upland", "W-1", "2017-01-15", 4280]])
    data = Package(
        [Sheet("Data", table_sheet([HEADER, ["Upland", "W-1", "2017-01-15", 4100]]))],
        extra=[(name, second.encode())],
    ).build()
    with pytest.raises(TableError, match="holds two parts named"):
        read_table(data)


def test_hidden_rows_and_columns_with_values_are_read_with_a_warning():
    rows = [
        row_xml(1, HEADER),
        row_xml(2, ["Upland", "W-1", "2017-01-15", 4100]),
        row_xml(3, ["Upland", "W-1", "2017-02-15", 4280], extra=' hidden="1"'),
    ]
    cols = '<cols><col min="4" max="4" width="9" hidden="1"/></cols>'
    parsed, report = parse(Package([Sheet("Data", sheet_xml(rows, cols=cols))]).build())
    assert len(parsed.records) == 2 and report.error_count == 0
    warnings = [(p.row, p.column, p.message) for p in report.warnings]
    assert (3, None, "is hidden in the workbook; its values were read (unhide it to see them)") in warnings
    assert any(c == "pressure_psia" and "hidden column" in m for _, c, m in warnings)


def test_a_hidden_row_needs_confirmation_before_it_is_stored(db):
    with db.session() as s:
        make_field(s, name="Upland")
    rows = [row_xml(1, HEADER), row_xml(2, ["Upland", "W-1", "2017-01-15", 4280], extra=' hidden="1"')]
    data = Package([Sheet("Data", sheet_xml(rows))]).build()
    assert store_upload(db, kind="surveys", data=data, today=TODAY).status == "needs_confirmation"
    assert (
        store_upload(db, kind="surveys", data=data, today=TODAY, accept_warnings=True).status == "committed"
    )


# -- point 6: amplification --------------------------------------------------------------------


def test_a_cell_far_down_is_one_row_not_a_million():
    # a header and one cell at row 1,000,000 (4.7 KB as a file): before, a million padded rows
    sheet = sheet_xml([row_xml(1, HEADER), row_xml(1_000_000, ["Upland"])], dimension="A1:D1000000")
    table = read_table(Package([Sheet("Data", sheet)]).build())
    assert table.row_numbers == [1_000_000] and len(table.rows) == 1
    parsed, report = parse(Package([Sheet("Data", sheet)]).build())
    assert report.rows_total == 1
    expected = [(1_000_000, c) for c in ("well", "survey_date", "pressure")]
    assert [(p.row, p.column) for p in report.errors] == expected


def test_row_numbers_in_the_report_are_the_spreadsheets_across_gaps():
    rows = [row_xml(1, HEADER), row_xml(5, ["Upland", "W-1", "2017-01-15", "abc"])]
    _, report = parse(Package([Sheet("Data", sheet_xml(rows))]).build())
    assert [(p.row, p.column) for p in report.errors] == [(5, "pressure")]


def test_a_declared_dimension_over_the_budget_is_refused_before_reading():
    sheet = sheet_xml([row_xml(1, HEADER)], dimension="A1:D2000000")
    with pytest.raises(TableError, match=r"declares 2,000,000 rows \(A1:D2000000\).*before reading"):
        read_table(Package([Sheet("Data", sheet)]).build())


def test_rows_and_cells_over_the_budget_are_refused_while_streaming():
    limits = ReadLimits(max_rows=10, max_cells=60)
    many_rows = Package([Sheet("Data", table_sheet([HEADER] + [["Upland"]] * 11))]).build()
    with pytest.raises(TableError, match="more than 10 data rows"):
        read_table(many_rows, limits=limits)
    many_cells = Package([Sheet("Data", table_sheet([HEADER] + [["a", "b", "c", 1]] * 10 + [[1] * 30]))])
    with pytest.raises(TableError, match="more than 60 cells"):
        read_table(many_cells.build(), limits=ReadLimits(max_cells=60, max_rows=100))
    csv = ("a,b,c,d\n" + "1,2,3,4\n" * 20).encode()
    with pytest.raises(TableError, match="more than 60 cells"):
        read_table(csv, limits=ReadLimits(max_cells=60, max_rows=100))
    with pytest.raises(TableError, match="more than 10 data rows"):
        read_table(("a,b\n" + "1,2\n" * 11).encode(), limits=ReadLimits(max_rows=10))


def test_a_shared_string_table_beyond_the_cell_budget_is_refused():
    strings = "".join(f"<si><t>s{i}</t></si>" for i in range(100))
    sst = f'<?xml version="1.0"?><sst xmlns="{MAIN_NS}" count="100" uniqueCount="100">{strings}</sst>'
    sheet = sheet_xml([row_xml(1, HEADER), '<row r="2"><c r="A2" t="s"><v>99</v></c></row>'])
    data = Package([Sheet("Data", sheet)], shared_strings=sst).build()
    assert openpyxl_rows(data)[1][0] == "s99"
    assert read_table(data).rows == [["s99", None, None, None]]
    with pytest.raises(TableError, match="shared-string table declares 100 strings.*before reading"):
        read_table(data, limits=ReadLimits(max_cells=50))
    undeclared = Package(
        [Sheet("Data", sheet)], shared_strings=sst.replace(' count="100" uniqueCount="100"', "")
    )
    with pytest.raises(TableError, match="shared-string table holds more than 50 strings"):
        read_table(undeclared.build(), limits=ReadLimits(max_cells=50))


def test_a_cell_beyond_a_spreadsheets_text_limit_is_a_cell_error():
    # 32,767 characters is the most a spreadsheet cell holds (Excel specifications and limits)
    sheet = sheet_xml([row_xml(1, HEADER), row_xml(2, ["U" * 40000, "W-1", "2017-01-15", 1200])])
    _, report = parse(Package([Sheet("Data", sheet)]).build())
    assert [(p.row, p.column) for p in report.errors] == [(2, "field")]
    assert "more than 32,767 characters" in report.errors[0].message


@pytest.mark.parametrize(
    "rows, message",
    [
        ([row_xml(1, HEADER), row_xml(3, ["a"]), row_xml(2, ["b"])], "row 2 follows row 3"),
        ([row_xml(1, HEADER), row_xml(2, ["a"]), row_xml(2, ["b"])], "row 2 follows row 2"),
        (
            [row_xml(1, HEADER), f'<row r="2">{number_cell("B2", 1)}{number_cell("A2", 2)}</row>'],
            "out of order",
        ),
        ([row_xml(1, HEADER), f'<row r="2">{number_cell("A2", 1)}{number_cell("A2", 2)}</row>'], "repeated"),
        ([row_xml(1, HEADER), f'<row r="2">{number_cell("A7", 1)}</row>'], "'A7' is in row 2"),
    ],
)
def test_rows_and_cells_out_of_order_or_repeated_are_refused(rows, message):
    # ECMA-376 Part 1 §18.3.1.73 (row) and §18.3.1.4 (c): rows and cells are written in order,
    # each once; a file that repeats one would let one reader see what another does not.
    with pytest.raises(TableError, match=message):
        read_table(Package([Sheet("Data", sheet_xml(rows))]).build())


def test_cell_types_are_read_as_a_spreadsheet_shows_them(session):
    make_field(session, name="Upland")
    sst = f'<?xml version="1.0"?><sst xmlns="{MAIN_NS}"><si><r><t>Up</t></r><r><t>land</t></r></si></sst>'
    cells = [
        '<c r="A2" t="s"><v>0</v></c>',  # rich-text shared string
        text_cell("B2", "W-1"),
        number_cell("C2", 42750, style=1),  # built-in date format 14: 2017-01-15
        '<c r="D2" t="e"><v>#N/A</v></c>',
    ]
    rows = [row_xml(1, HEADER), f'<row r="2">{"".join(cells)}</row>']
    data = Package([Sheet("Data", sheet_xml(rows))], shared_strings=sst, styles=DATE_STYLES).build()
    assert openpyxl_rows(data)[1][:3] == ("Upland", "W-1", dt.datetime(2017, 1, 15))
    plan = check_upload(session, kind="surveys", data=data, filename="s.xlsx", today=TODAY)
    assert [(p.row, p.column, p.message) for p in plan.report.errors] == [
        (2, "pressure", "is a spreadsheet error value (#N/A)")
    ]


def test_the_1904_date_system_is_followed():
    rows = [
        row_xml(1, HEADER),
        f'<row r="2">{text_cell("A2", "U")}{text_cell("B2", "W")}'
        f"{number_cell('C2', 41956, style=2)}{number_cell('D2', 1200)}</row>",
    ]
    data = Package([Sheet("Data", sheet_xml(rows))], styles=DATE_STYLES, date1904=True).build()
    assert openpyxl_rows(data)[1][2] == dt.datetime(2018, 11, 14)
    parsed, report = parse(data)
    assert report.ok and parsed.records[0]["survey_date"] == dt.date(2018, 11, 14)


def test_templates_and_workbooks_from_a_spreadsheet_library_still_read():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(HEADER)
    ws.append(["Upland", "W-1", dt.datetime(2017, 1, 15), 1200.5])
    wb.create_sheet("notes").append(["not read"])
    buf = io.BytesIO()
    wb.save(buf)
    parsed, report = parse(buf.getvalue())
    assert report.ok, report.as_dict()
    assert (
        parsed.records[0]["survey_date"] == dt.date(2017, 1, 15) and parsed.records[0]["pressure"] == 1200.5
    )
    assert workbook([HEADER])  # the helper's own packages open too


def test_checking_stops_after_ten_thousand_errors_and_says_so():
    data = ("field,well,survey_date,pressure_psia\n" + "Upland,W-1,2017-01-15,abc\n" * 30_000).encode()
    _, report = parse(data)
    assert 10_000 <= report.error_count <= 10_001
    assert report.errors[0].message.startswith("checking stopped after 10,000 errors at column 'pressure'")
    ragged = ("field,well,survey_date,pressure_psia\n" + "x\n" * 30_000).encode()
    _, report = parse(ragged)
    assert "checking stopped after 10,000 errors at row 10001" in report.errors[0].message
