"""The bounded Levenberg-Marquardt solver (server/engine/bounded_lm.py) against scipy's
least_squares (trust-region reflective and MINPACK's Levenberg-Marquardt) as the reference, on
textbook problems: Rosenbrock's function (Moré, Garbow & Hillstrom 1981, problem 1) free and with
a bound that binds, an exponential decay fitted to noisy data, and a slope held at zero."""

import numpy as np
import pytest
from scipy.optimize import least_squares

from server.engine.bounded_lm import active_constraints, bounded_least_squares


def rosenbrock(x):
    return np.array([10.0 * (x[1] - x[0] ** 2), 1.0 - x[0]])


def rosenbrock_jac(x):
    return np.array([[-20.0 * x[0], 10.0], [-1.0, 0.0]])


TIGHT = dict(ftol=1e-15, xtol=1e-15, gtol=1e-15)


def test_rosenbrock_from_the_standard_start_reaches_the_minimum():
    # Moré, Garbow & Hillstrom (1981): start (-1.2, 1), minimum (1, 1) with zero residuals.
    fit = bounded_least_squares(
        rosenbrock, rosenbrock_jac, [-1.2, 1.0], ([-5, -5], [5, 5]), max_nfev=200, **TIGHT
    )
    assert fit.success
    assert np.allclose(fit.x, [1.0, 1.0], atol=1e-8)
    assert fit.nfev <= 200 and list(fit.active_mask) == [0, 0]


def test_rosenbrock_with_a_binding_upper_bound_matches_scipy():
    bounds = ([-5.0, -5.0], [0.5, 5.0])
    fit = bounded_least_squares(rosenbrock, rosenbrock_jac, [-1.2, 1.0], bounds, max_nfev=200, **TIGHT)
    ref = least_squares(rosenbrock, [-1.2, 1.0], jac=rosenbrock_jac, bounds=bounds, method="trf", **TIGHT)
    assert np.allclose(fit.x, ref.x, atol=1e-7)
    assert fit.x[0] == 0.5 and list(fit.active_mask) == [1, 0] == list(ref.active_mask)
    assert 0.5 * fit.fun @ fit.fun == pytest.approx(ref.cost, rel=1e-9)


def _decay_problem(seed=3):
    rng = np.random.default_rng(seed)
    t = np.linspace(0.0, 10.0, 40)
    y = 5.0 * np.exp(-0.35 * t) + 0.3 + rng.normal(0.0, 0.05, t.size)

    def fun(p):
        return p[0] * np.exp(-p[1] * t) + p[2] - y

    def jac(p):
        e = np.exp(-p[1] * t)
        return np.column_stack([e, -p[0] * t * e, np.ones_like(t)])

    return fun, jac


def test_exponential_decay_fit_matches_minpack_levenberg_marquardt():
    fun, jac = _decay_problem()
    x0 = [1.0, 1.0, 0.0]
    fit = bounded_least_squares(
        fun, jac, x0, ([0, 0, -10], [100, 10, 10]), max_nfev=100, ftol=1e-12, xtol=1e-12
    )
    ref = least_squares(fun, x0, jac=jac, method="lm", ftol=1e-14, xtol=1e-14, gtol=1e-14)
    assert fit.success
    assert np.allclose(fit.x, ref.x, rtol=1e-6)


def test_a_parameter_pushed_against_its_bound_is_held_there_exactly():
    # A straight line through falling data with the slope bounded below by zero: the optimum is the
    # bound, reported active (-1), and the intercept is the data's mean (the least squares with b = 0).
    t = np.arange(10.0)
    y = 3.0 - 0.2 * t

    def fun(p):
        return p[0] + p[1] * t - y

    def jac(p):
        return np.column_stack([np.ones_like(t), t])

    fit = bounded_least_squares(fun, jac, [0.0, 1.0], ([-10.0, 0.0], [10.0, 10.0]), max_nfev=50)
    assert fit.x[1] == 0.0 and fit.active_mask[1] == -1
    assert fit.x[0] == pytest.approx(y.mean(), rel=1e-9)
    ref = least_squares(fun, [0.0, 1.0], jac=jac, bounds=([-10.0, 0.0], [10.0, 10.0]), method="trf")
    assert ref.active_mask[1] == -1 and fit.x[0] == pytest.approx(ref.x[0], rel=1e-6)


def test_the_callback_and_the_evaluation_cap_end_the_iterations():
    fun, jac = _decay_problem()
    seen = []

    def stop(x, r):
        seen.append(x.copy())
        if len(seen) == 2:
            raise StopIteration

    fit = bounded_least_squares(fun, jac, [1.0, 1.0, 0.0], ([0, 0, -10], [100, 10, 10]), callback=stop)
    assert fit.status == -2 and not fit.success and "StopIteration" in fit.message
    assert np.array_equal(fit.x, seen[-1])
    capped = bounded_least_squares(
        rosenbrock, rosenbrock_jac, [-1.2, 1.0], ([-5, -5], [5, 5]), max_nfev=4, **TIGHT
    )
    assert capped.status == 0 and capped.nfev == 4 and not capped.success


def test_a_start_with_non_finite_residuals_is_reported_not_iterated():
    fit = bounded_least_squares(
        lambda x: np.array([np.nan, 1.0]), rosenbrock_jac, [0.0, 0.0], ([-1, -1], [1, 1])
    )
    assert fit.status == -3 and fit.nfev == 1 and not fit.success


def test_active_constraints_follow_scipy_s_rule():
    from scipy.optimize._lsq.common import find_active_constraints

    lo, hi = np.array([0.0, -5.0, 1e6, -1.0]), np.array([1.0, 5.0, 2e6, 1.0])
    for x in ([0.0, 5.0, 1e6 + 0.5, 0.0], [1e-7, 5.0 - 1e-6, 2e6 - 1.0, 1.0], [0.5, 0.0, 1.5e6, -1.0]):
        x = np.array(x)
        assert np.array_equal(
            active_constraints(x, lo, hi, 1e-6), find_active_constraints(x, lo, hi, rtol=1e-6)
        )


def test_a_jacobian_that_is_not_finite_ends_the_iterations():
    # No damping can mend it: the solver stops and says why, it does not loop.
    fit = bounded_least_squares(
        lambda x: np.array([x[0] - 1.0, x[1]]),
        lambda x: np.array([[np.inf, 0.0], [0.0, np.inf]]),
        [0.0, 0.5],
        ([-5.0, -5.0], [5.0, 5.0]),
    )
    assert fit.status == -1 and not fit.success and "not finite" in fit.message
