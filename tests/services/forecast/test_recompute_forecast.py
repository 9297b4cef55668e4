"""The recompute carries the plan, the well tests and production per well into the engine's
inputs (and so into the fingerprint), and stores the engine's forecast with the estimate.

The engine is replaced by a stand-in that attaches a hand-built forecast to the real analysis
(tests/forecast_cases.py), so these tests check storage, not the engine."""

import dataclasses
import datetime as dt

import numpy as np
import pytest
from sqlalchemy import func, select

from server.db.models import Estimate, FieldPlan, PlannedWell
from server.services.jobs import recompute
from server.services.jobs.recompute import load_field_inputs, recompute_field
from server.services.timebase import days_from_date
from tests.factories import add_volumetric_history, add_well_test, make_field
from tests.forecast_cases import make_forecast


@pytest.fixture
def field(session):
    f = make_field(session, name="Upland")
    add_volumetric_history(session, f)
    session.flush()
    return f


def _plan(session, f, **kw):
    values = dict(field_id=f.id, plateau_rate_mscf_per_day=30000.0, economic_limit_mscf_per_day=1000.0) | kw
    session.add(FieldPlan(**values))
    session.flush()


def test_no_plan_no_forecast_inputs(session, field):
    inputs = load_field_inputs(session, field)
    assert inputs.plan is None
    by_well = dict(inputs.production_by_well)
    assert set(by_well) == {"W-1"}  # the factory produces from the first well only
    assert by_well["W-1"].sum() == pytest.approx(inputs.production_gas_mscf.sum())


def test_the_plan_and_tests_reach_the_engine_in_its_units(session, field):
    _plan(
        session,
        field,
        compression_start_date=dt.date(2030, 1, 1),
        compression_min_flowing_bhp_psia=400.0,
        licence_end_date=dt.date(2040, 12, 31),
    )
    session.add(
        PlannedWell(
            field_id=field.id, name="P-1", start_date=dt.date(2028, 7, 1), c_mscf_per_day_psi2n=4e-4, n=0.8
        )
    )
    w1 = next(w for w in field.wells if w.name == "W-1")
    add_well_test(
        session,
        w1.id,
        test_date=dt.date(2015, 3, 4),
        static_pressure_psia=4100.0,
        points=((4200.0, 3650.0), (7900.0, 3180.0)),
    )
    session.flush()
    inputs = load_field_inputs(session, field)
    plan = inputs.plan
    assert plan.plateau_rate_mscf_per_day == 30000.0 and plan.economic_limit_mscf_per_day == 1000.0
    assert plan.compression_start_t_days == days_from_date(dt.date(2030, 1, 1))  # days since 1970-01-01
    assert plan.licence_end_t_days == (dt.date(2040, 12, 31) - dt.date(1970, 1, 1)).days
    assert [(w.name, w.n) for w in plan.planned_wells] == [("P-1", 0.8)]
    assert [(t.well, t.rate_mscf_per_day) for t in inputs.well_tests] == [("W-1", 4200.0), ("W-1", 7900.0)]


def test_the_plan_is_part_of_the_fingerprint(db, session, field, monkeypatch):
    session.commit()
    est, new = recompute_field(session, field)
    assert new and est.forecast_eur_best_bscf is None  # no plan: no forecast
    _plan(session, field)
    est2, new2 = recompute_field(session, field)
    assert new2 and est2.inputs_fingerprint != est.inputs_fingerprint
    assert recompute_field(session, field) == (est2, False)  # same inputs: nothing new
    row = session.execute(select(FieldPlan)).scalar_one()
    row.uptime_frac = 0.9
    session.flush()
    assert recompute_field(session, field)[1]


def test_the_forecast_is_stored_with_the_estimate(session, field, monkeypatch):
    _plan(session, field)
    real = recompute.analyse_field
    forecast = make_forecast(history_bscf=20.0)

    def with_forecast(inputs):
        assert inputs.plan is not None
        return dataclasses.replace(real(inputs), forecast=forecast)

    monkeypatch.setattr(recompute, "analyse_field", with_forecast)
    est, new = recompute_field(session, field)
    assert new
    best = forecast.case("best")
    assert est.forecast_eur_best_bscf == pytest.approx(best.eur_bscf)
    assert est.forecast_eur_low_bscf == pytest.approx(forecast.case("low").eur_bscf)
    assert est.forecast_stop_reason == "licence end"
    assert est.forecast_end_date == dt.date(2031, 1, 1)
    stored = est.detail["forecast"]
    assert [p["case"] for p in stored["profiles"]] == ["low", "best", "high"]
    assert len(stored["profiles"][1]["gas_bscf"]) == 48 and stored["profiles"][1]["yearly"]
    assert stored["deliverability"][0]["well"] == "W-1"
    assert est.forecast_yearly["years"][0] == 2027
    # the p/z path uses the estimate's own z: DAK for gravity 0.65 at 200 °F (no lab table)
    from server.engine.pvt.gas import GasFluid, z_factor

    p0 = stored["profiles"][1]["pressure_psia"][0]
    z0 = float(z_factor(np.array([p0]), 200.0, GasFluid(0.65), "dak")[0])
    assert stored["profiles"][1]["pz_psia"][0] == pytest.approx(p0 / z0, rel=1e-9)
    assert session.execute(select(func.count()).select_from(Estimate)).scalar_one() == 1
