"""Havlena-Odeh aquifer lines and the nonlinear history match.

Sources: check value 25 (docs/domain-reference.md §7.2, computed there): with the true
pressure history the Havlena-Odeh line F/Eg vs ΣΔp W_D/Eg gives G = 100.000 Bscf (0.01)
and U = 644.544 bbl/psi (0.1 %); the naive p/z line gives 122.52 Bscf (8 yr; 0.1 Bscf);
a pot aquifer fitted instead gives G = 134.4 with a negative U and RMS 2.3 Bscf.
The histories come from the independent forward model server/synthetic/aquifer.py.
"""

from dataclasses import replace

import numpy as np
import pytest

from server.engine.aquifer.havlena_odeh import havlena_odeh_aquifer_fit
from server.engine.aquifer.history_match import field_havlena_odeh_line, fit_aquifer_model, fit_aquifer_models
from server.engine.aquifer.influx import influx_van_everdingen_hurst
from server.engine.aquifer.tank_solver import tank_grid
from server.engine.errors import InsufficientDataError
from server.engine.inputs import AnalysisChoices, LabTable
from server.engine.prepare.points import prepare
from server.engine.pvt.gas import z_factor
from server.engine.tank.balance_terms import havlena_odeh_terms
from server.engine.tank.pz_estimate import fit_pz_line
from server.synthetic.aquifer import VehAquifer, simulate_veh
from server.synthetic.tank import TankSpec
from tests.engine import section_7_2 as c72
from tests.engine.aquifer_cases import synthetic_field


@pytest.fixture(scope="module")
def quarterly():
    spec = TankSpec(100.0, c72.PI_PSIA, c72.T_DEGF, c72.FLUID)
    t = c72.quarterly_times_days()
    h = simulate_veh(
        spec, VehAquifer(c72.U_RB_PER_PSI, c72.TD_PER_DAY), t, np.full(t.size, c72.RATE_MSCF_PER_DAY)
    )
    terms = havlena_odeh_terms(
        h.p1_psia, h.gp_bscf, t_degF=c72.T_DEGF, initial_pressure_psia=c72.PI_PSIA, fluid=c72.FLUID
    )
    return h, terms


@pytest.mark.parametrize(("method", "g_tol"), [("edwardson", 0.01), ("laplace", 0.01)])
def test_havlena_odeh_line_check_25(quarterly, method, g_tol):
    # Same scheme as the reference (Edwardson W_D): exact to rounding. With the Laplace W_D
    # (0.0005 % apart in this range) the answer still meets the 0.01 Bscf tolerance.
    h, terms = quarterly
    s = influx_van_everdingen_hurst(
        h.t_days,
        h.p1_psia,
        initial_pressure_psia=c72.PI_PSIA,
        u_rb_per_psi=1.0,
        td_per_day=c72.TD_PER_DAY,
        method=method,
    )
    line = havlena_odeh_aquifer_fit(terms, s)
    assert line.giip_bscf == pytest.approx(100.0, abs=g_tol)
    assert line.u_rb_per_psi == pytest.approx(644.544, rel=1e-3)
    assert line.rms_bscf < 0.01  # a straight line: the right model


def test_pot_line_on_the_radial_aquifer_is_wrong_and_says_so(quarterly):
    # §7.2: "fitting a pot aquifer instead gives G = 134.4 Bscf with a negative fitted U and
    # structured residuals (RMS 2.3 Bscf)" (all 32 quarterly points, unweighted).
    h, terms = quarterly
    line = havlena_odeh_aquifer_fit(terms, c72.PI_PSIA - h.p1_psia)
    assert line.giip_bscf == pytest.approx(134.4, abs=0.1)
    assert line.u_rb_per_psi < 0
    assert line.rms_bscf == pytest.approx(2.3, abs=0.05)
    # Structured: the residuals change sign only a few times along the line (a random
    # scatter of 32 points would change sign about 15 times).
    assert np.sum(np.diff(np.sign(line.residual_bscf)) != 0) <= 4


