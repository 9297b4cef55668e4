"""The portfolio page: key elements and numbers, server-side sorting and filtering, totals of
the filtered set, SI against oilfield numbers, the exports and the JSON twin."""

import csv
import datetime as dt
import io
import json
import re

import openpyxl
import pytest

from server.db.models import Estimate, Field, PressureSurvey, VolumetricEstimate
from tests.factories import make_field

# 10^6 m3 at 15 °C/101.325 kPa per Bscf at 60 °F/14.696 psia, by hand (see test_charts_portfolio):
# 1 ft = 0.3048 m exactly; 60 °F = 519.67 °R = 288.7056 K; 1 psi = 6.894757 kPa (NIST SP 811).
MM3_PER_BSCF = 1e3 * 0.3048**3 * (288.15 / (519.67 / 1.8)) * (14.696 * 6.894757 / 101.325)

BELOW = {
    "code": "dynamic_below_volumetric",
    "severity": "alert",
    "title": "Dynamic GIIP below the volumetric low case",
    "reason": "dynamic GIIP 62 Bscf (55-70) is below the volumetric low case 80 Bscf",
    "numbers": {},
}
AQUIFER = {
    "code": "aquifer_signature",
    "severity": "warning",
    "title": "Aquifer support",
    "reason": "water-gas ratio rising",
    "numbers": {},
}


def _estimate(fid, low, best, high, flags=(), produced=10.0, status="ok"):
    return Estimate(
        field_id=fid,
        method="pz-wls",
        status=status,
        message="test",
        giip_low_bscf=low,
        giip_best_bscf=best,
        giip_high_bscf=high,
        eur_bscf=None if best is None else 0.8 * best,
        recovery_factor_frac=None if best is None else 0.8,
        remaining_bscf=None if best is None else 0.8 * best - produced,
        cumulative_gas_bscf=produced,
        flags=list(flags),
        detail={"big": list(range(50))},
        inputs_fingerprint="x" * 64,
        engine_version="test",
    )


@pytest.fixture
def portfolio(db):
    """Four fields in two assets; volumetric 80/100/125 unless said otherwise."""
    with db.session() as s:
        low = make_field(s, name="Lowfield", asset="North")
        ok = make_field(s, name="Okfield", asset="North")
        wet = make_field(s, name="Wetfield", asset="South")
        young = make_field(s, name="Youngfield", asset="South")
        s.add(
            VolumetricEstimate(
                field=wet,
                estimate_date=dt.date(2015, 1, 1),
                giip_low_bscf=150,
                giip_best_bscf=180,
                giip_high_bscf=220,
            )
        )  # newer: replaces 80/100/125
        s.add_all(
            [
                _estimate(low.id, 55.0, 62.0, 70.0, [BELOW], produced=31.0),
                _estimate(ok.id, 95.0, 101.0, 108.0, produced=50.5),
                _estimate(wet.id, 150.0, 170.0, 200.0, [AQUIFER], produced=17.0),
                _estimate(young.id, None, None, None, status="refused", produced=1.0),
            ]
        )
        s.add(
            PressureSurvey(
                well_id=ok.wells[0].id,
                survey_date=dt.date(2024, 5, 17),
                pressure_psia=3000.0,
                gauge_depth_ft=10000.0,
            )
        )
        s.flush()
        return {f.name: f.id for f in (low, ok, wet, young)}


def _ids(html):
    return [int(x) for x in re.findall(r'<tr data-field-id="(\d+)">', html)]


def _cell(html, fid, col):
    row = re.search(rf'<tr data-field-id="{fid}">(.*?)</tr>', html, re.S).group(1)
    return re.search(rf'data-col="{col}">(.*?)</td>', row, re.S).group(1).strip()


def _totals(html, kind):
    row = re.search(rf'<tr data-total="{kind}">(.*?)</tr>', html, re.S).group(1)
    return [c.replace(",", "") for c in re.findall(r'<td class="num">([^<]*)</td>', row)]


