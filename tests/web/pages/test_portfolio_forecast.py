"""The portfolio's forecast: the best case stacked by field with the low and high totals, for
the filtered fields, and the export of every field's yearly profiles (CSV, XLSX).

Forecasts are hand-built (tests/forecast_cases.py: constant calendar rates), so each year's gas
follows from the calendar: 10 MMscf/d for 2027's 365 days is 3.65 Bscf."""

import csv
import io
import json
import re

import openpyxl
import pytest

from server.db.models import Estimate
from server.services.forecast import stored_forecast
from tests.factories import make_field
from tests.forecast_cases import make_forecast


def _estimate(fid, forecast):
    data, cols = stored_forecast(forecast)
    return Estimate(
        field_id=fid,
        method="pz-wls",
        status="ok",
        message="test",
        giip_best_bscf=100.0,
        cumulative_gas_bscf=20.0,
        flags=[],
        detail={"forecast": data},
        inputs_fingerprint=f"fp{fid}",
        engine_version="test",
        **cols,
    )


@pytest.fixture
def portfolio(db):
    with db.session() as s:
        a = make_field(s, name="Alder <i>", asset="North")
        b = make_field(s, name="Birch", asset="South")
        c = make_field(s, name="Cedar", asset="North")
        s.flush()
        s.add(_estimate(a.id, make_forecast(scale=1.0)))  # 10 MMscf/d best
        s.add(_estimate(b.id, make_forecast(scale=2.0)))  # 20 MMscf/d best
        ids = a.id, b.id, c.id
    return ids


def _figure(page, name):
    m = re.search(rf'<script type="application/json" id="{name}">(.*?)</script>', page, re.S)
    return json.loads(m.group(1))


def test_stacked_best_case_with_low_and_high_totals(client, portfolio):
    page = client.get("/").text
    fig = _figure(page, "profile-figure")
    bars = [t for t in fig["data"] if t["type"] == "bar"]
    assert [t["name"] for t in bars] == ["Alder &lt;i&gt;", "Birch"]  # escaped, in the table's order
    assert bars[0]["x"][:2] == ["2027", "2028"]
    assert bars[0]["y"][0] == pytest.approx(3.65) and bars[1]["y"][1] == pytest.approx(2 * 3.66)  # 2028: leap
    low = next(t for t in fig["data"] if t["name"] == "total low (P90)")
    assert low["y"][0] == pytest.approx(3 * 8000 * 365 / 1e6)  # 8 + 16 MMscf/d in the low cases
    assert low["y"][3] == 0.0  # the low cases stop after three years
    assert "Without a forecast (no plan, or no estimate): Cedar" in page
    assert "qualified engineers" in page


def test_the_profile_follows_the_filters(client, portfolio):
    page = client.get("/", params={"asset": "South"}).text
    bars = [t for t in _figure(page, "profile-figure")["data"] if t["type"] == "bar"]
    assert [t["name"] for t in bars] == ["Birch"]
    assert 'href="/portfolio-profiles.csv?asset=South"' in page


def test_profiles_export_csv_and_xlsx(client, portfolio):
    r = client.get("/portfolio-profiles.csv")
    assert r.status_code == 200 and "attachment" in r.headers["content-disposition"]
    rows = list(csv.reader(io.StringIO(r.content.decode("utf-8-sig"))))  # with a byte-order mark
    header = rows[0]
    assert header[:3] == ["field", "asset", "case"] and header[5].startswith("2027 [Bscf")
    birch_best = next(row for row in rows if row[:3] == ["Birch", "South", "best"])
    assert float(birch_best[5]) == pytest.approx(7.3, abs=1e-3)  # 20 MMscf/d × 365 days
    assert birch_best[3] == "licence end"
    assert sum(1 for row in rows if row and row[0] in ("Alder <i>", "Birch")) == 6  # three cases each
    assert any("qualified engineers" in " ".join(row) for row in rows)
    x = client.get("/portfolio-profiles.xlsx")
    wb = openpyxl.load_workbook(io.BytesIO(x.content))  # an independent reader
    ws = wb["profiles"]
    values = [[c.value for c in row] for row in ws.iter_rows()]
    alder_high = next(v for v in values if v[0] == "Alder <i>" and v[2] == "high")
    assert alder_high[5] == pytest.approx(12000 * 365 / 1e6, abs=1e-3)
    assert "notes" in wb.sheetnames


def test_no_forecast_anywhere_says_how_to_get_one(client, db):
    with db.session() as s:
        make_field(s, name="Solo")
    page = client.get("/").text
    assert 'id="profile-none"' in page and "when it has a plan" in page


def test_many_fields_stack_the_largest_and_one_bar_for_the_rest(client, db):
    # Fourteen fields at 1..14 MMscf/d: the eleven largest keep their own bars (in the table's
    # order, by name), the three smallest (1 + 2 + 3 MMscf/d) are one bar; the totals keep all.
    with db.session() as s:
        for k in range(1, 15):
            f = make_field(s, name=f"F{k:02d}")
            s.flush()
            s.add(_estimate(f.id, make_forecast(scale=k / 10)))
    bars = [t for t in _figure(client.get("/").text, "profile-figure")["data"] if t["type"] == "bar"]
    assert [t["name"] for t in bars] == [f"F{k:02d}" for k in range(4, 15)] + ["3 other fields"]
    assert bars[-1]["y"][0] == pytest.approx(6 * 0.365)  # (1 + 2 + 3) MMscf/d over 2027
    assert sum(t["y"][0] for t in bars) == pytest.approx(105 * 0.365)  # every field is in the stack


def test_a_recomputed_field_shows_its_new_profile(client, db, portfolio):
    # Profiles are kept per stored estimate; a recompute writes a new estimate, never reuses one.
    client.get("/")
    a = portfolio[0]
    with db.session() as s:
        s.add(_estimate(a, make_forecast(scale=3.0)))  # 30 MMscf/d: Alder's newest estimate
    bars = [t for t in _figure(client.get("/").text, "profile-figure")["data"] if t["type"] == "bar"]
    assert bars[0]["y"][0] == pytest.approx(3 * 3.65)
