"""Shared statistics helpers (server/engine/stats.py, outliers.py) against independent computations:
numpy's polyfit, brute-force refits without each point, grid searches, exact enumeration.
"""

import itertools

import numpy as np
import pytest
from scipy import stats as st

from server.engine.outliers import SubsetFit, externally_studentized, robust_outlier_screen
from server.engine.stats import (
    fieller_ratio_interval,
    p90_p50_p10,
    percentiles_with_inf,
    ratio_delta_se,
    runs_test,
    t_multiplier,
    weighted_least_squares,
)

RNG = np.random.default_rng(7)
X = np.linspace(0.0, 30.0, 12)
W = np.array([1, 1, 0.5, 1, 0.25, 1, 1, 0.5, 1, 1, 0.25, 1.0])
Y = 4000.0 - 40.0 * X + RNG.normal(0.0, 15.0, X.size) / np.sqrt(W)
DESIGN = np.column_stack([np.ones_like(X), X])


def test_t_multiplier_matches_the_student_table():
    # Student's t table (any statistics text): t_0.975 with 10 dof = 2.228, with 1 dof = 12.706.
    assert t_multiplier(0.95, 10) == pytest.approx(2.228, abs=5e-4)
    assert t_multiplier(0.95, 1) == pytest.approx(12.706, abs=5e-4)
    with pytest.raises(ValueError):
        t_multiplier(1.2, 5)
    with pytest.raises(ValueError):
        t_multiplier(0.95, 0)


def test_weighted_least_squares_matches_numpy_polyfit():
    fit = weighted_least_squares(DESIGN, Y, W)
    # numpy.polyfit weights multiply residuals, so pass sqrt(w); cov="unscaled" is (X'WX)^-1.
    coef, cov_unscaled = np.polyfit(X, Y, 1, w=np.sqrt(W), cov="unscaled")
    assert fit.coef[::-1] == pytest.approx(coef, rel=1e-12)
    s2 = np.sum(W * (Y - np.polyval(coef, X)) ** 2) / (X.size - 2)
    assert fit.cov[::-1, ::-1] == pytest.approx(s2 * cov_unscaled, rel=1e-10)
    assert fit.dof == 10 and fit.sigma == pytest.approx(np.sqrt(s2), rel=1e-12)


def test_offset_is_a_known_part_of_the_model():
    fit = weighted_least_squares(X[:, None], Y, W, offset=np.full(X.size, 4000.0))
    slope = np.sum(W * X * (Y - 4000.0)) / np.sum(W * X**2)
    assert fit.coef[0] == pytest.approx(slope, rel=1e-12)
    assert fit.fitted == pytest.approx(4000.0 + slope * X, rel=1e-12)


def test_bad_regression_inputs_raise():
    with pytest.raises(ValueError, match="collinear"):
        weighted_least_squares(np.column_stack([X, 2 * X]), Y)
    with pytest.raises(ValueError, match="finite"):
        weighted_least_squares(DESIGN, np.where(X > 10, np.nan, Y))
    with pytest.raises(ValueError, match="weights"):
        weighted_least_squares(DESIGN, Y, -W)


def test_externally_studentized_residual_equals_a_refit_without_the_point():
    fit = weighted_least_squares(DESIGN, Y, W)
    t, deleted = externally_studentized(fit)
    for i in range(X.size):
        keep = np.arange(X.size) != i
        other = weighted_least_squares(DESIGN[keep], Y[keep], W[keep])
        pred = DESIGN[i] @ other.coef
        # prediction variance of a new observation of weight w_i from the other points' fit
        var = other.sigma**2 / W[i] + DESIGN[i] @ other.cov @ DESIGN[i]
        assert deleted[i] == pytest.approx(Y[i] - pred, rel=1e-9)
        assert t[i] == pytest.approx((Y[i] - pred) / np.sqrt(var), rel=1e-9)


def _screen_of(y, **kw):
    def fit_subset(mask):
        lin = weighted_least_squares(DESIGN[mask], y[mask], W[mask])
        return SubsetFit(DESIGN, y - DESIGN @ lin.coef, W)

    return robust_outlier_screen(fit_subset, y.size, 2, **kw)


Y_BAD = Y.copy()
Y_BAD[4] -= 400.0  # a gross error on a poor-quality (w = 0.25) survey: 400/30 = 13 sigma


def test_outlier_screen_sets_aside_a_gross_error_with_its_numbers():
    screen = _screen_of(Y_BAD)
    assert [o.index for o in screen.outliers] == [4]
    o = screen.outliers[0]
    # Against the line through the other 11 points: a brute-force refit and its prediction error.
    keep = np.arange(12) != 4
    other = weighted_least_squares(DESIGN[keep], Y_BAD[keep], W[keep])
    resid = Y_BAD[4] - DESIGN[4] @ other.coef
    se = np.sqrt(other.sigma**2 / W[4] + DESIGN[4] @ other.cov @ DESIGN[4])
    assert o.residual == pytest.approx(resid, rel=1e-9)
    assert o.studentized == pytest.approx(resid / se, rel=1e-9)
    # The limit: two-sided Bonferroni t quantile over 12 tests, 11 - 2 dof (Cook & Weisberg 1982).
    assert o.threshold == pytest.approx(st.t.ppf(1 - 0.05 / (2 * 12), 11 - 2), rel=1e-12)
    assert screen.keep.sum() == 11 and screen.stopped_reason is None


def test_two_gross_errors_do_not_mask_each_other():
    # One-at-a-time deletion misses both here (each inflates the scatter that hides the other).
    y2 = Y_BAD.copy()
    y2[9] += 250.0
    fit = weighted_least_squares(DESIGN, y2, W)
    t_all, _ = externally_studentized(fit)
    assert np.max(np.abs(t_all)) < st.t.ppf(1 - 0.05 / 24, 9)
    screen = _screen_of(y2)
    assert sorted(o.index for o in screen.outliers) == [4, 9]