def test_naive_pz_line_check_25(quarterly):
    # Check value 25: naive p/z OLS through (0, pi/zi) and the quarterly points -> 116.17
    # (first 2 yr), 121.53 (4 yr), 122.52 Bscf (8 yr) (tolerance 0.1 Bscf; we match to 0.005).
    h, _ = quarterly
    gp = np.concatenate([[0.0], h.gp_bscf])
    p = np.concatenate([[c72.PI_PSIA], h.p1_psia])
    pz = p / z_factor(p, c72.T_DEGF, c72.FLUID)
    for n_points, g in ((9, 116.17), (17, 121.53), (33, 122.52)):
        assert fit_pz_line(gp[:n_points], pz[:n_points]).giip_bscf == pytest.approx(g, abs=0.1)


def test_history_match_recovers_the_truth_without_noise():
    # Monthly production, 40 noise-free surveys from the independent simulator: the vEH fit
    # returns the true G, U and tD/day (differences: Edwardson vs Laplace W_D, interpolation).
    f = synthetic_field(veh=VehAquifer(c72.U_RB_PER_PSI, c72.TD_PER_DAY), sigma_psia=0.0)
    fit = fit_aquifer_model(f.inputs, f.prepared, "aquifer_veh_radial")
    assert fit.converged
    assert fit.giip_bscf == pytest.approx(100.0, abs=0.05)
    assert fit.params["u_rb_per_psi"] == pytest.approx(644.544, rel=0.01)
    assert fit.params["td_per_day"] == pytest.approx(c72.TD_PER_DAY, rel=0.01)
    assert fit.params["initial_pressure_psia"] == pytest.approx(5000.0, abs=0.05)
    assert "red" not in fit.params  # the infinite aquifer was chosen
    assert np.max(np.abs(fit.residual_pz_psia)) < 0.05
    assert fit.fitted_pz_psia.shape == (f.inputs.n_surveys,)
    assert fit.correlation.shape == (4, 4)
    assert list(fit.param_se) == [
        "giip_bscf",
        "initial_pressure_psia",
        "u_rb_per_psi",
        "td_per_day",
        "influx_frac_of_gas_pv",
    ]
    # The influx fraction We/(G Bgi) at the end agrees with the forward model's own.
    gas_pv_rb = 100e9 * c72.BGI_RB_PER_MSCF / 1e3
    assert fit.params["influx_frac_of_gas_pv"] == pytest.approx(f.history.we_rb[-1] / gas_pv_rb, rel=2e-3)


def test_anchored_initial_pressure_drops_a_parameter():
    f = synthetic_field(veh=VehAquifer(c72.U_RB_PER_PSI, c72.TD_PER_DAY), sigma_psia=0.0)
    inputs = replace(f.inputs, choices=AnalysisChoices(anchor_initial=True))
    free = fit_aquifer_model(f.inputs, f.prepared, "aquifer_fetkovich")
    anchored = fit_aquifer_model(inputs, f.prepared, "aquifer_fetkovich")
    assert anchored.n_params == free.n_params - 1
    assert "initial_pressure_psia" not in anchored.params
    assert set(anchored.params) >= {"giip_bscf", "wei_rb", "j_rb_per_day_psi", "influx_frac_of_gas_pv"}


def test_too_few_surveys():
    f = synthetic_field(veh=VehAquifer(c72.U_RB_PER_PSI, c72.TD_PER_DAY), n_surveys=4)
    with pytest.raises(InsufficientDataError, match="needs at least"):
        fit_aquifer_model(f.inputs, f.prepared, "aquifer_veh_radial")
    fits = fit_aquifer_models(f.inputs, f.prepared)
    assert [m.name for m in fits] == ["aquifer_pot"]  # 5 surveys: 3 parameters and 2 residual dof, not 4
    with pytest.raises(ValueError, match="unknown aquifer model"):
        fit_aquifer_model(f.inputs, f.prepared, "aquifer_schilthuis")


