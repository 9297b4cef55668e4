"""The report downloads on both databases: the page routes and their API twins, who may fetch
them (anyone who may read the review; an asset-limited reader sees only their fields), and the
link on the review page."""

import datetime as dt
import io

import openpyxl
import pypdf

from tests.factories import make_field
from tests.services.reserves.conftest import add_estimate, add_production

PDF, XLSX = "application/pdf", "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"


def _text(body: bytes) -> list[str]:
    return [p.extract_text() for p in pypdf.PdfReader(io.BytesIO(body)).pages]


def test_report_downloads_from_the_page_and_the_api(db, login_as):
    with db.session() as s:
        north = make_field(s, name="Upland", asset="North")
        south = make_field(s, name="Southmere", asset="South")
        for f in (north, south):
            add_estimate(s, f, eur=(40.0, 50.0, 60.0))
            add_production(s, f, dt.date(2024, 1, 1), 12, 1e6 / 12)
        south_asset = south.asset_id
    eng = login_as("engineer", username="eng")
    rid = eng.post("/api/reserves/reviews", json={"name": "YE24", "effective_date": "2024-12-31"}).json()[
        "review"
    ]["id"]
    page = eng.get(f"/reserves/{rid}").text
    assert f'/reserves/{rid}/report.pdf">PDF</a>' in page and f'/reserves/{rid}/report.xlsx">' in page
    viewer = login_as("viewer", username="viewer")
    pdfs = ((eng, f"/reserves/{rid}/report.pdf"), (viewer, f"/api/reserves/reviews/{rid}/report.pdf"))
    for who, url in pdfs:
        r = who.get(url)
        assert r.status_code == 200 and r.headers["content-type"] == PDF
        name = f"reserves-review-{rid}-20241231-rev1.pdf"
        assert r.headers["content-disposition"] == f'attachment; filename="{name}"'
        pages = _text(r.content)
        assert all("DRAFT" in p for p in pages)
        assert any("Field: Upland" in p for p in pages) and any("Field: Southmere" in p for p in pages)
    xlsxs = ((viewer, f"/reserves/{rid}/report.xlsx"), (eng, f"/api/reserves/reviews/{rid}/report.xlsx"))
    for who, url in xlsxs:
        r = who.get(url)
        assert r.status_code == 200 and r.headers["content-type"] == XLSX
        wb = openpyxl.load_workbook(io.BytesIO(r.content))
        fields = [row[0] for row in wb["bookings"].iter_rows(min_row=2, values_only=True)]
        assert fields == ["Upland", "Southmere"]  # by asset, then name
    # a reader limited to one asset gets a report of that asset's fields only
    limited = login_as("viewer", assets=[south_asset], username="south-viewer")
    pages = _text(limited.get(f"/api/reserves/reviews/{rid}/report.pdf").content)
    assert any("Field: Southmere" in p for p in pages) and not any("Upland" in p for p in pages)
    assert eng.get("/reserves/99999/report.pdf").status_code == 404
    assert eng.get("/api/reserves/reviews/99999/report.xlsx").status_code == 404
