"""The forecast inside analyse_field, and the tank-network stepper against the forward simulator.

Sources: the project's forward simulator (server/synthetic/tank.py, two tanks connected in
the pseudo-pressure form) for the network; for the wiring, the contract itself (the basis
and its P90/P50/P10) and mass balance.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from server.engine.analysis import analyse_field
from server.engine.forecast.build import forecast_field
from server.engine.forecast.network_stepper import NetworkStepper
from server.engine.plan import FieldPlan, WellTest
from server.synthetic.tank import simulate
from tests.engine.cases import demo_field_inputs
from tests.engine.two_tanks import two_tank_case


@pytest.fixture(scope="module")
def amberlode():
    inputs = demo_field_inputs("Amberlode")
    plan = FieldPlan(plateau_rate_mscf_per_day=40000.0, economic_limit_mscf_per_day=1500.0)
    return inputs, analyse_field(dataclasses.replace(inputs, plan=plan))


def test_a_plan_gives_low_best_high_profiles_from_the_basis(amberlode):
    inputs, a = amberlode
    fc = a.forecast
    assert fc is not None and fc.basis_model == a.basis.model
    assert [p.case for p in fc.profiles] == ["low", "best", "high"]
    assert [p.giip_bscf for p in fc.profiles] == pytest.approx(
        [a.basis.giip_low_bscf, a.basis.giip_bscf, a.basis.giip_high_bscf]
    )
    low, best, high = fc.profiles
    assert low.eur_bscf < best.eur_bscf < high.eur_bscf
    # Volumes are separator gas: every case starts from the field's separator-gas cumulative.
    sep = float(np.sum(inputs.production_gas_mscf)) / 1e6
    for p in fc.profiles:
        assert p.cumulative_bscf[0] - p.gas_bscf[0] == pytest.approx(sep)
        assert p.stop_reason == "economic limit" and p.rate_mscf_per_day[-1] >= 1500.0
        assert p.condensate_stb is not None and np.all(p.condensate_stb >= 0)
    assert any("abandonment pressure" in n and "minimum flowing" in n for n in fc.notes)
    assert len(fc.deliverability) == 1 and fc.deliverability[0].well == ""  # the field as one well


def test_without_a_plan_no_forecast_and_a_bad_plan_is_a_note(amberlode):
    inputs, _ = amberlode
    assert analyse_field(inputs).forecast is None
    bad = analyse_field(dataclasses.replace(inputs, plan=FieldPlan(uptime_frac=1.5)))
    assert bad.status == "ok" and bad.forecast is None
    assert any(n.startswith("No forecast: the uptime fraction") for n in bad.notes)


def test_well_tests_replace_the_calibration(amberlode):
    inputs, a = amberlode
    p = 2500.0
    tests = tuple(
        WellTest("T-1", 19000.0 + i, 0.02 * (p**2 - pwf**2) ** 0.8, pwf, p)
        for i, pwf in enumerate((2300.0, 2000.0, 1600.0))
    )
    fc = forecast_field(
        dataclasses.replace(inputs, well_tests=tests, plan=FieldPlan(40000.0)),
        a.prepared,
        a.basis,
        {"initial_pz_psia": a.pz.intercept_psia, "giip_bscf": a.pz.giip_bscf},
    )
    assert [d.well for d in fc.deliverability] == ["T-1"]
    assert fc.deliverability[0].n == pytest.approx(0.8) and "3 rates" in fc.deliverability[0].source
    assert any("tested wells only" in n for n in fc.notes)


def test_the_network_stepper_follows_the_forward_two_tank_model():
    case = two_tank_case()
    spec, prepared = case.spec, case.prepared
    st = NetworkStepper(case.inputs, prepared, case.true_params)
    month = 30.4375
    got = []
    for _ in range(60):
        st.commit(12000.0 * 1e3 * month, month)
        got.append(st.p_psia)
    n_hist = prepared.production_end_t_days.size
    t = np.arange(1, n_hist + 61) * month
    fwd = simulate(spec, t, np.full(t.size, 12000.0))
    # Quarterly history steps and monthly forecast steps against the forward model's 10-day substeps.
    assert np.array(got) == pytest.approx(fwd.p1_psia[n_hist:], rel=5e-3)


def test_a_planned_well_joins_from_its_start_and_adds_gas(amberlode):
    inputs, a = amberlode
    from server.engine.plan import PlannedWell

    t_last = float(inputs.production_end_t_days[-1])
    params = {"initial_pz_psia": a.pz.intercept_psia, "giip_bscf": a.pz.giip_bscf}
    plan = FieldPlan(40000.0, economic_limit_mscf_per_day=1500.0)
    base = forecast_field(dataclasses.replace(inputs, plan=plan), a.prepared, a.basis, params)
    well = PlannedWell("N-1", t_last + 400.0, "north", 0.02, 0.8)
    more = forecast_field(
        dataclasses.replace(inputs, plan=dataclasses.replace(plan, planned_wells=(well,))),
        a.prepared,
        a.basis,
        params,
    )
    assert more.deliverability[-1].well == "N-1" and more.deliverability[-1].source.startswith(
        "planned well from "
    )
    b, m = base.case("best"), more.case("best")
    assert m.eur_bscf > b.eur_bscf
    # Identical months until the well starts (the month whose middle follows its start).
    before = int(np.sum(b.month_end_t_days < t_last + 400.0))
    assert m.gas_bscf[:before] == pytest.approx(b.gas_bscf[:before], rel=1e-12)
