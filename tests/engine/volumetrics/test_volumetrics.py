"""Volumetric GIIP: formula constants, Monte Carlo, rank correlation and portfolio totals."""

import numpy as np
import pytest
from scipy import stats

from server.engine.errors import InputRangeError
from server.engine.units import FT3_PER_BBL
from server.engine.volumetrics.aggregation import FieldVolume, aggregate_portfolio
from server.engine.volumetrics.estimate import (
    BBL_PER_ACRE_FT,
    VARIABLES,
    Constant,
    Lognormal,
    Triangular,
    Uniform,
    VolumetricInputs,
    copula_uniforms,
    giip_monte_carlo,
    giip_samples_bscf,
    giip_volumetric_scf,
    normal_correlation_from_rank,
    split_lognormal_mean,
    split_lognormal_quantile,
    volumetric_inputs_from_cases,
    volumetric_range,
)


def test_formula_constants():
    # Domain reference §6.3: 43,560 ft2/acre and 7758 bbl/acre-ft (43,560/5.614583 = 7758.4,
    # computed); the rb form with Bgi in rb/scf gives the same GIIP as the ft3 form.
    assert pytest.approx(7758.4, abs=0.05) == BBL_PER_ACRE_FT
    g_ft3 = giip_volumetric_scf(1000.0, 0.8, 0.2, 0.7, 0.005)
    g_rb = 7758.37 * 1000.0 * 0.8 * 0.2 * 0.7 / (0.005 / FT3_PER_BBL)
    assert g_ft3 == pytest.approx(g_rb, rel=1e-6)


def test_worked_volumetric_example_of_domain_reference_7_1():
    # Domain reference §7.1 (data from memory, answer computed): Bgi = 0.02827 z T / p with
    # z = 0.869, T = 624 degR, p = 1798 psia -> 0.008526 ft3/scf; A = 1060 acres, h = 54 ft,
    # phi = 0.13, Swi = 0.52 -> G = 18.25 Bscf (printed to 4 figures -> 0.01 Bscf).
    bgi = 0.02827 * 0.869 * 624 / 1798
    assert bgi == pytest.approx(0.008526, abs=5e-7)
    assert giip_volumetric_scf(1060 * 54, 1.0, 0.13, 1 - 0.52, bgi) / 1e9 == pytest.approx(18.25, abs=0.01)


@pytest.mark.parametrize("u", [0.01, 0.1, 0.3, 0.5, 0.75, 0.99])
def test_distribution_quantiles_match_scipy(u):
    tri = Triangular(2.0, 3.0, 7.0)
    assert tri.ppf(u) == pytest.approx(stats.triang.ppf(u, (3 - 2) / (7 - 2), loc=2, scale=5), rel=1e-12)
    ln = Lognormal(10.0, 40.0)
    mu, sigma = np.log(20.0), np.log(4.0) / (2 * stats.norm.ppf(0.9))
    assert ln.ppf(u) == pytest.approx(stats.lognorm.ppf(u, sigma, scale=np.exp(mu)), rel=1e-12)
    assert Uniform(1.0, 3.0).ppf(u) == pytest.approx(1.0 + 2.0 * u)


def _inputs(**kw):
    base = dict(
        rock_volume_acre_ft=Triangular(40000.0, 60000.0, 90000.0),
        net_to_gross_frac=Uniform(0.6, 0.8),
        porosity_frac=Triangular(0.15, 0.2, 0.24),
        gas_saturation_frac=Triangular(0.6, 0.7, 0.8),
        bgi_rcf_per_scf=Constant(0.0045),
    )
    base.update(kw)
    return VolumetricInputs(**base)


def test_monte_carlo_percentiles_follow_the_reserves_convention():
    # P90 is exceeded in 90 % of trials (SPE-PRMS 2018, domain reference §6.1).
    s = giip_samples_bscf(_inputs(), trials=50000, seed=1)
    r = giip_monte_carlo(_inputs(), trials=50000, seed=1)
    assert np.mean(s >= r.p90_bscf) == pytest.approx(0.90, abs=1e-3)
    assert np.mean(s >= r.p10_bscf) == pytest.approx(0.10, abs=1e-3)
    assert r.p90_bscf < r.p50_bscf < r.p10_bscf and r.mean_bscf == pytest.approx(s.mean())
    assert giip_monte_carlo(_inputs(), trials=50000, seed=1) == r  # seeded: reproducible


