"""The plan's deliverability form and the water profile, through the recompute with the real
engine: the form is audited, is part of the fingerprint and changes the stored forecast; water
produced on a trend is stored by month and by year. The numbers themselves are checked in
tests/engine/forecast (test_pseudo_pressure_form.py, test_water.py); here the wiring."""

import datetime as dt

import pytest
from sqlalchemy import select

from server.db.models import AuditEvent, FieldPlan, ProductionMonth
from server.services import audit
from server.services.fieldwork import plan as field_plan
from server.services.fieldwork.planrules import plan_problems
from server.services.jobs.recompute import load_field_inputs, recompute_field
from tests.factories import add_volumetric_history, make_field

ACTOR = audit.Actor(None, "engineer-test")


@pytest.fixture
def field(session):
    f = make_field(session, name="Upland")  # p_i 5000 psia: high enough for the two forms to differ
    add_volumetric_history(session, f, end=dt.date(2012, 12, 1))  # 3 years at 20 MMscf/d of 100 Bscf
    session.flush()
    return f


def test_the_form_is_audited_is_in_the_fingerprint_and_changes_the_forecast(db, session, field):
    field_plan.update_plan(session, ACTOR, field, {"plateau_rate_mscf_per_day": 25000.0})
    est_p2, new = recompute_field(session, field)
    assert new and est_p2.detail["forecast"]["deliverability_form"] == "pressure_squared"
    assert load_field_inputs(session, field).plan.deliverability_form == "pressure_squared"
    out = field_plan.update_plan(session, ACTOR, field, {"deliverability_form": "pseudo-pressure"})
    assert out.changed == ("deliverability_form",)
    assert "deliverability form pressure squared" in out.summary and "→ pseudo-pressure" in out.summary
    event = session.get(AuditEvent, out.audit_id)
    assert event.after == {"deliverability_form": "pseudo_pressure"}
    assert session.execute(select(FieldPlan.deliverability_form)).scalar_one() == "pseudo_pressure"
    est_m, new = recompute_field(session, field)
    assert new and est_m.inputs_fingerprint != est_p2.inputs_fingerprint
    fc = est_m.detail["forecast"]
    assert fc["deliverability_form"] == "pseudo_pressure"
    assert {d["form"] for d in fc["deliverability"]} == {"pseudo_pressure"}
    # Calibrated at today's pressure, the m(p) form delivers more later on (docs/forecast.md).
    assert est_m.forecast_eur_best_bscf != pytest.approx(est_p2.forecast_eur_best_bscf, rel=1e-6)
    best_p2 = next(p for p in est_p2.detail["forecast"]["profiles"] if p["case"] == "best")
    best_m = next(p for p in fc["profiles"] if p["case"] == "best")
    k = min(len(best_p2["cumulative_bscf"]), len(best_m["cumulative_bscf"])) - 1
    assert best_m["cumulative_bscf"][k] > best_p2["cumulative_bscf"][k]


def test_an_unknown_form_is_refused_with_its_name(session, field):
    with pytest.raises(field_plan.FieldWorkError) as exc:
        field_plan.update_plan(session, ACTOR, field, {"deliverability_form": "linear"})
    assert "deliverability form must be one of pressure_squared, pseudo_pressure" in str(exc.value.problems)
    values = field_plan.stored_plan(None) | {"deliverability_form": "cubic"}
    assert "deliverability_form" in plan_problems(field, values)


def test_water_on_a_trend_is_stored_by_month_and_year(db, session, field):
    rows = session.execute(select(ProductionMonth).order_by(ProductionMonth.month)).scalars().all()
    cum = 0.0
    for r in rows:  # WGR = 2 + 0.5 G_p [stb/MMscf, G_p in Bscf at the month's middle]
        mid = cum + 0.5 * r.gas_mscf / 1e6
        r.water_stb = (2.0 + 0.5 * mid) * r.gas_mscf / 1e3
        cum += r.gas_mscf / 1e6
    field_plan.update_plan(session, ACTOR, field, {"plateau_rate_mscf_per_day": 25000.0})
    est, _ = recompute_field(session, field)
    fc = est.detail["forecast"]
    assert fc["water"]["method"] == "trend"
    assert fc["water"]["slope_stb_per_mmscf_per_bscf"] == pytest.approx(0.5, rel=1e-6)
    best = next(p for p in fc["profiles"] if p["case"] == "best")
    assert len(best["water_stb"]) == len(best["gas_bscf"])
    assert sum(r["water_stb"] for r in best["yearly"]) == pytest.approx(sum(best["water_stb"]), rel=1e-9)
    # The first forecast month's WGR is the line's at its middle.
    g1 = best["cumulative_bscf"][0]
    g_mid = g1 - 0.5 * best["gas_bscf"][0]
    assert best["water_stb"][0] / (best["gas_bscf"][0] * 1e3) == pytest.approx(2.0 + 0.5 * g_mid, rel=1e-6)