def test_forward_model_uses_the_prepared_z_source():
    # With a laboratory z table chosen, the tank's p/z(p) must be the one the surveys were
    # converted with (else the fit would chase a z mismatch). An invented table: DAK x (1 + 2 % p/pi).
    f = synthetic_field(veh=VehAquifer(c72.U_RB_PER_PSI, c72.TD_PER_DAY), sigma_psia=5.0)
    p_lab = np.linspace(500.0, 6000.0, 23)
    z_lab = z_factor(p_lab, c72.T_DEGF, c72.FLUID) * (1 + 0.02 * p_lab / 5000.0)
    inputs = replace(f.inputs, lab_table=LabTable(pressure_psia=p_lab, z_factor=z_lab))
    prepared = prepare(inputs)
    grid = tank_grid(inputs, prepared)
    p = np.array([pt.p_datum_psia for pt in prepared.points])
    z_points = np.array([pt.z_factor for pt in prepared.points])
    assert not np.allclose(z_points, z_factor(p, c72.T_DEGF, c72.FLUID), rtol=1e-3)  # the table is in use
    # The tank tabulates z at 161 pressures and splines them; the lab table's monotone cubic
    # has kinks in curvature at its nodes, so agreement is to ~4e-6 (0.02 psia of p/z).
    assert np.interp(p, grid.table.p, grid.table.z) == pytest.approx(z_points, rel=1e-5)
    assert grid.obs_pz_psia == pytest.approx(p / z_points)


def test_havlena_odeh_line_on_noisy_surveys():
    # The straight-line diagnostic on the surveys themselves (interpolated pressure history):
    # the right model and time constant give G near the truth; the pot aquifer a biased G and
    # a worse weighted fit.
    f = synthetic_field(veh=VehAquifer(c72.U_RB_PER_PSI, c72.TD_PER_DAY), sigma_psia=5.0, seed=2)
    veh, rate, red = field_havlena_odeh_line(f.inputs, f.prepared, "aquifer_veh_radial", rate=c72.TD_PER_DAY)
    pot, _, _ = field_havlena_odeh_line(f.inputs, f.prepared, "aquifer_pot")
    assert rate == c72.TD_PER_DAY and red is None
    assert veh.giip_bscf == pytest.approx(100.0, abs=3 * veh.giip_se_bscf + 1.0)
    assert veh.u_rb_per_psi == pytest.approx(c72.U_RB_PER_PSI, rel=0.15)
    assert pot.giip_bscf > 110.0 and pot.rss_weighted > 3 * veh.rss_weighted
    best, rate, _ = field_havlena_odeh_line(f.inputs, f.prepared, "aquifer_veh_radial")
    # The scan's grid steps by a factor 3.2 in time constant: the best node lies within a step
    # of the truth, and its line fits nearly as well as the true one.
    assert 1 / 3.2 < rate / c72.TD_PER_DAY < 3.2
    assert best.rss_weighted <= veh.rss_weighted * 2.0


def test_a_huge_giip_error_gives_an_unbounded_interval_not_an_overflow():
    from server.engine.aquifer.history_match import MAX_INTERVAL_FACTOR, lognormal_interval

    low, high = lognormal_interval(50.0, 0.1, 2.0)
    assert (low, high) == pytest.approx((50.0 * np.exp(-0.2), 50.0 * np.exp(0.2)))
    # finite but huge (exp would overflow: warnings are errors here), infinite, NaN
    for se in (1e4, np.log(MAX_INTERVAL_FACTOR), np.inf, np.nan):
        assert lognormal_interval(50.0, se, 2.0) == (None, None)


def test_the_benchmark_variant_that_overflowed_reports_the_pot_model_not_determined():
    # Portfolio benchmark variant 54 ("Gorsewick 05"): a pot aquifer fitted to a two-compartment
    # field had a standard error of G of about 3e4 Bscf; exp(t se/G) overflowed before. Where the
    # fit ends on that flat valley depends on the solver's path (scipy's trust region ended with
    # an unbounded interval, the bounded Levenberg-Marquardt of issue 17 with a finite, wide one);
    # either way the analysis runs, the interval is finite or absent, and the model is not determined.
    from benchmarks.bench_portfolio import variants
    from server.engine.analysis import analyse_field
    from tests.engine.cases import demo_field_inputs

    v = variants(200)[54]
    result = analyse_field(demo_field_inputs(v.name, spec=v, seed=1054))
    pot = next(m for m in result.diagnosis.models if m.name == "aquifer_pot")
    assert not pot.identifiable
    assert (pot.giip_low_bscf is None) == (pot.giip_high_bscf is None)
    if pot.giip_low_bscf is not None:
        assert np.isfinite(pot.giip_high_bscf) and 0 < pot.giip_low_bscf < pot.giip_bscf < pot.giip_high_bscf
    row = next(r for r in result.diagnosis.comparison.rows if r.name == "aquifer_pot")
    assert row.giip_low_bscf == pot.giip_low_bscf and not row.identifiable