def test_monte_carlo_with_one_uncertain_input_returns_its_quantiles():
    # Only the rock volume varies: GIIP percentiles are the formula at its quantiles.
    inp = _inputs(
        net_to_gross_frac=Constant(0.7), porosity_frac=Constant(0.2), gas_saturation_frac=Constant(0.7)
    )
    r = giip_monte_carlo(inp, trials=200000, seed=2)
    tri = Triangular(40000.0, 60000.0, 90000.0)
    for p, u in ((r.p90_bscf, 0.1), (r.p50_bscf, 0.5), (r.p10_bscf, 0.9)):
        # sampling error of a percentile at 200k trials is well below 0.5 %
        assert p == pytest.approx(giip_volumetric_scf(tri.ppf(u), 0.7, 0.2, 0.7, 0.0045) / 1e9, rel=5e-3)
    # mean of a triangular: (a + b + c)/3
    assert r.mean_bscf == pytest.approx(
        giip_volumetric_scf(190000 / 3, 0.7, 0.2, 0.7, 0.0045) / 1e9, rel=5e-3
    )


def test_rank_correlation_is_imposed():
    inp = _inputs(rank_correlations=(("porosity_frac", "gas_saturation_frac", 0.6),))
    corr = normal_correlation_from_rank(inp.rank_correlations, VARIABLES)
    u = copula_uniforms(corr, 100000, np.random.default_rng(4))
    rho = stats.spearmanr(inp.porosity_frac.ppf(u[:, 2]), inp.gas_saturation_frac.ppf(u[:, 3])).statistic
    assert rho == pytest.approx(0.6, abs=0.01)
    # positive correlation between porosity and saturation widens the GIIP distribution
    wide = giip_monte_carlo(inp, trials=50000, seed=5)
    plain = giip_monte_carlo(_inputs(), trials=50000, seed=5)
    assert wide.p10_bscf - wide.p90_bscf > plain.p10_bscf - plain.p90_bscf


@pytest.mark.parametrize(
    ("kw", "message"),
    [
        ({"porosity_frac": Triangular(0.2, 0.1, 0.3)}, "porosity_frac: triangular needs low <= mode <= high"),
        ({"gas_saturation_frac": Uniform(0.5, 1.2)}, "gas_saturation_frac: the range reaches outside 0-1"),
        ({"rank_correlations": (("porosity_frac", "depth", 0.3),)}, "unknown or repeated input"),
        (
            {
                "rank_correlations": (
                    ("porosity_frac", "gas_saturation_frac", 0.9),
                    ("porosity_frac", "net_to_gross_frac", 0.9),
                    ("gas_saturation_frac", "net_to_gross_frac", -0.9),
                )
            },
            "not positive definite",
        ),
    ],
)
def test_bad_inputs_are_refused_with_the_reason(kw, message):
    with pytest.raises(InputRangeError, match=message):
        giip_monte_carlo(_inputs(**kw), trials=1000)


def test_deterministic_range_checks_order_and_its_mean_matches_its_quantiles():
    with pytest.raises(InputRangeError, match="low <= best <= high"):
        volumetric_range(120.0, 100.0, 140.0)
    r = volumetric_range(80.0, 100.0, 140.0)
    assert (r.p90_bscf, r.p50_bscf, r.p10_bscf) == (80.0, 100.0, 140.0)
    u = (np.arange(400000) + 0.5) / 400000
    q = split_lognormal_quantile(80.0, 100.0, 140.0, u)
    assert np.percentile(q, [10, 50, 90]) == pytest.approx([80.0, 100.0, 140.0], rel=1e-4)
    assert split_lognormal_mean(80.0, 100.0, 140.0) == pytest.approx(q.mean(), rel=1e-4)


