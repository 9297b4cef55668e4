"""The demo portfolio through the real path with the forecast engine: every field with an
estimate shows a forecast with low, best and high cases, and the demo's plans make the forecasts
stop for each of the reasons its plans were written for (services/demo_plans.py)."""

import importlib.util

import pytest
from sqlalchemy import select

from server.db.models import Field
from server.services.demo import load_demo
from server.services.jobs import runner
from server.services.portfolio.rows import latest_estimates

pytestmark = pytest.mark.skipif(
    importlib.util.find_spec("server.engine.forecast.build") is None,
    reason="waits for the forecast engine (engine/forecast/build.py, branch h13e): no forecasts without it",
)


def test_every_demo_field_with_an_estimate_has_a_forecast_and_each_stop_reason_shows(db):
    with db.session() as s:
        load_demo(s)
    runner.drain(db)
    with db.session() as s:
        names = {f.id: f.name for f in s.execute(select(Field)).scalars()}
        stored = {names[fid]: e for fid, e in latest_estimates(s, names).items()}
    reasons = {}
    for name, e in stored.items():
        assert e.status == "ok", name  # the young Dunmarrow rests on its volumetric estimate
        fc = e.detail["forecast"]
        assert [p["case"] for p in fc["profiles"]] == ["low", "best", "high"], name
        assert e.forecast_eur_low_bscf <= e.forecast_eur_best_bscf <= e.forecast_eur_high_bscf, name
        assert e.forecast_stop_reason == fc["profiles"][1]["stop_reason"]
        assert all(p["yearly"] for p in fc["profiles"] if p["gas_bscf"]), name
        reasons[name] = e.forecast_stop_reason
    assert reasons["Lowmarsh Deep"] == "licence end"
    assert reasons["Brackenhold"] == "abandonment pressure"  # compression takes the wells below p_a
    assert reasons["Cindervale"] == "horizon"  # no economic limit
    assert reasons["Amberlode"] == "economic limit"