def test_key_elements_and_numbers(portfolio, client):
    r = client.get("/")
    assert r.status_code == 200
    html = r.text
    ids = portfolio
    assert _ids(html) == [ids[n] for n in ("Lowfield", "Okfield", "Wetfield", "Youngfield")]
    for label in ("Asset", "Basin", "Flag"):
        assert re.search(rf'<label for="f-{label.lower()}">{label}</label>', html)
    assert '<button type="submit" id="apply-filters">' in html
    assert '<caption id="portfolio-caption">' in html and 'scope="row"' in html
    assert re.search(
        r'<th scope="col"[^>]*aria-sort="ascending"[^>]*>\s*<a href="\?order=desc" data-sort="name"', html
    )
    assert html.count("aria-sort=") == 1
    assert _cell(html, ids["Lowfield"], "dynamic_low") == "55.0"
    assert _cell(html, ids["Lowfield"], "dynamic_best") == "62.0"
    assert _cell(html, ids["Lowfield"], "dynamic_high") == "70.0"
    assert _cell(html, ids["Wetfield"], "volumetric_best") == "180.0"  # the latest volumetric estimate
    assert _cell(html, ids["Lowfield"], "ratio") == "0.62 × best, below the low case"
    assert _cell(html, ids["Lowfield"], "depletion") == "50 %"  # 31 / 62
    assert _cell(html, ids["Okfield"], "last_survey") == "2024-05-17"
    assert _cell(html, ids["Youngfield"], "depletion") == "–"
    assert "produced gas divided by the dynamic best GIIP" in html  # the depletion header says which
    # each flag: severity + title, reason as a tooltip reachable by keyboard
    li = re.search(
        r'<li class="flag flag-alert" data-code="dynamic_below_volumetric".*?</li>', html, re.S
    ).group(0)
    assert 'tabindex="0"' in li and "alert:</span> Dynamic GIIP below" in li
    rid = re.search(r'aria-describedby="([^"]+)"', li).group(1)
    assert f'role="tooltip" id="{rid}">dynamic GIIP 62 Bscf' in li
    assert 'href="/portfolio.csv"' in html and 'href="/portfolio.xlsx"' in html
    assert "portfolio.css" in html
    fig = json.loads(re.search(r'id="portfolio-figure">(.*?)</script>', html, re.S).group(1))
    assert sum(len(t["x"]) for t in fig["data"][:-1]) == 3 and fig["layout"]["meta"]["not_plotted"] == 1
    assert re.search(r'<option value="aquifer_signature">Aquifer support \(1\)</option>', html)


def test_sort_by_a_numeric_column_both_ways_missing_last(portfolio, client):
    ids = portfolio
    html = client.get("/?sort=dynamic_best&order=desc").text
    assert _ids(html) == [ids[n] for n in ("Wetfield", "Okfield", "Lowfield", "Youngfield")]
    th = re.search(
        r'<th scope="col"[^>]*aria-sort="descending"[^>]*>\s*<a href="([^"]+)" data-sort="(\w+)"', html
    )
    assert th.group(2) == "dynamic_best" and th.group(1) == "?sort=dynamic_best"  # next click: ascending
    html = client.get("/?sort=dynamic_best&order=asc").text
    assert _ids(html) == [ids[n] for n in ("Lowfield", "Okfield", "Wetfield", "Youngfield")]
    html = client.get("/?sort=flags&order=desc").text
    assert _ids(html)[:2] == [ids["Lowfield"], ids["Wetfield"]]  # alert before warning
    html = client.get("/?sort=last_survey&order=desc").text
    assert _ids(html)[0] == ids["Okfield"]


def test_filter_by_flag_and_by_asset_with_totals_of_the_filtered_set(portfolio, client):
    ids = portfolio
    html = client.get("/?flag=dynamic_below_volumetric").text
    assert _ids(html) == [ids["Lowfield"]]
    named = "flag “Dynamic GIIP below the volumetric low case” (dynamic_below_volumetric)"
    assert f"Showing 1 of 4 fields ({named})" in html
    assert "Totals of the 1 field shown" in html and f"Filtered: {named}." in html
    assert _totals(html, "volumetric")[:5] == ["1", "80", "100", "125", _totals(html, "volumetric")[4]]
    assert re.search(r'<option value="dynamic_below_volumetric" selected>', html)
    assert 'href="/portfolio.csv?flag=dynamic_below_volumetric"' in html
    html = client.get("/?asset=South&sort=name&order=desc").text
    assert _ids(html) == [ids["Youngfield"], ids["Wetfield"]]
    vol = _totals(html, "volumetric")
    assert vol[0] == "2" and vol[2] == str(100 + 180)  # sum of the P50s of the South fields only
    assert _totals(html, "dynamic")[0] == "1"  # Youngfield has no dynamic estimate
    # header sort links keep the filter
    assert 'href="?asset=South&amp;sort=dynamic_best" data-sort="dynamic_best"' in html
    assert _ids(client.get("/?flag=any").text) == [ids["Lowfield"], ids["Wetfield"]]
    assert _ids(client.get("/?flag=none").text) == [ids["Okfield"], ids["Youngfield"]]
    html = client.get("/?flag=survey_above_initial").text
    assert _ids(html) == [] and "No field carries the flag" in html
    everything = client.get("/").text
    assert "Totals of the 4 fields shown" in everything and "Filtered:" not in everything


