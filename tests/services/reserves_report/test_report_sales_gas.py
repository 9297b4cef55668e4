"""Sales gas in the reserves report, on both databases: the workbook's bookings and summary
carry the frozen factor and the sales gas (each column described with its unit) and re-read to
the review's read model; the PDF's summary has the sales-gas table and each field page states
the factor. Text read back with pypdf, cells with openpyxl (readers independent of the writers)."""

import datetime as dt
import io

import openpyxl
import pypdf
import pytest

from server.services.reserves import sales_gas, views, workflow
from server.services.reserves_report import content, pdf, workbook
from tests.services.reserves_report.test_report_workbook import REL, _records

YE24 = dt.date(2024, 12, 31)


def test_workbook_and_pdf_state_the_sales_gas(session, portfolio, people):
    sales_gas.set_sales_gas_settings(
        session, people["appr"], sales_gas_frac=0.9, by_field={portfolio["low"].id: 0.8}
    )
    r = workflow.create_review(session, people["eng"], "YE24", YE24)
    detail = views.review_detail(session, r)
    report = content.build_report(session, r)
    wb = openpyxl.load_workbook(io.BytesIO(workbook.report_xlsx(report)))
    books = {row["field"]: row for row in _records(wb["bookings"])}
    for f in detail.fields:
        row = books[f.field_name]
        assert row["sales-gas factor [fraction]"] == f.sales_gas_frac
        assert row["booked sales gas best [Bscf]"] == pytest.approx(f.booked_sales_best_bscf, rel=REL)
    assert books["Lowmoor"]["sales-gas factor from"] == "field"
    summary = {(t["group"], t["category"]): t for t in _records(wb["summary"])}
    for t in detail.totals:
        assert summary[(t.group, t.category)]["sales gas [Bscf]"] == pytest.approx(t.sales_gas_bscf, rel=REL)
    # Upland 48 x 0.9 + Lowmoor 21.5 x 0.8 (2P separator gas less production, times each factor)
    assert summary[("portfolio", "2P")]["sales gas [Bscf]"] == pytest.approx(48.0 * 0.9 + 21.5 * 0.8)
    units = {(c["sheet"], c["column"]): c["unit"] for c in _records(wb["columns"])}
    assert units[("summary", "sales gas [Bscf]")] == "Bscf"
    assert units[("bookings", "booked sales gas low [Bscf]")] == "Bscf"
    assert units[("bookings", "sales-gas factor [fraction]")] == "fraction"
    pages = [p.extract_text() for p in pypdf.PdfReader(io.BytesIO(pdf.report_pdf(report))).pages]
    text = "\n".join(pages)
    assert "Sales gas, after fuel, flare and shrinkage [Bscf]" in text
    assert f"{48.0 * 0.9 + 21.5 * 0.8:.3f}" in text  # the portfolio's 2P sales gas
    assert "Sales-gas factor: 90 % of the separator gas (the team default)" in text
    assert "Sales-gas factor: 80 % of the separator gas (the field's own)" in text
