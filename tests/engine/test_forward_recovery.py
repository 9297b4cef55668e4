"""Estimators against the independent forward simulator (server/synthetic/tank.py).

Histories are stepped by the simulator (monthly material balance, no estimator code),
surveys get Gaussian gauge noise, and the full pipeline (prepare + analyse_field) must
recover the simulator's GIIP within a tolerance derived from that noise: 4 standard
deviations of the least-squares G implied by the known gauge noise (a 1-in-15,000 miss
for a correct estimator), with the sd computed independently of the estimator's own
scatter estimate (forward_histories.giip_sd_theory).

Condensate and gauges-off-datum histories go through the prepare stage's corrections;
their arithmetic here is the simulator's (gas column) and the textbook constants'
(condensate), not the engine's.
"""

import numpy as np
import pytest

from server.engine.analysis import analyse_field
from server.engine.inputs import AnalysisChoices
from tests.engine.forward_histories import giip_sd_theory, history_inputs, with_choices

SEEDS = range(6)


@pytest.mark.parametrize("seed", SEEDS)
def test_volumetric_noisy_history_is_recovered(seed):
    inputs, truth = history_inputs(seed=seed, noise_psi=15.0)
    a = analyse_field(inputs)
    assert a.status == "ok", a.message
    sd = giip_sd_theory(truth)
    assert abs(a.giip_best_bscf - 100.0) <= 4 * sd
    # the estimator's own standard error agrees with the noise (16 points: chi-square spread)
    assert 0.5 * sd < a.pz.giip_range_bscf.se < 1.6 * sd
    assert a.pz.n_outliers == 0 or a.pz.n_outliers == 1  # a 5 % false alarm may happen
    assert a.giip_low_bscf < a.giip_best_bscf < a.giip_high_bscf


def test_volumetric_anchored_history_is_recovered():
    inputs, truth = history_inputs(seed=11, noise_psi=15.0, choices=AnalysisChoices(anchor_initial=True))
    a = analyse_field(inputs)
    assert a.method.endswith("-anchored")
    sd = giip_sd_theory(truth, anchored=True)
    assert abs(a.giip_best_bscf - 100.0) <= 4 * sd
    assert a.pz.giip_range_bscf.se < giip_sd_theory(truth)  # anchoring at a known pi/zi helps


def test_gross_error_is_set_aside_and_truth_recovered():
    inputs, truth = history_inputs(seed=3, noise_psi=12.0, offsets_psi={7: -300.0})
    a = analyse_field(inputs)
    outliers = [s for s in a.pz.points if s.status == "outlier"]
    assert [s.index for s in outliers] == [7]
    assert "below the line through the used points" in outliers[0].reason
    used = np.arange(truth["p_psia"].size) != 7
    assert abs(a.giip_best_bscf - 100.0) <= 4 * giip_sd_theory(truth, used=used)
    # the models are compared on the same screened points
    assert all(m.n_obs == a.pz.n_used for m in a.models)


def test_engineer_exclusion_is_respected_with_its_reason():
    inputs, truth = history_inputs(seed=4, offsets_psi={5: 250.0}, excluded={5: "gauge drifted"})
    a = analyse_field(inputs)
    s = a.pz.points[5]
    assert (s.status, s.reason) == ("excluded", "gauge drifted")
    assert a.pz.n_excluded == 1 and a.pz.n_outliers == 0
    used = np.arange(truth["p_psia"].size) != 5
    assert abs(a.giip_best_bscf - 100.0) <= 4 * giip_sd_theory(truth, used=used)


def test_weighted_fit_uses_survey_quality():
    poor = {i: "poor" for i in range(1, 16, 3)}  # every third survey: 4x the variance
    inputs, truth = history_inputs(seed=5, noise_psi=10.0, quality=poor)
    wls = analyse_field(inputs)
    ols = analyse_field(with_choices(inputs, weighting="none"))
    assert wls.method == "pz-wls" and ols.method == "pz-ols"
    assert abs(wls.giip_best_bscf - 100.0) <= 4 * giip_sd_theory(truth)
    assert wls.pz.giip_range_bscf.se < ols.pz.giip_range_bscf.se