@pytest.mark.parametrize(
    ("query", "parameter"),
    [
        ("sort=bogus", "sort"),
        ("order=up", "order"),
        ("asset=Nowhere", "asset"),
        ("flag=Not-a-code", "flag"),
        ("basin=Atlantis", "basin"),
    ],
)
def test_invalid_query_values_are_a_422_naming_the_parameter(portfolio, client, query, parameter):
    page = client.get(f"/?{query}")
    assert page.status_code == 422 and f"query.{parameter}:" in page.text and "Traceback" not in page.text
    api = client.get(f"/api/portfolio?{query}")
    assert api.status_code == 422 and api.json()["detail"][0]["loc"] == ["query", parameter]
    assert client.get(f"/portfolio.csv?{query}").status_code == 422


def test_si_numbers_against_an_independent_conversion(portfolio, client, admin_client):
    ids = portfolio
    assert admin_client.put("/api/settings", json={"display_units": "si"}).status_code == 200
    html = client.get("/").text
    assert _cell(html, ids["Lowfield"], "dynamic_best") == f"{62.0 * MM3_PER_BSCF:,.1f}"  # 1,752.3
    assert _cell(html, ids["Lowfield"], "dynamic_best") == "1,752.3"
    assert _cell(html, ids["Okfield"], "produced") == f"{50.5 * MM3_PER_BSCF:,.1f}"
    assert "10⁶ m³ (15 °C, 101.325 kPa)" in html and "Bscf" not in re.search(
        r"<thead>.*?</thead>", html, re.S
    ).group(0)
    assert _cell(html, ids["Lowfield"], "depletion") == "50 %"  # a ratio: the same in any units
    vol = _totals(html, "volumetric")
    assert float(vol[2]) == pytest.approx(round(480 * MM3_PER_BSCF), abs=1)  # 100 + 100 + 180 + 100 Bscf
    rows = list(csv.reader(io.StringIO(client.get("/portfolio.csv").content.decode("utf-8-sig"))))
    col = rows[0].index("dynamic GIIP best [10⁶ m³ (15 °C, 101.325 kPa)]")
    assert float(rows[1][col]) == pytest.approx(62.0 * MM3_PER_BSCF, abs=1e-3)


def test_csv_export_has_units_basis_caution_and_is_formula_safe(db, portfolio, client):
    with db.session() as s:
        make_field(s, name='=HYPERLINK("http://x")', asset="North")
    r = client.get("/portfolio.csv?asset=North&sort=name")
    assert r.status_code == 200 and r.headers["content-type"].startswith("text/csv")
    assert "attachment" in r.headers["content-disposition"]
    rows = list(csv.reader(io.StringIO(r.content.decode("utf-8-sig"))))
    header = rows[0]
    assert header[:4] == ["field", "asset", "basin", "status"]
    assert "dynamic GIIP low (P90) [Bscf (60 °F, 14.696 psia)]" in header
    assert "depletion, produced / dynamic best GIIP [fraction]" in header
    data = rows[1 : rows.index([])]
    assert [d[0] for d in data] == ['\'=HYPERLINK("http://x")', "Lowfield", "Okfield"]
    low = dict(zip(header, data[1], strict=True))
    assert float(low["dynamic GIIP best [Bscf (60 °F, 14.696 psia)]"]) == 62.0
    assert float(low["depletion, produced / dynamic best GIIP [fraction]"]) == 0.5
    assert (
        low["flag codes"] == "dynamic_below_volumetric"
        and low["dynamic best against volumetric range"] == "below"
    )
    tail = " ".join(x[0] for x in rows[rows.index([]) + 1 :])
    assert "Caution:" in tail and "qualified reservoir engineers" in tail
    assert "Gas volumes in Bscf (60 °F, 14.696 psia)" in tail and "filtered: asset North" in tail


def test_xlsx_export_matches_the_table(portfolio, client):
    r = client.get("/portfolio.xlsx?flag=any&sort=dynamic_best&order=desc")
    assert r.status_code == 200 and "spreadsheetml" in r.headers["content-type"]
    wb = openpyxl.load_workbook(io.BytesIO(r.content))
    ws = wb["portfolio"]
    values = list(ws.iter_rows(values_only=True))
    header = values[0]
    best = header.index("dynamic GIIP best [Bscf (60 °F, 14.696 psia)]")
    assert [(v[0], v[best]) for v in values[1:]] == [("Wetfield", 170.0), ("Lowfield", 62.0)]
    assert values[1][header.index("last survey date")] is None
    notes = [c.value for c in wb["notes"]["A"]]
    assert notes[0].startswith("Caution:") and any("filtered: fields with any flag" in n for n in notes)


