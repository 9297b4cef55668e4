"""Monthly profiles of a volumetric tank against closed forms and an ODE solution.

Sources: the p/z line Gp = G (1 − (p/z)/(p/z)_i) (Havlena & Odeh 1963; domain reference
§2.2) with z from the engine's DAK correlation evaluated directly (not the forecast's
interpolated table); the deliverability-limited decline against scipy.integrate.solve_ivp
of the same tank ODE dGp/dt = U min(q_plateau, C (p² − p_wf²)^n).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from server.engine.forecast.profile import CaseSettings, month_ends_t_days, run_case
from server.engine.forecast.steppers import LineStepper, field_pz_table
from server.engine.forecast.types import STOP_REASONS, Deliverability
from server.engine.plan import FieldPlan, PlannedWell
from server.engine.pvt.gas import z_factor
from tests.engine.aquifer_cases import FLUID, T_DEGF, synthetic_field

G_BSCF = 100.0


@pytest.fixture(scope="module")
def field():
    return synthetic_field(sigma_psia=0.0, years=5)  # 10 MMscf/d for 5 years from a 100 Bscf tank


def _run(field, plan: FieldPlan, wells, *, case="best", giip_bscf=G_BSCF):
    pr = field.prepared
    table = field_pz_table(field.inputs, pr)
    stepper = LineStepper(table, pr.initial_pz_psia, giip_bscf * 1e9, pr.cumulative_gas_bscf * 1e9)
    t_last = float(pr.production_end_t_days[-1])
    pwf = plan.min_flowing_bhp_psia or field.inputs.abandonment_pressure_psia
    settings = CaseSettings(
        plan,
        t_last,
        month_ends_t_days(t_last),
        pr.cumulative_separator_gas_bscf,
        1.0,
        None,
        field.inputs.abandonment_pressure_psia,
        pwf,
        tuple(wells),
    )
    return run_case(case, giip_bscf, stepper, settings), settings


def _well(c, n, name="W-1"):
    return (Deliverability(name, c, n, "test", 0), -math.inf)


def _pz(p):
    return np.asarray(p) / z_factor(np.asarray(p, float), T_DEGF, FLUID)


def test_month_ends_are_first_days_of_the_following_months():
    # 2020-01-31 (day 18292) is in January: the first forecast month ends 2020-03-01 exclusive?
    # No: the month after the last production month (January) is February, ending 2020-03-01.
    ends = month_ends_t_days(18293.0, years=1)  # 2020-02-01, the exclusive end of January 2020
    assert ends[0] == 18322.0  # 2020-03-01 (2020 is a leap year: 29 days of February)
    assert ends.size == 12 and np.all(np.diff(ends) >= 28)


def test_constant_rate_depletion_of_a_volumetric_tank_matches_the_closed_form(field):
    # A well far stronger than the plateau: the field holds 10 MMscf/d to the abandonment pressure.
    plan = FieldPlan(plateau_rate_mscf_per_day=10000.0, uptime_frac=1.0, min_flowing_bhp_psia=300.0)
    prof, s = _run(field, plan, [_well(1e3, 1.0)])
    pr = field.prepared
    pz_i = pr.initial_pz_psia
    # Closed form (Havlena & Odeh 1963): Gp at p_a, with z from DAK at p_a.
    gp_a = G_BSCF * (1.0 - float(_pz(500.0)) / pz_i)
    assert prof.stop_reason == "abandonment pressure"
    assert prof.eur_bscf == pytest.approx(gp_a, rel=1e-4)
    # Constant rate: the stop date is the remaining gas over the rate.
    days = (gp_a - pr.cumulative_gas_bscf) / 0.01
    assert prof.end_t_days - s.t_last_days == pytest.approx(days, abs=0.5)
    assert np.all(prof.rate_mscf_per_day[:-1] == pytest.approx(10000.0))
    # Every month end lies on the p/z line (z from DAK directly, not the forecast's table).
    expect = pz_i * (1.0 - prof.cumulative_bscf / G_BSCF)
    assert _pz(prof.pressure_psia) == pytest.approx(expect, rel=2e-4)


def _pressure_of_gp(gp_bscf, pz_i):
    target = pz_i * (1.0 - gp_bscf / G_BSCF)
    return brentq(lambda p: float(_pz(p)) - target, 14.7, 7000.0, xtol=1e-9)


def test_deliverability_limited_decline_matches_an_ode_solution(field):
    # Plateau, then decline as the well's potential falls below it; the ODE of the same tank
    # integrated by scipy (RK45, tight tolerances) with p(Gp) from the p/z line and DAK.
    c, n, pwf, u, plateau = 0.03, 0.8, 800.0, 0.9, 10000.0
    plan = FieldPlan(
        plateau_rate_mscf_per_day=plateau,
        uptime_frac=u,
        min_flowing_bhp_psia=pwf,
        licence_end_t_days=float(field.prepared.production_end_t_days[-1]) + 20 * 365.25,
    )
    prof, s = _run(field, plan, [_well(c, n)])
    assert prof.stop_reason == "licence end"
    pz_i = field.prepared.initial_pz_psia
    gp0 = field.prepared.cumulative_gas_bscf

    def rhs(_t, y):
        p = _pressure_of_gp(y[0], pz_i)
        d = c * max(p * p - pwf * pwf, 0.0) ** n
        return [u * min(plateau, d) / 1e6]  # Bscf/d

    t_ends = prof.month_end_t_days - s.t_last_days
    t_ends[-1] = prof.end_t_days - s.t_last_days
    sol = solve_ivp(rhs, (0.0, t_ends[-1]), [gp0], t_eval=t_ends, rtol=1e-10, atol=1e-10, method="RK45")
    assert sol.success
    # The profile had a plateau and a real decline (otherwise the test would not test it).
    assert prof.rate_mscf_per_day[0] == pytest.approx(u * plateau)
    assert prof.rate_mscf_per_day[-2] < 0.6 * u * plateau
    assert prof.cumulative_bscf == pytest.approx(sol.y[0], rel=2e-4)


def test_mass_balance_plateau_and_pressure_floor(field):
    pwf = 1200.0
    plan = FieldPlan(
        plateau_rate_mscf_per_day=12000.0,
        uptime_frac=0.93,
        min_flowing_bhp_psia=pwf,
        economic_limit_mscf_per_day=0.0,
    )
    prof, s = _run(field, plan, [_well(0.05, 0.7, "A"), _well(0.002, 0.95, "B")])
    gp0 = field.prepared.cumulative_separator_gas_bscf
    # The profile sums to the cumulative and the EUR (mass balance).
    assert prof.cumulative_bscf == pytest.approx(gp0 + np.cumsum(prof.gas_bscf), rel=1e-12)
    assert prof.eur_bscf == pytest.approx(gp0 + prof.gas_bscf.sum(), rel=1e-12)
    assert prof.remaining_bscf == pytest.approx(prof.gas_bscf.sum(), rel=1e-12)
    # Rate x days = gas, never above the plateau times uptime.
    days = np.diff(np.concatenate([[s.t_last_days], prof.month_end_t_days]))
    assert prof.rate_mscf_per_day * days / 1e6 == pytest.approx(prof.gas_bscf, rel=1e-12)
    assert np.all(prof.rate_mscf_per_day <= 12000.0 * 0.93 * (1 + 1e-12))
    # The wells cannot draw the tank below the minimum flowing pressure.
    assert np.all(prof.pressure_psia >= pwf - 1e-6)
    assert np.all(np.diff(prof.pressure_psia) <= 1e-9)


def test_each_stop_reason_is_reached_by_a_designed_case(field):
    t_last = float(field.prepared.production_end_t_days[-1])
    strong = [_well(1e3, 1.0)]
    weak = [_well(0.03, 0.8)]
    cases = {
        "abandonment pressure": FieldPlan(10000.0, 1.0, 300.0),
        "economic limit": FieldPlan(10000.0, 0.9, 800.0, economic_limit_mscf_per_day=3000.0),
        "licence end": FieldPlan(10000.0, 1.0, 300.0, licence_end_t_days=t_last + 400.3),
        "horizon": FieldPlan(1000.0, 1.0, 300.0),
    }
    seen = set()
    for reason, plan in cases.items():
        prof, _ = _run(field, plan, weak if reason == "economic limit" else strong)
        assert prof.stop_reason == reason
        seen.add(reason)
        if reason == "economic limit":
            # The last month produced above the limit; the next would not have (the potential at
            # the last pressure is within one month's decline of the limit).
            assert prof.rate_mscf_per_day[-1] >= 3000.0
            assert 0.9 * 0.03 * (prof.pressure_psia[-1] ** 2 - 800**2) ** 0.8 < 3000.0 * 1.02
        if reason == "licence end":
            assert prof.end_t_days == pytest.approx(t_last + 400.3)
            # The last month is cut at the licence end: its gas is the rate times the days produced.
            assert prof.gas_bscf[-1] * 1e6 == pytest.approx(
                10000.0 * (t_last + 400.3 - prof.month_end_t_days[-2])
            )
        if reason == "horizon":
            assert prof.gas_bscf.size == 600
    assert seen | {"watered out"} == set(STOP_REASONS)  # watered out: test_aquifer_forecast.py


def test_compression_and_a_planned_well_add_gas(field):
    t_last = float(field.prepared.production_end_t_days[-1])
    base = FieldPlan(10000.0, 0.95, 1500.0, economic_limit_mscf_per_day=2000.0)
    more = FieldPlan(
        10000.0,
        0.95,
        1500.0,
        compression_start_t_days=t_last + 5 * 365.25,
        compression_min_flowing_bhp_psia=600.0,
        economic_limit_mscf_per_day=2000.0,
        planned_wells=(PlannedWell("P-1", t_last + 365.25, None, 0.02, 0.8),),
    )
    weak = [_well(0.03, 0.8)]
    a, _ = _run(field, base, weak)
    s_more = _run(field, more, weak)[1]
    b = _run(field, more, [*weak, (Deliverability("P-1", 0.02, 0.8, "planned", 0), t_last + 365.25)])[0]
    assert b.eur_bscf > a.eur_bscf + 1.0
    assert s_more.pwf_psia(t_last + 6 * 365.25) == 600.0 and s_more.pwf_psia(t_last) == 1500.0
    # After compression starts, the pressure falls below the old minimum flowing pressure.
    assert b.pressure_psia.min() < 1500.0 <= a.pressure_psia.min()


def test_yearly_sums_and_remaining_from_a_date(field):
    from server.engine.forecast.yearly import remaining_from, yearly_profile

    t_last = float(field.prepared.production_end_t_days[-1])
    plan = FieldPlan(10000.0, 1.0, 300.0, licence_end_t_days=t_last + 1000.0)
    prof, s = _run(field, plan, [_well(1e3, 1.0)])
    y = yearly_profile(prof, t_last)
    # Constant 10 MMscf/d: each year's gas is the rate times its forecast days (hand count).
    assert y.gas_bscf.sum() == pytest.approx(prof.gas_bscf.sum(), rel=1e-12)
    assert y.rate_mscf_per_day[1:-1] == pytest.approx(10000.0)
    assert y.gas_bscf[1] == pytest.approx(0.01 * (365 + (y.year[1] % 4 == 0)), rel=1e-12)
    assert y.cumulative_bscf[-1] == pytest.approx(prof.eur_bscf)
    assert np.all(np.diff(y.year) == 1)
    # Remaining from a date: the rate times the days left to the licence end.
    assert remaining_from(prof, t_last + 400.0, t_last) == pytest.approx(0.01 * 600.0, rel=1e-9)
    assert remaining_from(prof, t_last - 10.0, t_last) == pytest.approx(prof.remaining_bscf)
    assert remaining_from(prof, t_last + 5000.0, t_last) == 0.0


def test_check_value_35_tank_forecast():
    # Domain reference §5.2 / check value 35 (computed there with explicit monthly steps):
    # γ 0.65, 200 °F, p_i 5000 psia, G 100 Bscf volumetric from Gp = 0, 4 wells with C 0.03 and
    # n 0.8, p_wf 800 psia, plateau 40 MMscf/d, economic limit 2 MMscf/d: plateau ends 2.50 yr,
    # economic limit at 13.50 yr with Gp 80.47 Bscf and p̄ 909 psia; tolerance 1 %, scheme-dependent.
    fresh = synthetic_field(sigma_psia=0.0, years=1)  # the same fluid, temperature and p_i
    table = field_pz_table(fresh.inputs, fresh.prepared)
    stepper = LineStepper(table, fresh.prepared.initial_pz_psia, 100e9, 0.0)
    t0 = 18262.0  # 2020-01-01
    wells = tuple((Deliverability(f"W{i}", 0.03, 0.8, "check 35", 0), -math.inf) for i in range(4))
    plan = FieldPlan(40000.0, 1.0, 800.0, economic_limit_mscf_per_day=2000.0)
    s = CaseSettings(plan, t0, month_ends_t_days(t0), 0.0, 1.0, None, 14.7, 800.0, wells)
    prof = run_case("best", 100.0, stepper, s)
    assert prof.stop_reason == "economic limit"
    assert prof.eur_bscf == pytest.approx(80.47, rel=0.01)
    assert (prof.end_t_days - t0) / 365.25 == pytest.approx(13.50, rel=0.01)
    assert prof.pressure_psia[-1] == pytest.approx(909.0, rel=0.01)
    # The first month below the plateau ends 2.50 yr in the explicit scheme, which reads the
    # start-of-month pressure; the mid-point pressure used here ends the plateau one month earlier.
    k = int(np.argmax(prof.rate_mscf_per_day < 40000.0 * (1 - 1e-9)))
    assert prof.month_end_t_days[k] - t0 == pytest.approx(2.50 * 365.25, abs=35.0)


def test_rock_and_water_expansion_stepper_solves_the_ramagost_farshad_balance(field):
    # (p/z)[1 − c_e (p_i − p)] = a (1 − Gp/G) (Ramagost & Farshad 1981; domain reference §2.4),
    # checked with z from DAK evaluated directly at the stepper's pressures.
    pr = field.prepared
    ce, pi = 1.5e-5, 5000.0
    table = field_pz_table(field.inputs, pr)
    st = LineStepper(table, pr.initial_pz_psia, G_BSCF * 1e9, pr.cumulative_gas_bscf * 1e9, ce, pi)
    plain = LineStepper(table, pr.initial_pz_psia, G_BSCF * 1e9, pr.cumulative_gas_bscf * 1e9)
    for _ in range(40):
        st.commit(1.5e9, 30.0)
        plain.commit(1.5e9, 30.0)
        gp = st.gp_scf / 1e9
        lhs = float(_pz(st.p_psia)) * (1.0 - ce * (pi - st.p_psia))
        assert lhs == pytest.approx(pr.initial_pz_psia * (1.0 - gp / G_BSCF), rel=2e-4)
    # Rock and water expansion hold the pressure up against the plain tank of the same G.
    assert st.p_psia > plain.p_psia + 50.0