def _three_fields():
    inp = _inputs()
    return [
        FieldVolume(f"F{i}", samples_bscf=giip_samples_bscf(inp, trials=50000, seed=10 + i)) for i in range(3)
    ]


def test_check_value_34_means_add_percentiles_do_not():
    # Check value 34 (domain reference §6.3, computed): for independent fields the mean of
    # the total equals the sum of the means exactly, while P90(total) > sum of P90s and
    # P10(total) < sum of P10s.
    fields = _three_fields()
    t = aggregate_portfolio(fields, trials=50000, seed=3)
    means = sum(float(f.samples_bscf.mean()) for f in fields)
    assert t.mean_bscf == pytest.approx(means, rel=1e-12)
    assert t.p90_bscf > t.arithmetic_p90_bscf and t.p10_bscf < t.arithmetic_p10_bscf
    assert t.dependence == "independent fields"
    # Independent oracle: a plain Monte Carlo sum of freshly drawn independent trials.
    oracle = sum(giip_samples_bscf(_inputs(), trials=50000, seed=100 + i) for i in range(3))
    assert t.p90_bscf == pytest.approx(np.percentile(oracle, 10), rel=0.01)
    assert t.p10_bscf == pytest.approx(np.percentile(oracle, 90), rel=0.01)


def test_comonotone_fields_add_their_percentiles():
    # §6.3: with perfect correlation the portfolio P90 equals the sum of the P90s.
    fields = _three_fields()
    t = aggregate_portfolio(fields, rank_correlation=1.0, trials=50000)
    assert t.p90_bscf == pytest.approx(t.arithmetic_p90_bscf, rel=1e-12)
    assert t.p10_bscf == pytest.approx(t.arithmetic_p10_bscf, rel=1e-12)


def test_partial_dependence_lies_between_independence_and_comonotone():
    fields = _three_fields()
    ind, half, full = (aggregate_portfolio(fields, rank_correlation=r, trials=50000) for r in (0.0, 0.5, 1.0))
    assert ind.p90_bscf > half.p90_bscf > full.p90_bscf
    assert half.mean_bscf == pytest.approx(ind.mean_bscf, rel=1e-12)
    assert "rank correlation 0.5" in half.dependence


def test_fields_known_only_by_low_best_high_aggregate():
    fields = [
        FieldVolume("A", low_bscf=80, best_bscf=100, high_bscf=130),
        FieldVolume("B", low_bscf=40, best_bscf=50, high_bscf=75),
    ]
    t = aggregate_portfolio(fields, trials=40000)
    assert t.arithmetic_p90_bscf == pytest.approx(120.0, rel=1e-3)
    assert t.mean_bscf == pytest.approx(
        split_lognormal_mean(80, 100, 130) + split_lognormal_mean(40, 50, 75), rel=1e-3
    )
    with pytest.raises(InputRangeError, match="B: needs trials"):
        aggregate_portfolio([FieldVolume("B", low_bscf=60, best_bscf=50, high_bscf=75)])


def test_inputs_from_uploaded_cases():
    cases = {
        f"{v}_{c}": x
        for v, xs in {
            "rock_volume_acre_ft": (40000, 60000, 90000),
            "net_to_gross_frac": (0.6, 0.7, 0.8),
            "porosity_frac": (0.15, 0.2, 0.24),
            "gas_saturation_frac": (0.6, 0.7, 0.8),
            "bgi_rcf_per_scf": (0.0045, 0.0045, 0.0045),
        }.items()
        for c, x in zip(("low", "best", "high"), xs, strict=True)
    }
    inp = volumetric_inputs_from_cases(cases)
    assert inp.porosity_frac == Triangular(0.15, 0.2, 0.24)
    assert giip_monte_carlo(inp, trials=2000).p50_bscf > 0
    del cases["porosity_frac_high"]
    with pytest.raises(InputRangeError, match="missing porosity_frac_high"):
        volumetric_inputs_from_cases(cases)
    cases["porosity_frac_high"] = 0.1
    with pytest.raises(InputRangeError, match="porosity_frac: triangular needs low <= mode <= high"):
        volumetric_inputs_from_cases(cases)
