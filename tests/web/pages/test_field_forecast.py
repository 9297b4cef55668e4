# ruff: noqa: F811 - the fixture fid is imported from tests/web/fieldbench.py
"""The field page's forecast section and plan form: no plan (no forecast), a plan edited on the
page (audited in words, recomputed, refused with field-named reasons), a stored forecast shown
as cards, chart, yearly table and stop reasons, each well's fit with its data.

The forecasts here are hand-built (tests/forecast_cases.py: constant calendar rates), attached
to the real analysis by a stand-in for the engine, so the expected numbers come from the
calendar; the engine's own numbers are checked in tests/engine/forecast."""

import dataclasses
import datetime as dt

import pytest
from sqlalchemy import select

from server.db.models import AuditEvent, FieldPlan, Well
from server.services.jobs import recompute
from server.web.templating import fmt
from tests.factories import add_well_test
from tests.forecast_cases import make_forecast
from tests.web.fieldbench import fid, figure, latest, text_of  # noqa: F401 - fid is a fixture


def _plan_form(client, **values):
    data = {
        "plateau_rate": "",
        "uptime": "0.95",
        "min_flowing_pressure": "",
        "compression_date": "",
        "compression_min_flowing_pressure": "",
        "economic_limit_rate": "0",
        "licence_end": "",
        "deliverability_exponent": "0.85",
        "csrf_token": client.csrf_token,
    }
    return data | values


@pytest.fixture
def with_forecast(monkeypatch):
    """The engine stand-in: the real analysis plus a hand-built forecast whose rates scale with
    the plan's plateau (so a plan change shows in the profile and the EUR)."""
    real = recompute.analyse_field

    def analyse(inputs):
        result = real(inputs)
        if inputs.plan is None:
            return result
        scale = (inputs.plan.plateau_rate_mscf_per_day or 10000.0) / 10000.0
        return dataclasses.replace(
            result, forecast=make_forecast(history_bscf=result.cumulative_gas_bscf, scale=scale)
        )

    monkeypatch.setattr(recompute, "analyse_field", analyse)


def test_a_field_without_a_plan_says_so_and_offers_the_form(client, fid):
    r = client.get(f"/fields/{fid}")
    assert r.status_code == 200
    text = text_of(r.text)
    assert "This field has no plan, so no forecast" in text
    assert 'id="plan-form"' in r.text and 'href="#forecast"' in r.text
    assert "ignores interference between wells" in text and "qualified engineers" in text  # the caution


def test_a_plan_saved_on_the_page_is_audited_in_words_and_recomputed(db, client, fid, with_forecast):
    r = client.post(
        f"/fields/{fid}/plan",
        data=_plan_form(
            client,
            plateau_rate="30000",
            compression_date="2032-01-01",
            compression_min_flowing_pressure="400",
        ),
        follow_redirects=False,
    )
    assert r.status_code == 303 and r.headers["location"].endswith("#forecast")
    page = client.get(r.headers["location"]).text
    text = text_of(page)
    assert "Saved: created the field plan: plateau rate none → 30,000 Mscf/d" in text
    assert "compression start none → 2032-01-01" in text
    with db.session() as s:
        plan = s.execute(select(FieldPlan)).scalar_one()
        assert (plan.plateau_rate_mscf_per_day, plan.compression_min_flowing_bhp_psia) == (30000.0, 400.0)
        event = s.execute(select(AuditEvent).where(AuditEvent.entity_type == "field_plan")).scalar_one()
        assert event.field_id == fid and event.after["compression_start_date"] == "2032-01-01"
    est = latest(db, fid)
    assert est.forecast_eur_best_bscf is not None
    assert f'id="forecast-eur-best">{fmt(est.forecast_eur_best_bscf)}<' in page
    # the same values again change nothing
    r = client.post(
        f"/fields/{fid}/plan",
        data=_plan_form(
            client,
            plateau_rate="30000",
            compression_date="2032-01-01",
            compression_min_flowing_pressure="400",
        ),
        follow_redirects=False,
    )
    assert r.status_code == 303 and "changed=" not in r.headers["location"]


@pytest.mark.parametrize(
    "values, words",
    [
        ({"uptime": "1.5"}, "uptime: must be above 0 and at most 1"),
        (
            {"compression_date": "2032-01-01"},
            "minimum flowing pressure with compression: compression needs both",
        ),
        ({"licence_end": "31/12/2040"}, "licence end must be a date written YYYY-MM-DD"),
        ({"plateau_rate": "abc"}, "plateau rate: must be a number"),
        (
            {"min_flowing_pressure": "9000"},
            "minimum flowing pressure: must be above 0 and below the initial pressure",
        ),
    ],
)
def test_bad_plan_values_are_refused_by_name_and_change_nothing(db, client, fid, values, words):
    r = client.post(f"/fields/{fid}/plan", data=_plan_form(client, **values))
    assert r.status_code == 422
    text = text_of(r.text)
    assert "Nothing was changed" in text and words in text, text[text.find("Nothing was changed") :][:300]
    with db.session() as s:
        assert s.execute(select(FieldPlan)).scalar_one_or_none() is None


