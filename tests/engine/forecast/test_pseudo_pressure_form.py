"""The back-pressure equation in its pseudo-pressure form q = C [m(p̄) − m(p_wf)]^n.

Sources: the equation itself (Rawlins & Schellhardt 1936 with m(p) of Al-Hussainy, Ramey &
Crawford 1966, from memory) for test points built from a known C and n; the low-pressure
limit Δm = Δ(p²)/(μ z)₀ (derived in engine/forecast/deliverability.py) for the relation
between the two forms' C; for the forecast, the direction that follows from m(p) levelling off
at high pressure, checked on check value 35's tank (domain reference §5.2).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from server.engine.errors import InputRangeError
from server.engine.forecast.build import check_plan, field_pseudo_pressure, forecast_field
from server.engine.forecast.deliverability import calibrate, fit_back_pressure, potential_mscf_per_day
from server.engine.forecast.profile import CaseSettings, month_ends_t_days, run_case
from server.engine.forecast.steppers import LineStepper, field_pz_table
from server.engine.headline.types import Basis
from server.engine.plan import FieldPlan, WellTest
from server.engine.pvt.gas import gas_properties
from tests.engine.aquifer_cases import FLUID, T_DEGF, synthetic_field


@pytest.fixture(scope="module")
def field():
    return synthetic_field(sigma_psia=0.0, years=1)  # γ 0.65, 200 °F, p_i 5000 psia


@pytest.fixture(scope="module")
def m_of_p(field):
    return field_pseudo_pressure(field.inputs, field.prepared, 8000.0)


def _tests_from_m(m_of_p, c, n, p_static, pwfs, t=19000.0):
    return [
        WellTest("M-1", t + i, c * (m_of_p(p_static) - m_of_p(pwf)) ** n, pwf, p_static)
        for i, pwf in enumerate(pwfs)
    ]


def test_a_test_built_in_m_of_p_gives_back_its_c_and_n(m_of_p):
    tests = _tests_from_m(m_of_p, 2.0e-4, 0.82, 4800.0, (4500.0, 4000.0, 3400.0, 2600.0))
    d, note = fit_back_pressure(tests, pseudo_pressure=m_of_p)
    assert note is None and d.form == "pseudo_pressure" and "m(p)" in d.source
    assert d.n == pytest.approx(0.82, abs=1e-9)
    assert d.c_mscf_per_day_psi2n == pytest.approx(2.0e-4, rel=1e-8)
    assert d.rms_log_rate == pytest.approx(0.0, abs=1e-9)
    # The same points read in p² at this high pressure give a different exponent: m is nearly
    # linear in p here, Δm ∝ p̄ − p_wf, while Δ(p²) = (p̄ − p_wf)(p̄ + p_wf) grows more slowly as
    # p_wf falls, so the p² fit's n is larger (and its points scatter about the line).
    p2, _ = fit_back_pressure(tests)
    assert p2.form == "pressure_squared" and p2.n > 0.82 + 0.03 and p2.rms_log_rate > 1e-3
    # The potential of an m-form well uses m, a p²-form well p², side by side.
    both = [(d.c_mscf_per_day_psi2n, d.n, d.form), (p2.c_mscf_per_day_psi2n, p2.n)]
    q = potential_mscf_per_day(both, 4800.0, 3400.0, m_of_p)
    assert q == pytest.approx(
        tests[2].rate_mscf_per_day + p2.c_mscf_per_day_psi2n * (4800.0**2 - 3400.0**2) ** p2.n
    )


def test_at_low_pressure_the_two_forms_agree_up_to_mu_z(m_of_p):
    # Derivation: with μ z ≈ (μ z)₀ over the drawdown, Δm = Δ(p²)/(μ z)₀, so
    # C_m Δm^n = [C_m / (μ z)₀^n] Δ(p²)^n: the p² form's C is C_m/(μ z)₀^n with the same n.
    c_m, n = 5.0e-3, 0.75
    tests = _tests_from_m(m_of_p, c_m, n, 400.0, (350.0, 300.0, 250.0, 150.0))
    d, _ = fit_back_pressure(tests)
    g = gas_properties(np.array([300.0]), T_DEGF, FLUID)
    mu_z0 = float(g.viscosity_cp[0] * g.z_factor[0])
    # μ z varies by 0.2 % over 150-400 psia: n to 0.005, C to 1 % (C carries (μ z)^-n and ln Δ(p²) ~ 11).
    assert d.n == pytest.approx(n, abs=5e-3)
    assert d.c_mscf_per_day_psi2n == pytest.approx(c_m / mu_z0**n, rel=0.01)
    for t in tests:
        assert d.c_mscf_per_day_psi2n * (t.static_pressure_psia**2 - t.flowing_bhp_psia**2) ** d.n == (
            pytest.approx(t.rate_mscf_per_day, rel=1e-3)
        )


def test_calibration_in_m_of_p(m_of_p):
    d = calibrate("B-2", 5000.0, 2500.0, 1000.0, 0.85, "recent", m_of_p)
    assert d.form == "pseudo_pressure"
    assert d.c_mscf_per_day_psi2n * (m_of_p(2500.0) - m_of_p(1000.0)) ** 0.85 == pytest.approx(5000.0)
    with pytest.raises(InputRangeError, match="not above the minimum flowing pressure"):
        calibrate("B-2", 5000.0, 900.0, 1000.0, 0.85, "recent", m_of_p)


def _run(field, m_of_p, form):
    # Check value 35's tank: p_i 5000 psia, G 100 Bscf, four wells calibrated to 12 MMscf/d each
    # at the initial pressure against 800 psia, n 0.8, plateau 40 MMscf/d, limit 2 MMscf/d.
    table = field_pz_table(field.inputs, field.prepared)
    stepper = LineStepper(table, field.prepared.initial_pz_psia, 100e9, 0.0)
    m = m_of_p if form == "pseudo_pressure" else None
    d = calibrate("W", 12000.0, 5000.0, 800.0, 0.8, "calibrated", m)
    t0 = 18262.0
    plan = FieldPlan(40000.0, 1.0, 800.0, economic_limit_mscf_per_day=2000.0, deliverability_form=form)
    s = CaseSettings(plan, t0, month_ends_t_days(t0), 0.0, 1.0, None, 14.7, 800.0, ((d, -math.inf),) * 4, m)
    return run_case("best", 100.0, stepper, s)


def test_on_a_high_pressure_field_the_m_form_delivers_more_as_pressure_falls(field, m_of_p):
    # Both forms deliver 48 MMscf/d at 5000 psia. As p̄ falls, Δm falls less than Δ(p²) (p/(μ z)
    # levels off at high pressure), so the m form keeps the plateau longer, produces more by every
    # date and reaches the economic limit at a lower pressure, with a larger EUR: docs/forecast.md.
    p2 = _run(field, m_of_p, "pressure_squared")
    pm = _run(field, m_of_p, "pseudo_pressure")
    assert p2.rate_mscf_per_day[0] == pytest.approx(40000.0) == pm.rate_mscf_per_day[0]

    def plateau_months(p):
        return int(np.argmax(p.rate_mscf_per_day < 40000.0 * (1 - 1e-9)))

    assert plateau_months(pm) > plateau_months(p2) + 1
    k = min(p2.cumulative_bscf.size, pm.cumulative_bscf.size)
    assert np.all(pm.cumulative_bscf[:k] >= p2.cumulative_bscf[:k] - 1e-9)
    assert pm.cumulative_bscf[k - 1] > p2.cumulative_bscf[k - 1] + 1.0
    assert p2.stop_reason == pm.stop_reason == "economic limit"
    assert pm.pressure_psia[-1] < p2.pressure_psia[-1] - 30.0
    assert pm.eur_bscf > p2.eur_bscf + 0.5


def test_the_plan_form_changes_the_field_forecast(field):
    inputs = dataclasses.replace(field.inputs, plan=FieldPlan(plateau_rate_mscf_per_day=9000.0))
    params = {"initial_pz_psia": field.prepared.initial_pz_psia, "giip_bscf": 100.0}
    t = "Straight p/z line"
    basis = Basis(
        "single_tank", t, "automatic", "test", "single_tank", t, "test", 100.0, 90.0, 110.0,
        None, None, None, None, None, (), "test",
    )  # fmt: skip
    a = forecast_field(inputs, field.prepared, basis, params)
    pm = dataclasses.replace(inputs.plan, deliverability_form="pseudo_pressure")
    b = forecast_field(dataclasses.replace(inputs, plan=pm), field.prepared, basis, params)
    assert a.deliverability_form == "pressure_squared" and b.deliverability_form == "pseudo_pressure"
    assert {d.form for d in b.deliverability} == {"pseudo_pressure"}
    assert any("pseudo-pressure form" in n for n in b.notes)
    assert b.case("best").eur_bscf != pytest.approx(a.case("best").eur_bscf, rel=1e-4)
    with pytest.raises(InputRangeError, match="unknown deliverability form"):
        check_plan(FieldPlan(deliverability_form="pressure"))
