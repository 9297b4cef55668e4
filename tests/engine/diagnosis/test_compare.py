"""Model comparison: information criteria, F-tests, residual structure and the ranked table."""

import dataclasses
import math

import numpy as np
import pytest

from server.engine.compartments.multitank_fit import fit_two_tank
from server.engine.diagnosis.compare import (
    compare_models,
    information_criteria,
    lag1_autocorrelation,
    nested_f_test,
    support_label,
)
from server.engine.inputs import AnalysisChoices
from server.engine.modelfit import ModelFit
from server.engine.prepare.points import prepare
from server.engine.tank.overpressure import single_tank_modelfit
from tests.engine.cases import cv27_quarterly


def _fit(name, rss, n=33, k=2, giip=100.0, residuals=None):
    r = np.zeros(n) if residuals is None else np.asarray(residuals, float)
    return ModelFit(name, name.replace("_", " "), k, n, rss, r, np.zeros(n), giip, giip - 5, giip + 5)


def test_information_criteria_reproduce_the_published_two_tank_numbers():
    # Domain reference §7.5 (check value 27): n = 33; single tank RSS 19,715 (k = 2) ->
    # AIC 214.96, BIC 217.95; two tanks RSS 8,712 (k = 4) -> AIC 192.01, BIC 197.99.
    # Printed to 2 decimals from RSS printed to 5 figures -> tolerance 0.01.
    aic, aicc, bic = information_criteria(19715.0, 33, 2)
    assert (aic, bic) == (pytest.approx(214.96, abs=0.01), pytest.approx(217.95, abs=0.01))
    assert aicc == pytest.approx(aic + 2 * 2 * 3 / 30, abs=1e-12)
    aic, _, bic = information_criteria(8712.0, 33, 4)
    assert (aic, bic) == (pytest.approx(192.01, abs=0.01), pytest.approx(197.99, abs=0.01))


def test_nested_f_test_reproduces_the_published_two_tank_numbers():
    # §7.5: F = 18.31, p = 7.2e-6 on (2, 29) degrees of freedom.
    ft = nested_f_test(_fit("single_tank", 19715.0), _fit("two_tank", 8712.0, k=4))
    assert (ft.df_num, ft.df_den) == (2, 29)
    assert ft.f_statistic == pytest.approx(18.31, abs=0.01)
    assert ft.p_value == pytest.approx(7.2e-6, rel=0.02)


def test_lag1_autocorrelation_by_hand():
    # e = [1, -1, 1, -1]: mean 0, sum of lagged products -3, sum of squares 4 -> -0.75.
    assert lag1_autocorrelation([1.0, -1.0, 1.0, -1.0]) == pytest.approx(-0.75)
    assert lag1_autocorrelation([1.0, 2.0]) is None


@pytest.mark.parametrize(
    ("delta", "label"),
    [
        (0.0, "best"),
        (1.99, "comparable"),
        (2.0, "some support"),
        (10.0, "some support"),
        (10.01, "little support"),
    ],
)
def test_support_labels_follow_the_stated_thresholds(delta, label):
    assert support_label(delta) == label


def test_ranked_table_weights_and_comparable_models_are_reported_together():
    n = 30
    base = _fit("single_tank", 3000.0, n=n, giip=90.0)
    close = _fit("tank_ce", 2700.0, n=n, k=3, giip=80.0)  # ΔAICc small: comparable
    poor = _fit("aquifer_pot", 6000.0, n=n, k=3, giip=120.0)
    other = _fit("two_tank", 3000.0, n=n - 1, k=4)  # different observations: left out
    cmp = compare_models([base, close, poor, other], np.arange(n, dtype=float))
    assert [r.name for r in cmp.rows] == ["tank_ce", "single_tank", "aquifer_pot"]
    assert sum(r.akaike_weight for r in cmp.rows) == pytest.approx(1.0)
    assert cmp.rows[0].delta_aicc == 0.0 and cmp.rows[0].support == "best"
    assert cmp.comparable == ("tank_ce", "single_tank")
    assert cmp.row("aquifer_pot").support == "little support"
    assert cmp.left_out[0][0] == "two_tank"
    assert (
        "do not single out one model" in cmp.statement and "80.0" in cmp.statement and "90.0" in cmp.statement
    )
    # the range to report is the span of the comparable models' intervals (75-95 here)
    assert (cmp.comparable_giip_low_bscf, cmp.comparable_giip_high_bscf) == (75.0, 95.0)
    assert "GIIP 75.0-95.0 Bscf across these models" in cmp.statement
    # F-tests only for the nested pairs present
    assert {(f.simpler, f.larger) for f in cmp.f_tests} == {
        ("single_tank", "tank_ce"),
        ("single_tank", "aquifer_pot"),
    }
    poor_f = next(f for f in cmp.f_tests if f.larger == "aquifer_pot")
    assert poor_f.f_statistic == 0.0 and poor_f.p_value == 1.0  # a worse larger fit gains nothing


def test_check_value_27_two_tanks_preferred_by_aic_bic_and_f():
    # Check value 27: with sigma = 15 psia noise (33 points, seed 12345) the two-tank model
    # is preferred by AIC, BIC and the F-test.
    inputs = cv27_quarterly(noise_psia=15.0)
    prepared = prepare(inputs)
    single = single_tank_modelfit(prepared, AnalysisChoices())
    two = fit_two_tank(inputs, prepared)  # pseudo-pressure with LGE viscosity, as in §7.5
    _, gp, _, _ = prepared.arrays()
    cmp = compare_models([single, two], gp)
    assert cmp.preferred == "two_tank" and cmp.comparable == ("two_tank",)
    s, t = cmp.row("single_tank"), cmp.row("two_tank")
    assert t.aic < s.aic and t.bic < s.bic and s.delta_aicc > 10
    (ft,) = cmp.f_tests
    assert ft.p_value < 1e-3
    assert s.giip_bscf == pytest.approx(91.64, abs=2.0)  # noisy single tank near the 8-year apparent G
    assert math.isclose(sum(r.akaike_weight for r in cmp.rows), 1.0)


def test_runs_test_sees_the_concave_up_bend_of_a_compartmented_field():
    # Noise-free §7.5 history: a straight line through a concave-up p/z curve leaves
    # residuals +, -, + in three long runs; the runs test must call that structured.
    prepared = prepare(cv27_quarterly())
    single = single_tank_modelfit(prepared, AnalysisChoices())
    _, gp, _, _ = prepared.arrays()
    row = compare_models([single], gp).row("single_tank")
    assert row.runs.n_runs <= 4 and row.runs.p_value < 1e-4
    assert row.lag1_autocorrelation > 0.5


def test_an_unbounded_comparable_interval_leaves_no_range():
    n = 30
    bounded = _fit("single_tank", 3000.0, n=n, giip=90.0)
    open_ended = dataclasses.replace(_fit("tank_ce", 2950.0, n=n, k=3, giip=80.0), giip_high_bscf=None)
    cmp = compare_models([bounded, open_ended], np.arange(n, dtype=float))
    assert len(cmp.comparable) == 2
    assert (cmp.comparable_giip_low_bscf, cmp.comparable_giip_high_bscf) == (None, None)
    assert "no bounded GIIP range across these models" in cmp.statement