def test_the_stored_forecast_is_shown_with_its_stop_reasons(db, client, fid, with_forecast):
    with db.session() as s:
        w1 = s.execute(select(Well).where(Well.field_id == fid, Well.name == "W-1")).scalar_one()
        w1.name = "W-1 <b>"  # a typed name reaches charts escaped
        add_well_test(
            s,
            w1.id,
            test_date=dt.date(2015, 3, 4),
            static_pressure_psia=4100.0,
            points=((4200.0, 3650.0), (7900.0, 3180.0)),
        )
    client.post(f"/fields/{fid}/plan", data=_plan_form(client, plateau_rate="10000"))
    page = client.get(f"/fields/{fid}").text
    text = text_of(page)
    est = latest(db, fid)
    assert f'id="forecast-eur-best">{fmt(est.forecast_eur_best_bscf)}<' in page
    assert (
        "In the low case production stops on 2030-01-01 because the field rate falls below the economic limit"
        in text
    )
    assert "In the best case production stops on 2031-01-01 because the licence ends" in text
    assert "the reservoir pressure reaches the abandonment pressure" in text
    # yearly table: 2028 is a leap year, 10 MMscf/d for 366 days
    row = page[page.find('data-year="2028"') :][:600]
    assert f'<td class="num" data-best>{fmt(10000.0 * 366 / 1e6)}</td>' in row
    fig = figure(page, "forecast-figure")
    names = [t["name"] for t in fig["data"]]
    assert names.count("history") == 2 and {"low (P90)", "best (P50)", "high (P10)"} <= set(names)
    best = next(t for t in fig["data"] if t["name"] == "best (P50)" and t.get("yaxis") != "y2")
    assert best["x"][0] == "2027-01" and best["y"][0] == pytest.approx(10.0)  # MMscf/d
    fits = figure(page, "deliverability-figure")
    legend = " ".join(t["name"] for t in fits["data"])
    assert "W-1 &lt;b&gt;" in legend and "<b>" not in legend
    tests_trace = next(t for t in fits["data"] if t["name"].endswith("tests"))
    assert tests_trace["x"][0] == pytest.approx(4100.0**2 - 3650.0**2)  # p̄² − p_wf², psia²
    assert 'id="deliverability"' in page and "well test of 2021-03-04 (2 rates)" in text
    assert 'id="well-tests"' in page
    pz = figure(page, "pz-figure")
    path = next(t for t in pz["data"] if t["name"] == "forecast path, best")
    assert path["x"][0] == pytest.approx(
        est.detail["forecast"]["profiles"][1]["cumulative_bscf"][0], abs=0.05
    )
    stored_path = est.detail["forecast"]["profiles"][1]["pz_psia"]
    assert path["y"][0] == pytest.approx(stored_path[0]) and path["y"][0] > path["y"][-1]  # p falls


def test_a_viewer_sees_the_plan_but_may_not_change_it(db, viewer_client, fid):
    page = viewer_client.get(f"/fields/{fid}").text
    assert 'id="plan-form"' not in page and 'id="plan-read"' in page
    r = viewer_client.post(f"/fields/{fid}/plan", data=_plan_form(viewer_client, plateau_rate="1000"))
    assert r.status_code == 403


def test_the_plan_form_needs_the_session_token(db, app, client, fid):
    from fastapi.testclient import TestClient

    from tests.web.conftest import BASE_URL

    bare = TestClient(app, base_url=BASE_URL, cookies=client.cookies)
    data = _plan_form(client, plateau_rate="1000")
    del data["csrf_token"]
    assert bare.post(f"/fields/{fid}/plan", data=data).status_code == 403
    with db.session() as s:
        assert s.execute(select(FieldPlan)).scalar_one_or_none() is None


def test_si_units_on_the_plan_form(db, client, fid):
    """10³ m³/d typed on an SI page is stored in Mscf/d: 1 m³ (15 °C, 101.325 kPa) = 35.383 scf
    at 60 °F, 14.696 psia (docs/uploads.md, ideal-gas ratio)."""
    client.put("/api/me/units", json={"unit_system": "si"})
    r = client.post(
        f"/fields/{fid}/plan", data=_plan_form(client, plateau_rate="1000", min_flowing_pressure="6894.757")
    )
    assert r.status_code in (200, 303)
    with db.session() as s:
        plan = s.execute(select(FieldPlan)).scalar_one()
        assert plan.plateau_rate_mscf_per_day == pytest.approx(1000 * 35.383, rel=1e-3)
        assert plan.min_flowing_bhp_psia == pytest.approx(1000.0, rel=1e-6)  # 6.894757 kPa per psi
