# ruff: noqa: F811 - the fixture fid is imported from tests/web/fieldbench.py
"""The JSON twins of the plan form and the forecast section (stored units in every name).

The forecast is hand-built (tests/forecast_cases.py, constant calendar rates) and attached to
the real analysis by a stand-in for the engine; expected numbers come from the calendar."""

import dataclasses

import pytest

from server.services.jobs import recompute
from tests.forecast_cases import make_forecast
from tests.web.fieldbench import fid  # noqa: F401 - fid is a fixture


@pytest.fixture
def with_forecast(monkeypatch):
    real = recompute.analyse_field

    def analyse(inputs):
        result = real(inputs)
        if inputs.plan is None:
            return result
        return dataclasses.replace(result, forecast=make_forecast(history_bscf=result.cumulative_gas_bscf))

    monkeypatch.setattr(recompute, "analyse_field", analyse)


def test_no_plan_reads_as_defaults_and_an_empty_forecast(client, fid):
    plan = client.get(f"/api/fields/{fid}/plan").json()
    assert plan["exists"] is False and plan["uptime_frac"] == 0.95 and plan["planned_wells"] == []
    fc = client.get(f"/api/fields/{fid}/forecast").json()
    assert fc["profiles"] == [] and "qualified engineers" in fc["caution"]


def test_put_plan_then_read_the_forecast(client, fid, with_forecast):
    r = client.put(
        f"/api/fields/{fid}/plan",
        json={
            "plateau_rate_mscf_per_day": 30000,
            "licence_end_date": "2031-01-01",
            "economic_limit_mscf_per_day": 500,
        },
    )
    assert r.status_code == 200, r.text
    body = r.json()
    assert set(body["changed"]) == {
        "plateau_rate_mscf_per_day",
        "licence_end_date",
        "economic_limit_mscf_per_day",
    }
    assert (
        body["summary"].startswith("created the field plan")
        and "licence end none → 2031-01-01" in body["summary"]
    )
    est = body["estimate"]
    assert est["forecast_stop_reason"] == "licence end" and est["forecast_end_date"] == "2031-01-01"
    plan = client.get(f"/api/fields/{fid}/plan").json()
    assert (
        plan["exists"]
        and plan["plateau_rate_mscf_per_day"] == 30000
        and plan["licence_end_date"] == "2031-01-01"
    )
    fc = client.get(f"/api/fields/{fid}/forecast", params={"remaining_from": "2027-07-01"}).json()
    assert [p["case"] for p in fc["profiles"]] == ["low", "best", "high"]
    best = fc["profiles"][1]
    assert best["stop_words"] == "the licence ends" and best["end_date"] == "2031-01-01"
    assert best["eur_bscf"] == pytest.approx(est["forecast_eur_best_bscf"])
    # 10 MMscf/d from 2027-07-01 to 2030-12-31: 184 + 366 + 365 + 365 days (2028 a leap year)
    assert best["remaining_after_date_bscf"] == pytest.approx(10000 * (184 + 366 + 365 + 365) / 1e6)
    assert best["yearly"][1]["year"] == 2028 and best["yearly"][1]["gas_bscf"] == pytest.approx(3.66)
    assert fc["deliverability"][0]["well"] == "W-1"


def test_a_refused_plan_names_the_value_and_changes_nothing(client, fid):
    r = client.put(
        f"/api/fields/{fid}/plan",
        json={"compression_start_date": "2030-01-01", "plateau_rate_mscf_per_day": 100},
    )
    assert r.status_code == 409
    assert "compression_min_flowing_bhp_psia: compression needs both" in r.json()["detail"]
    assert client.get(f"/api/fields/{fid}/plan").json()["exists"] is False
    r = client.put(f"/api/fields/{fid}/plan", json={"uptime_frac": 1.5})
    assert r.status_code == 422  # outside the schema's bounds
    r = client.put(f"/api/fields/{fid}/plan", json={"surprise": 1})
    assert r.status_code == 422
