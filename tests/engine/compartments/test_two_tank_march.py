"""The two-tank fit takes its residuals and Jacobian from one march with sensitivities (issue 17):
the march's tank fractions against the plain simulator's, bit for bit, and the fit against the same
fit with the residuals from the plain simulator (as before), on the benchmark's 20-year fields."""

import numpy as np
import pytest
from scipy.optimize import least_squares

from server.engine import accel
from server.engine.compartments import multitank_fit as mf
from server.engine.compartments.multitank import simulate_star_tanks
from server.engine.compartments.two_tank_sensitivity import simulate_two_with_sensitivities
from server.engine.prepare.points import prepare
from tests.engine.twenty_year import CASES, twenty_year_field


@pytest.fixture(scope="module", params=list(CASES))
def field(request):
    inputs = twenty_year_field(request.param)
    prepared = prepare(inputs)
    layout = mf._layout(inputs, prepared)
    return inputs, prepared, layout, mf._problem(inputs, prepared, layout, 50, "pseudo_pressure", None)


def test_sensitivity_march_gives_the_plain_fractions_bit_for_bit(field):
    _, _, _, prob = field
    rng = np.random.default_rng(7)
    for _ in range(100):  # tanks of 1-1000 Bscf, connections from 1e-6 to 10, p/z_i 4000-7000 psia
        g0, g1 = np.exp(rng.uniform(0.0, np.log(1000.0), 2)) * 1e9
        gam = float(np.exp(rng.uniform(np.log(1e-6), np.log(10.0))))
        pzi = float(rng.uniform(4000.0, 7000.0))
        args = (pzi, prob.potential, prob.step_days, prob.withdrawal_scf)
        plain = np.array(simulate_star_tanks([g0, g1], [gam], *args))
        march = simulate_two_with_sensitivities(float(g0), float(g1), gam, *args)
        assert np.array_equal(plain, march[:, :2])
        assert accel.enable()  # compiled (numba): the same arithmetic in the same order
        try:
            compiled = simulate_two_with_sensitivities(float(g0), float(g1), gam, *args)
        finally:
            accel.disable()
        assert np.array_equal(compiled, march)


def test_march_prediction_is_the_plain_prediction(field):
    _, _, _, prob = field
    theta = np.array([4987.0, np.log(55.0), np.log(59.5), np.log(0.0428)])
    predicted, jacobian = mf._march_two(theta, prob)
    assert np.array_equal(predicted, mf._predict(theta, prob, 2))
    assert np.array_equal(jacobian, mf._jacobian_two(theta, prob))


def test_fit_matches_the_fit_with_residuals_from_the_plain_simulator(field):
    inputs, prepared, layout, prob = field
    fit = mf.fit_two_tank(inputs, prepared)

    def resid(theta):
        return prob.sqrt_w * (prob.y - mf._predict(theta, prob, 2))

    before = least_squares(  # the arrangement before issue 17: two marches at each accepted point
        resid,
        mf._start(prob, layout, prepared, inputs),
        jac=lambda theta: mf._jacobian_two(theta, prob),
        method="lm",
        x_scale="jac",
        ftol=1e-5,
        xtol=1e-5,
        max_nfev=200,
    )
    assert fit.params["initial_pz_psia"] == pytest.approx(before.x[0], rel=1e-12)
    giips = [fit.params["giip_tank1_bscf"], fit.params["giip_tank2_bscf"]]
    assert np.allclose(np.log(giips), before.x[1:3], rtol=0, atol=1e-10)
    assert fit.rss_psia2 == pytest.approx(2 * before.cost, rel=1e-12)