def test_json_twin_takes_the_same_parameters(portfolio, client):
    ids = portfolio
    default = client.get("/api/portfolio").json()
    assert [r["name"] for r in default] == [
        "Lowfield",
        "Okfield",
        "Wetfield",
        "Youngfield",
    ]  # by name, as before
    low = default[0]
    assert low["dynamic_to_volumetric"] == pytest.approx(0.62)  # the old fields are kept
    assert low["volumetric_position"] == "below" and low["depletion_frac"] == pytest.approx(0.5)
    assert low["flag_codes"] == ["dynamic_below_volumetric"]
    rows = client.get("/api/portfolio?flag=any&sort=dynamic_best&order=desc").json()
    assert [r["field_id"] for r in rows] == [ids["Wetfield"], ids["Lowfield"]]
    assert [r["name"] for r in client.get("/api/portfolio?asset=South").json()] == ["Wetfield", "Youngfield"]


def test_a_user_limited_to_an_asset_exports_and_filters_only_its_fields(db, portfolio, login_as):
    with db.session() as s:
        north = s.get(Field, portfolio["Lowfield"]).asset_id
    c = login_as("viewer", assets=[north])
    rows = list(csv.reader(io.StringIO(c.get("/portfolio.csv").content.decode("utf-8-sig"))))
    assert [r[0] for r in rows[1 : rows.index([])]] == ["Lowfield", "Okfield"]
    r = c.get("/api/portfolio?asset=South")
    assert r.status_code == 422 and "no asset named 'South'" in r.json()["detail"][0]["msg"]
    assert "Wetfield" not in r.text
    page = c.get("/").text
    assert '<option value="South"' not in page


def test_portfolio_links_point_at_the_page_not_the_api(client):
    # the API's route was once also called "portfolio", so url_for('portfolio') gave /api/portfolio
    html = client.get("/").text
    assert re.search(r'<a class="brand" href="(http://127.0.0.1:8000)?/">', html)
    assert re.search(r'<form method="get" action="(http://127.0.0.1:8000)?/"', html)
    assert "/api/portfolio" not in html


def test_totals_do_not_depend_on_the_sort_order(portfolio, client):
    # each field's trials are re-ordered at random per position; the set must be taken in one
    # order, or sorting the table would move the probabilistic P90/P10 of the same fields
    by_name = client.get("/").text
    by_size = client.get("/?sort=volumetric_best&order=desc").text
    for kind in ("volumetric", "dynamic"):
        assert _totals(by_name, kind) == _totals(by_size, kind)


def test_totals_twin_matches_the_page(portfolio, client):
    html = client.get("/?asset=South").text
    t = client.get("/api/portfolio/totals?asset=South").json()
    assert t["n_fields"] == 2 and t["filters"] == "asset South"
    vol = t["volumetric"]
    assert vol["n_fields"] == 2 and vol["arithmetic_p50_bscf"] == pytest.approx(280.0, rel=1e-4)
    assert f"{vol['p90_bscf']:,.0f}".replace(",", "") == _totals(html, "volumetric")[5].split(" / ")[0]
    assert t["dynamic"]["n_fields"] == 1 and t["dynamic"]["dependence"] == "single field"
    assert client.get("/api/portfolio/totals?flag=none&asset=North").json()["dynamic"]["n_fields"] == 1
    assert client.get("/api/portfolio/totals?sort=nope").status_code == 422


def test_the_users_own_unit_choice_applies_to_page_chart_and_exports(portfolio, client):
    ids = portfolio
    assert client.put("/api/me/units", json={"unit_system": "si"}).status_code == 200
    html = client.get("/").text
    assert _cell(html, ids["Wetfield"], "dynamic_best") == f"{170.0 * MM3_PER_BSCF:,.1f}"
    fig = json.loads(re.search(r'id="portfolio-figure">(.*?)</script>', html, re.S).group(1))
    assert "10⁶ m³" in fig["layout"]["yaxis"]["title"]["text"]
    wb = openpyxl.load_workbook(io.BytesIO(client.get("/portfolio.xlsx?asset=South").content))
    header = [c.value for c in wb["portfolio"][1]]
    col = header.index("volumetric GIIP best [10⁶ m³ (15 °C, 101.325 kPa)]")
    assert wb["portfolio"].cell(2, col + 1).value == pytest.approx(180.0 * MM3_PER_BSCF, abs=1e-3)
    assert client.put("/api/me/units", json={"unit_system": "oilfield"}).status_code == 200
    assert _cell(client.get("/").text, ids["Wetfield"], "dynamic_best") == "170.0"


def test_an_empty_portfolio_renders(client):
    r = client.get("/")
    assert r.status_code == 200 and "No field matches these filters." in r.text
    assert "Showing 0 of 0 fields" in r.text
    assert client.get("/portfolio.xlsx").status_code == 200
    assert client.get("/api/portfolio/totals").json() == {
        "n_fields": 0,
        "filters": "",
        "volumetric": None,
        "dynamic": None,
    }
