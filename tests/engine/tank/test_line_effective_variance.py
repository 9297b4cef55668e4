"""The constant-ce tank weighs its surveys by their effective variance.

Forward model: the Ramagost-Farshad balance (p/z)(1 − c_e (p_i − p)) = (p_i/z_i)(1 − G_p/G)
(domain reference §2.4) solved exactly at chosen pressures, with the engine's DAK z (checked
against published values elsewhere, tests/engine/test_pvt_zfactor.py), and normal gauge noise
on the pressure. The correction factor uses the measured pressure, so a gauge error moves the
residual by [d(p/z)/dp + (p/z) c_e/f] ε; at 9,000 psia d(p/z)/dp is small (z rises with p) and
the second term is not. With the slope given, the weighted misfit per degree of freedom is the
p/z noise of the surveys (s σ)², as for a model that predicts p/z from G_p alone (a pot
aquifer); without it, it reads well above.
"""

import numpy as np

from server.engine.pvt.gas import GasFluid, z_factor
from server.engine.tank.line import fit_tank_line

FLUID, T_DEGF, PI, G, CE, SIGMA = GasFluid(0.65), 250.0, 9000.0, 100.0, 1.7e-5, 12.0


def _pz(p):
    return p / np.array([float(z_factor(v, T_DEGF, FLUID)) for v in np.atleast_1d(p)])


def _slope(p, h=1.0):
    return (_pz(p + h) - _pz(p - h)) / (2.0 * h)


def test_the_misfit_per_degree_of_freedom_is_the_pz_noise_with_the_effective_variance():
    rng = np.random.default_rng(20261205)
    p_true = np.linspace(8600.0, 4200.0, 30)
    pzi = float(_pz(PI)[0])
    gp = G * (1.0 - _pz(p_true) * (1.0 - CE * (PI - p_true)) / pzi)
    s = _slope(p_true)
    expected = float(np.mean((s * SIGMA) ** 2))
    with_slope, without = [], []
    for _ in range(60):
        p_obs = p_true + rng.normal(0.0, SIGMA, p_true.size)
        y, d, w = _pz(p_obs), PI - p_obs, np.ones(p_true.size)
        fit = fit_tank_line(gp, y, w, d, ce=None, pz_slope=_slope(p_obs))
        plain = fit_tank_line(gp, y, w, d, ce=None)
        with_slope.append(fit.lin.rss_weighted / fit.dof)
        without.append(plain.lin.rss_weighted / plain.dof)
        assert abs(fit.phi[2] - CE) < 0.3 * CE  # c_e recovered
    assert abs(np.mean(with_slope) / expected - 1.0) < 0.15
    assert np.mean(without) / expected > 1.3  # the measured pressure inflates the plain misfit
