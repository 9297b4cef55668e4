"""Overpressured tanks (server/engine/tank/overpressure.py): check value 26 step by step, the
Roach linearisation, the cumulative ce of Fetkovich et al., the fitted ce and the ModelFits.
"""

import numpy as np
import pytest

from server.engine.errors import InputRangeError, InsufficientDataError
from server.engine.inputs import AnalysisChoices
from server.engine.prepare.points import PreparedData, SurveyPoint
from server.engine.tank.overpressure import (
    corrected_pz_ramagost_farshad,
    cumulative_ce_from_giip,
    effective_compressibility_per_psi,
    fit_ce_roach,
    roach_plot,
    single_tank_modelfit,
    tank_ce_modelfit,
)
from server.engine.tank.pz_estimate import estimate_pz

# Check value 26, domain reference §7.4 (computed for the reference): G = 100 Bscf,
# pi = 9000 psia, pi/zi = 6789.92, cf = 10e-6, cw = 3e-6, Swi = 0.25.
GP = np.array([0, 5, 10, 15, 20, 25, 30, 40, 50, 60.0])
P = np.array([9000.0, 8210.7, 7480.5, 6807.7, 6189.5, 5622.3, 5101.6, 4180.5, 3386.9, 2682.4])
PZ = np.array([6789.92, 6524.23, 6246.98, 5958.67, 5659.94, 5351.53, 5034.24, 4376.26, 3692.00, 2986.39])
CORRECTED = np.array(
    [6789.92, 6450.42, 6110.93, 5771.43, 5431.94, 5092.44, 4752.94, 4073.95, 3394.96, 2715.97]
)
PI, PZI = 9000.0, 6789.92
CE = effective_compressibility_per_psi(10e-6, 3e-6, 0.25)


def test_effective_compressibility_check_26():
    # ce = (cf + cw Swi)/(1 - Swi) = 14.333e-6 /psi (Ramagost & Farshad 1981, from memory; §2.4)
    assert pytest.approx(14.333e-6, abs=5e-10) == CE
    with pytest.raises(InputRangeError):
        effective_compressibility_per_psi(10e-6, 3e-6, 1.0)


def test_corrected_pz_column_check_26():
    # The table's last column, printed to 0.01 psia. p is printed to 0.1 psi, which moves
    # the correction by at most 0.05 * ce * p/z = 0.005 psia: tolerance 0.01.
    assert corrected_pz_ramagost_farshad(PZ, P, PI, CE) == pytest.approx(CORRECTED, abs=0.01)
    with pytest.raises(InputRangeError):
        corrected_pz_ramagost_farshad(PZ, P, PI, 2e-4)  # ce (pi - p) would pass 1


def _est(mask=slice(None), **kw):
    args = {
        "abandonment_pz_psia": 1000.0,
        "cumulative_gas_bscf": float(GP[mask].max()),
        "pressure_drop_psi": PI - P[mask],
        "bootstrap_samples": 0,
    }
    return estimate_pz(GP[mask], PZ[mask], **{**args, **kw})


def test_corrected_and_uncorrected_giip_check_26():
    # corrected G = 100.000 (tolerance 1e-3); uncorrected line through Gp <= 20 -> 120.35 (0.05)
    corrected = _est(ce_per_psi=CE, overpressure_mode="given")
    assert corrected.giip_bscf == pytest.approx(100.000, abs=1e-3)
    assert corrected.intercept_psia == pytest.approx(PZI, abs=0.01)
    assert corrected.method == "pz-ols-ce-given"
    early = _est(GP <= 20)
    assert early.giip_bscf == pytest.approx(120.35, abs=0.05)
    # the uncorrected line is concave down: residuals negative at both ends, positive between
    full = _est()
    r = np.array([p.residual_pz_psia for p in full.points])
    assert r[0] < 0 and r[-1] < 0 and np.all(r[3:7] > 0)
    assert full.giip_bscf > 105.0


def test_fitted_ce_recovers_the_truth_check_26():
    e = _est(ce_per_psi=None, overpressure_mode="fitted")
    # printed p/z (0.01 psia) limit how exactly ce is determined: ~1e-9 /psi, so 1e-8 is ample
    assert e.ce_per_psi == pytest.approx(CE, abs=1e-8)
    assert e.giip_bscf == pytest.approx(100.0, abs=5e-3)
    assert e.ce_uncertainty_per_psi.ci_delta.contains(CE)
    assert e.ce_at_bound is None and e.method == "pz-ols-ce-fitted"


def test_roach_plot_linearisation_check_26():
    x, y = roach_plot(GP, PZ, P, PZI, PI)
    assert x.size == 9  # the initial point has pi - p = 0 and is dropped
    # hand calculation at Gp = 20: r = 6789.92/5659.94, Y = (r - 1)/2810.5, X = r 20/2810.5
    r = PZI / 5659.94
    assert y[3] == pytest.approx((r - 1) / 2810.5, rel=1e-12)
    assert x[3] == pytest.approx(r * 20 / 2810.5, rel=1e-12)
    fit = fit_ce_roach(GP, PZ, P, PZI, PI)
    # slope 1/G, intercept -ce; rounding of the table's p/z limits this to ~1e-3 relative
    assert fit.giip_bscf == pytest.approx(100.0, rel=1e-3)
    assert fit.ce_per_psi == pytest.approx(CE, rel=1e-3)
    with pytest.raises(InsufficientDataError):
        fit_ce_roach(GP[:3], PZ[:3], P[:3], PZI, PI)