@pytest.mark.parametrize("seed", range(3))
def test_overpressured_history_needs_and_gets_the_ce_correction(seed):
    # constant ce = 14.333e-6 /psi from pi = 9000 psia (the §7.4 tank), 8 years at 20 MMscf/d
    ce = 14.333e-6
    inputs, truth = history_inputs(seed=seed, pi_psia=9000.0, ce_per_psi=ce, noise_psi=15.0)
    given_ce = with_choices(inputs, overpressure_mode="given", effective_compressibility_per_psi=ce)
    given = analyse_field(given_ce)
    sd = giip_sd_theory(truth, pi_psia=9000.0, ce_per_psi=ce)
    assert abs(given.giip_best_bscf - 100.0) <= 4 * sd
    fitted = analyse_field(with_choices(inputs, overpressure_mode="fitted"))
    assert fitted.method == "pz-ols-ce-fitted"
    # fitting ce costs precision; its own standard errors carry that cost
    assert abs(fitted.giip_best_bscf - 100.0) <= 4 * fitted.pz.giip_range_bscf.se
    assert abs(fitted.pz.ce_per_psi - ce) <= 4 * fitted.pz.ce_uncertainty_per_psi.se
    # the uncorrected line overestimates by far more than its own interval admits
    plain = fitted.pz_uncorrected
    assert plain.giip_bscf > 105.0 and plain.giip_range_bscf.ci_fieller.low > 100.0
    names = [m.name for m in fitted.models]
    assert names == ["single_tank", "tank_ce"]
    assert fitted.models[1].rss_psia2 < fitted.models[0].rss_psia2 / 3


def test_young_field_is_refused_with_the_rule():
    inputs, _ = history_inputs(months=24, survey_every_months=4, rate_mscf_d=8000.0)
    a = analyse_field(inputs)
    assert a.status == "refused" and a.pz is None
    assert "too little depletion" in a.message and "at least 10 %" in a.message
    assert a.giip_best_bscf is None and a.giip_low_bscf is None


def test_same_inputs_give_the_same_numbers():
    inputs, _ = history_inputs(seed=2)
    a, b = analyse_field(inputs), analyse_field(inputs)
    assert a.giip_low_bscf == b.giip_low_bscf and a.giip_high_bscf == b.giip_high_bscf
    c = analyse_field(with_choices(inputs, random_seed=1))
    assert c.giip_low_bscf != a.giip_low_bscf and c.giip_best_bscf == a.giip_best_bscf


def test_gauges_above_datum_history_is_recovered():
    inputs, truth = history_inputs(seed=7, gauge_above_datum_ft=850.0, noise_psi=12.0)
    a = analyse_field(inputs)
    assert any("850 ft above datum" in c for c in a.prepared.corrections)
    assert abs(a.giip_best_bscf - 100.0) <= 4 * giip_sd_theory(truth)
    naive = analyse_field(with_choices(inputs, datum_correction=False, anchor_initial=True))
    assert naive.giip_best_bscf < 100.0 - 4 * naive.pz.giip_range_bscf.se  # off without the correction


def test_rich_condensate_history_is_recovered_in_wet_gas_equivalent():
    # 110 stb/MMscf of 50 API condensate (like the demo's rich field): about 8 % of the gas
    inputs, truth = history_inputs(seed=8, condensate=(50.0, 110.0, 0.68), pi_psia=5600.0, t_degF=230.0)
    a = analyse_field(inputs)
    assert any(c.startswith("condensate 110 stb/MMscf") for c in a.prepared.corrections)
    sd = giip_sd_theory(truth, t_degF=230.0, pi_psia=5600.0)
    assert abs(a.giip_best_bscf - 100.0) <= 4 * sd + 3e-4 * 100.0  # + the GE constant's 0.03 %
    naive = analyse_field(with_choices(inputs, condensate_correction=False))
    assert naive.giip_best_bscf < 92.0 and naive.pz.giip_range_bscf.ci_fieller.high < 100.0