def test_outlier_screen_keeps_clean_data_and_limits_itself():
    clean = _screen_of(Y)
    assert clean.outliers == () and clean.keep.all()
    capped = _screen_of(Y_BAD, max_fraction=0.05)
    assert (
        capped.outliers == ()
        and capped.keep.all()
        and "more than the rule may set aside" in (capped.stopped_reason)
    )
    guarded = _screen_of(Y_BAD, protected=np.arange(12) == 4)
    assert guarded.outliers == ()
    few = robust_outlier_screen(lambda m: None, 4, 2)
    assert few.keep.all() and "too few points" in few.stopped_reason


def test_outlier_screen_false_alarm_rate_is_near_its_level():
    # Normal scatter only: the chance of setting aside any point should be about alpha = 5 %.
    rng = np.random.default_rng(11)
    noisy = 4000.0 - 40.0 * X + rng.normal(0, 15.0, (400, 12)) / np.sqrt(W)
    alarms = sum(bool(_screen_of(y).outliers) for y in noisy)
    assert alarms / 400 < 0.09  # binomial sd at 5 % and 400 draws is 1.1 %


def test_fieller_interval_is_the_set_a_grid_search_finds():
    num, den, vn, vd, cnd, tq = 4000.0, 40.0, 90.0**2, 4.0**2, 0.6 * 90 * 4, 2.2
    ci = fieller_ratio_interval(num, den, vn, vd, cnd, tq, 0.95)
    rho = np.linspace(50, 200, 300001)
    inside = (num - rho * den) ** 2 <= tq**2 * (vn - 2 * rho * cnd + rho**2 * vd)
    assert ci.low == pytest.approx(rho[inside].min(), abs=1e-3)
    assert ci.high == pytest.approx(rho[inside].max(), abs=1e-3)
    # not bounded when the denominator is not significantly different from zero
    assert fieller_ratio_interval(num, 5.0, vn, 4.0**2, 0.0, tq, 0.95) is None


def test_delta_se_matches_a_numerical_gradient():
    num, den = 4000.0, -40.0
    cov = np.array([[90.0**2, -0.5 * 90 * 4], [-0.5 * 90 * 4, 4.0**2]])
    h = 1e-6
    g = np.array(
        [((num + h) / den - (num - h) / den) / (2 * h), (num / (den + h) - num / (den - h)) / (2 * h)]
    )
    se = ratio_delta_se(num, den, cov[0, 0], cov[1, 1], cov[0, 1])
    assert se == pytest.approx(np.sqrt(g @ cov @ g), rel=1e-6)


def test_percentiles_follow_the_reserves_convention_and_handle_unbounded_samples():
    s = np.arange(1.0, 101.0)
    p = p90_p50_p10(s, "test")
    # P90 is exceeded with 90 % probability: the 10th percentile (numpy's default interpolation).
    assert (p.p90, p.p50, p.p10) == pytest.approx(tuple(np.percentile(s, [10, 50, 90])))
    assert np.mean(s >= p.p90) == pytest.approx(0.90, abs=0.01)
    with_inf = np.concatenate([s[:95], np.full(5, np.inf)])
    q = percentiles_with_inf(with_inf, [0.1, 0.5, 0.9, 0.97])
    assert np.isfinite(q[:3]).all() and np.isinf(q[3])
    big = np.concatenate([s[:95], np.full(5, 1e9)])  # where no infinite sample is touched ...
    assert q[:3] == pytest.approx(np.quantile(big, [0.1, 0.5, 0.9]))  # ... it is numpy's percentile


def test_runs_test_moments_match_exact_enumeration():
    # Exact mean and variance of the number of runs over all arrangements of 5 + and 4 -.
    n1, n2 = 5, 4
    runs = []
    for pos in itertools.combinations(range(n1 + n2), n1):
        s = np.full(n1 + n2, -1.0)
        s[list(pos)] = 1.0
        runs.append(1 + np.sum(s[1:] != s[:-1]))
    runs = np.array(runs, float)
    r = runs_test(np.array([1, 1, -1, 1, -1, -1, 1, 1, -1.0]))
    assert r.expected_runs == pytest.approx(runs.mean(), rel=1e-12)
    var = (r.n_runs - r.expected_runs) ** 2 / r.z**2
    assert var == pytest.approx(runs.var(), rel=1e-12)
    assert r.n_runs == 6
    assert runs_test(np.array([1.0, 1.0, 1.0, -1.0])) is None
    # a smooth curvature (all negative, then positive) has very few runs: small p-value
    curved = runs_test(np.concatenate([-np.ones(10), np.ones(10)]))
    assert curved.n_runs == 2 and curved.p_value < 1e-3


def test_distribution_functions_equal_scipy_stats():
    # The engine evaluates t, F and normal tails with scipy.special (so that no process
    # imports scipy.stats, issue 17); scipy.stats is the oracle and must agree exactly.
    from server.engine.stats import f_sf, norm_cdf, norm_ppf, t_quantile, t_sf

    sps = st

    u = np.linspace(0.001, 0.999, 199)
    x = np.linspace(-8.0, 8.0, 161)
    assert np.array_equal(norm_ppf(u), sps.norm.ppf(u))
    assert np.array_equal(norm_cdf(x), sps.norm.cdf(x))
    for dof in (1, 2, 7, 38, 500):
        assert np.array_equal(t_sf(x, dof), sps.t.sf(x, dof))
        assert np.array_equal(f_sf(np.abs(x), 3, dof), sps.f.sf(np.abs(x), 3, dof))
        assert t_quantile(0.975, dof) == sps.t.ppf(0.975, dof)
