"""Produced water in the forecast: the water-gas ratio rule of engine/forecast/water.py.

Sources: scipy.stats.linregress (an independent least-squares line and its two-sided t test)
for the trend and its significance; the integral of a straight line, by hand, for each month's
water; histories built with a known linear WGR against cumulative gas, a flat one, none.
Testing a ratio trend for significance at 5 % is common practice, the window and minimum
count are this project's choices.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy import stats
from scipy.integrate import quad

from server.engine.forecast.build import forecast_field
from server.engine.forecast.water import monthly_water_stb, water_rule
from server.engine.forecast.yearly import yearly_profile
from server.engine.headline.types import Basis
from server.engine.plan import FieldPlan
from tests.engine.aquifer_cases import synthetic_field

MONTHS = 60
GAS_MSCF = 300_000.0  # a month's separator gas


def _history(wgr_of_g, noise=None):
    """(ends, gas, water) of monthly periods with water = WGR(G_mid) × gas [stb]."""
    ends = 18262.0 + 30.4375 * np.arange(1, MONTHS + 1)
    gas = np.full(MONTHS, GAS_MSCF)
    g_mid = (np.cumsum(gas) - 0.5 * gas) / 1e6
    wgr = wgr_of_g(g_mid)
    if noise is not None:
        wgr = wgr * (1.0 + noise)
    return ends, gas, wgr * gas / 1e3, g_mid, wgr


def test_a_known_linear_trend_is_recovered_and_carried_forward():
    a, b = 5.0, 0.5  # WGR = 5 + 0.5 G_p [stb/MMscf, G_p in Bscf]
    ends, gas, water, g_mid, _ = _history(lambda g: a + b * g)
    rule = water_rule(ends, gas, water)
    assert rule.method == "trend" and rule.n_points == 24
    assert rule.slope_stb_per_mmscf_per_bscf == pytest.approx(b, rel=1e-9)
    g_end = gas.sum() / 1e6
    assert rule.wgr_stb_per_mmscf == pytest.approx(a + b * g_end, rel=1e-9)
    # Forecast months: water = ∫ (a + b G) dG over each month's gas, by hand.
    cum = g_end + 0.25 * np.arange(1, 13)
    w = monthly_water_stb(rule, cum, np.full(12, 0.25), g_end)
    g0 = cum - 0.25
    assert w == pytest.approx(1e3 * (a * 0.25 + 0.5 * b * (cum**2 - g0**2)), rel=1e-9)


def test_a_noisy_trend_against_linregress():
    rng = np.random.default_rng(7)
    ends, gas, water, g_mid, wgr = _history(lambda g: 5.0 + 0.5 * g, rng.normal(0.0, 0.03, MONTHS))
    rule = water_rule(ends, gas, water)
    ref = stats.linregress(g_mid[-24:], wgr[-24:])
    assert rule.method == "trend"
    assert rule.slope_stb_per_mmscf_per_bscf == pytest.approx(ref.slope, rel=1e-9)
    assert rule.p_value == pytest.approx(ref.pvalue, rel=1e-6) and ref.pvalue < 0.05
    assert rule.slope_stb_per_mmscf_per_bscf == pytest.approx(0.5, rel=0.25)


def test_a_flat_history_holds_the_recent_ratio():
    rng = np.random.default_rng(3)
    ends, gas, water, g_mid, wgr = _history(lambda g: np.full_like(g, 8.0), rng.normal(0.0, 0.03, MONTHS))
    rule = water_rule(ends, gas, water)
    ref = stats.linregress(g_mid[-24:], wgr[-24:])
    assert ref.pvalue > 0.05
    assert rule.method == "constant" and rule.p_value == pytest.approx(ref.pvalue, rel=1e-6)
    # The last 12 months' ratio: Σ water / Σ gas (the periods are 30.44 days, 12 of them a year).
    assert rule.wgr_stb_per_mmscf == pytest.approx(water[-12:].sum() / gas[-12:].sum() * 1e3, rel=2e-3)
    assert rule.wgr_stb_per_mmscf == pytest.approx(8.0, rel=0.02)
    w = monthly_water_stb(rule, [20.0, 20.3], [0.3, 0.3], 19.7)
    assert w == pytest.approx([0.3e3 * rule.wgr_stb_per_mmscf] * 2)
    # An exactly flat history has a zero slope with no scatter: constant, not a trend.
    ends, gas, water, _, _ = _history(lambda g: np.full_like(g, 8.0))
    assert water_rule(ends, gas, water).method == "constant"


def test_no_water_and_too_few_months():
    ends, gas, water, _, _ = _history(lambda g: 5.0 + 0.5 * g)
    assert water_rule(ends, gas, None).method == "none"
    assert water_rule(ends, gas, np.zeros(MONTHS)).method == "none"
    assert monthly_water_stb(water_rule(ends, gas, None), [1.0], [0.1], 0.9) is None
    few = water_rule(ends[-4:], gas[-4:], water[-4:])
    assert few.method == "constant" and few.p_value is None and "too few" in few.sentence


def test_a_falling_trend_stops_at_zero():
    ends, gas, water, _, _ = _history(lambda g: 20.0 - 0.9 * g)  # 20 - 0.9 × 18 = 3.8 at the end
    rule = water_rule(ends, gas, water)
    assert rule.method == "trend" and rule.slope_stb_per_mmscf_per_bscf == pytest.approx(-0.9)
    g_end = gas.sum() / 1e6
    cum = g_end + np.array([2.0, 4.0, 6.0, 8.0])  # the line crosses zero at G = 22.2 Bscf
    w = monthly_water_stb(rule, cum, np.full(4, 2.0), g_end)
    ref = [1e3 * quad(lambda g: max(20.0 - 0.9 * g, 0.0), c - 2.0, c, points=[200 / 9])[0] for c in cum]
    assert w == pytest.approx(ref, rel=1e-9, abs=1e-9)
    assert w[-1] == 0.0


def test_the_forecast_carries_water_by_month_and_year():
    field = synthetic_field(sigma_psia=0.0, years=5)  # 10 MMscf/d for 5 years
    inputs = field.inputs
    gas = np.asarray(inputs.production_gas_mscf, float)
    g_mid = (np.cumsum(gas) - 0.5 * gas) / 1e6
    water = (2.0 + 0.4 * g_mid) * gas / 1e3
    inputs = dataclasses.replace(inputs, production_water_stb=water, plan=FieldPlan(10000.0, 1.0, 800.0))
    t = "Straight p/z line"
    basis = Basis(
        "single_tank", t, "automatic", "test", "single_tank", t, "test", 100.0, 90.0, 110.0,
        None, None, None, None, None, (), "test",
    )  # fmt: skip
    params = {"initial_pz_psia": field.prepared.initial_pz_psia, "giip_bscf": 100.0}
    fc = forecast_field(inputs, field.prepared, basis, params)
    assert fc.water is not None and fc.water.method == "trend"
    assert fc.water.slope_stb_per_mmscf_per_bscf == pytest.approx(0.4, rel=1e-6)
    assert any(n.startswith("Water follows the trend") for n in fc.notes)
    best = fc.case("best")
    g1 = best.cumulative_bscf
    g0 = g1 - best.gas_bscf
    assert best.water_stb == pytest.approx(1e3 * (2.0 * (g1 - g0) + 0.2 * (g1**2 - g0**2)), rel=1e-6)
    y = yearly_profile(best, float(field.prepared.production_end_t_days[-1]))
    assert y.water_stb.sum() == pytest.approx(best.water_stb.sum(), rel=1e-12)
    # Without a water history: no water column.
    dry = forecast_field(
        dataclasses.replace(inputs, production_water_stb=None), field.prepared, basis, params
    )
    assert dry.water.method == "none" and dry.case("best").water_stb is None