def test_cumulative_ce_is_flat_for_a_constant_ce_tank():
    # Fetkovich, Reese & Whitson (1998) cumulative ce back-calculated with the true G
    ce = cumulative_ce_from_giip(GP, PZ, P, PZI, PI, 100.0)
    assert np.isnan(ce[0])
    assert ce[1:] == pytest.approx(CE, rel=2e-4)  # p/z printed to 0.01 psia
    # with a G that is too large, the implied ce falls as pressure falls (not flat)
    wrong = cumulative_ce_from_giip(GP, PZ, P, PZI, PI, 120.0)
    assert np.all(np.diff(wrong[1:]) < 0)


def _prepared(gp, p, pz, pzi, zi, weights=None, included=None):
    n = len(gp)
    w = np.ones(n) if weights is None else weights
    inc = np.ones(n, bool) if included is None else included
    pts = tuple(
        SurveyPoint(
            i,
            i,
            "W-1",
            None,
            30.0 * i,
            float(gp[i]),
            float(p[i]),
            float(p[i]),
            float(p[i] / pz[i]),
            float(pz[i]),
            bool(inc[i]),
            None if inc[i] else "test",
            "good",
            float(w[i]),
        )
        for i in range(n)
    )
    return PreparedData(
        pts, zi, pzi, 0.9, 1000.0, float(gp.max()), np.array([1.0]), np.array([gp.max()]), (), "test"
    )


def test_modelfits_share_the_observable_and_rank_the_true_model():
    prepared = _prepared(GP, P, PZ, PZI, PI / PZI)
    choices = AnalysisChoices()
    single = single_tank_modelfit(prepared, choices)
    tank = tank_ce_modelfit(prepared, choices)
    assert (single.name, tank.name) == ("single_tank", "tank_ce")
    assert (single.n_params, tank.n_params) == (2, 3)
    assert single.n_obs == tank.n_obs == 10
    # residuals on p/z itself, consistent with the fitted values and the weighted RSS
    for m in (single, tank):
        assert m.residual_pz_psia == pytest.approx(PZ - m.fitted_pz_psia)
        assert m.rss_psia2 == pytest.approx(np.sum(m.residual_pz_psia**2))
    assert tank.rss_psia2 < 1e-3 * single.rss_psia2  # the true model explains the curvature
    assert tank.params["ce_per_psi"] == pytest.approx(CE, abs=1e-8)
    assert tank.params["giip_bscf"] == pytest.approx(100.0, abs=5e-3)
    assert tank.giip_low_bscf < 100.0 < tank.giip_high_bscf
    assert set(tank.param_se) == {"initial_pz_psia", "giip_bscf", "ce_per_psi"}
    # G and ce trade off: more rock-and-water support needs less gas for the same decline
    assert tank.correlation.shape == (3, 3) and tank.correlation[1, 2] < -0.5
    anchored = tank_ce_modelfit(prepared, AnalysisChoices(anchor_initial=True))
    assert anchored.n_params == 2 and "initial_pz_psia" not in anchored.params


def test_modelfits_use_only_included_surveys():
    inc = np.ones(10, bool)
    inc[[2, 5]] = False
    prepared = _prepared(GP, P, PZ, PZI, PI / PZI, included=inc)
    m = single_tank_modelfit(prepared, AnalysisChoices())
    assert m.n_obs == 8 and m.residual_pz_psia.size == 8
    few = _prepared(GP[:3], P[:3], PZ[:3], PZI, PI / PZI)
    with pytest.raises(InsufficientDataError):
        tank_ce_modelfit(few, AnalysisChoices())


def test_volumetric_data_put_ce_at_its_lower_bound():
    gp = np.linspace(0, 50, 12)
    rng = np.random.default_rng(9)
    pz = 5000.0 * (1 - gp / 100.0) + rng.normal(0, 8.0, 12)
    p = pz * 0.95  # any pressures: the fitted ce should find no support
    e = estimate_pz(
        gp,
        pz,
        abandonment_pz_psia=1000.0,
        cumulative_gas_bscf=50.0,
        pressure_drop_psi=5000.0 - p,
        ce_per_psi=None,
        overpressure_mode="fitted",
        bootstrap_samples=200,
    )
    if e.ce_at_bound:
        assert e.ce_at_bound == "lower" and e.ce_per_psi == 0.0
        assert any("no rock-and-water expansion support" in n for n in e.notes)
    assert e.ce_uncertainty_per_psi.ci_delta.low < 0.5e-6


def test_fitted_ce_bootstrap_draws_match_exact_refits_of_the_same_resamples():
    from server.engine.tank.line import bootstrap_phi, fit_tank_line, modified_residuals

    rng = np.random.default_rng(0)
    w, d = np.ones(GP.size), PI - P
    y = PZ + rng.normal(0, 15.0, GP.size)
    fit = fit_tank_line(GP, y, w, d, ce=None)
    phi = bootstrap_phi(fit, GP, y, w, d, None, samples=40, rng=np.random.default_rng(5), scale=1.0)
    # the same resamples, refitted one by one with the full profile search
    e = modified_residuals(fit, 1.0)
    idx = np.random.default_rng(5).integers(0, GP.size, size=(40, GP.size), dtype=np.int32)
    exact = np.array([fit_tank_line(GP, fit.lin.fitted + e[i], w, d, ce=None).phi for i in idx])
    g, g_exact = -phi[:, 0] / phi[:, 1], -exact[:, 0] / exact[:, 1]
    assert np.max(np.abs(g - g_exact)) < 0.03 * np.std(g_exact)
    assert np.max(np.abs(phi[:, 2] - exact[:, 2])) < 0.03 * np.std(exact[:, 2])
