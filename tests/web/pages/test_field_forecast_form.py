# ruff: noqa: F811 - the fixture fid is imported from tests/web/fieldbench.py
"""The plan's deliverability form and the water profile on the field page and its JSON twin,
with the real engine (the engine's numbers are checked in tests/engine/forecast): the form is
a choice on the plan form, it changes the stored forecast, and the page and the JSON say which
form was used; water on a trend gets a column in the yearly table."""

from sqlalchemy import select

from server.db.models import FieldPlan, ProductionMonth
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from tests.web.fieldbench import fid, latest, text_of  # noqa: F401 - fid is a fixture

FORM = {
    "plateau_rate": "25000",
    "uptime": "0.95",
    "min_flowing_pressure": "",
    "compression_date": "",
    "compression_min_flowing_pressure": "",
    "economic_limit_rate": "0",
    "licence_end": "",
    "deliverability_exponent": "0.85",
}


def test_choosing_the_pseudo_pressure_form_on_the_page_changes_the_forecast(db, client, fid):
    client.post(f"/fields/{fid}/plan", data=FORM | {"csrf_token": client.csrf_token})
    p2 = latest(db, fid)
    page = client.get(f"/fields/{fid}").text
    assert 'id="forecast-form" data-form="pressure_squared"' in page
    assert '<option value="pressure_squared" selected>' in page
    r = client.post(
        f"/fields/{fid}/plan",
        data=FORM | {"deliverability_form": "pseudo_pressure", "csrf_token": client.csrf_token},
        follow_redirects=False,
    )
    assert r.status_code == 303
    page = client.get(r.headers["location"]).text
    text = text_of(page)
    assert "deliverability form pressure squared, q = C (p̄² − p_wf²)^n → pseudo-pressure" in text
    assert 'id="forecast-form" data-form="pseudo_pressure"' in page
    assert "the back-pressure equation in its pseudo-pressure, q = C [m(p̄) − m(p_wf)]^n form" in text
    assert '<option value="pseudo_pressure" selected>' in page and 'data-form="pseudo_pressure">m(p)<' in page
    pm = latest(db, fid)
    assert pm.id != p2.id and pm.forecast_eur_best_bscf != p2.forecast_eur_best_bscf
    with db.session() as s:
        assert s.execute(select(FieldPlan.deliverability_form)).scalar_one() == "pseudo_pressure"
    # The JSON twins say the same.
    fc = client.get(f"/api/fields/{fid}/forecast").json()
    assert fc["deliverability_form"] == "pseudo_pressure"
    assert {d["form"] for d in fc["deliverability"]} == {"pseudo_pressure"}
    assert client.get(f"/api/fields/{fid}/plan").json()["deliverability_form"] == "pseudo_pressure"
    # And back through the API.
    r = client.put(f"/api/fields/{fid}/plan", json={"deliverability_form": "pressure_squared"})
    assert r.status_code == 200 and r.json()["changed"] == ["deliverability_form"]
    assert client.put(f"/api/fields/{fid}/plan", json={"deliverability_form": "cubic"}).status_code == 422


def test_a_water_trend_shows_in_the_yearly_table_and_the_json(db, client, fid):
    with db.session() as s:
        cum = 0.0
        for r in s.execute(select(ProductionMonth).order_by(ProductionMonth.month)).scalars():
            mid = cum + 0.5 * r.gas_mscf / 1e6
            r.water_stb = (2.0 + 0.5 * mid) * r.gas_mscf / 1e3  # WGR rising 0.5 stb/MMscf per Bscf
            cum += r.gas_mscf / 1e6
        jobs.enqueue_field_recompute(s, [fid], reason="test: water")
    runner.drain(db)
    client.post(f"/fields/{fid}/plan", data=FORM | {"csrf_token": client.csrf_token})
    page = client.get(f"/fields/{fid}").text
    assert 'id="forecast-water" data-method="trend"' in page
    assert "Best water" in page and "data-water>" in page
    fc = client.get(f"/api/fields/{fid}/forecast").json()
    assert fc["water"]["method"] == "trend"
    best = next(p for p in fc["profiles"] if p["case"] == "best")
    assert best["yearly"][0]["water_stb"] > 0 and len(best["water_stb"]) == len(best["gas_bscf"])


def test_without_water_there_is_no_water_column(db, client, fid):
    client.post(f"/fields/{fid}/plan", data=FORM | {"csrf_token": client.csrf_token})
    page = client.get(f"/fields/{fid}").text
    assert 'id="forecast-water" data-method="none"' in page and "Best water" not in page
    best = next(
        p for p in client.get(f"/api/fields/{fid}/forecast").json()["profiles"] if p["case"] == "best"
    )
    assert best["water_stb"] is None and best["yearly"][0]["water_stb"] is None
