"""The probabilistic aggregate of a review (services/reserves/aggregate.py, no database), checked
against references outside the project:

- the sum of independent identical lognormals: its mean is n exp(mu + sigma^2/2) (a property of
  the lognormal), its percentiles come from a large Monte Carlo drawn with scipy.stats.lognorm
  (its own generator and seed) and, roughly, from the Fenton-Wilkinson approximation (a
  lognormal with the sum's mean and variance; L. F. Fenton, IRE Trans. Commun. Syst. CS-8,
  1960, 57-67; citation from memory);
- the portfolio effect for independent fields: the total's P90 at or above the sum of the P90s
  and its P10 at or below the sum of the P10s (common practice);
- one field alone gives back its own P90/P50/P10;
- skewed fields against a forward model of the two-piece lognormal written out in this file
  (scipy's normal quantile, its own generator) and the mean as the integral of each field's
  quantile function (scipy.integrate.quad).
"""

import math
from dataclasses import dataclass

import numpy as np
import pytest
from scipy import integrate, stats

from server.services.reserves.aggregate import LABEL, probabilistic_totals

Z90 = stats.norm.ppf(0.9)  # 1.28155


@dataclass(frozen=True)
class Row:
    field_name: str
    asset_name: str
    booked_low_bscf: float | None
    booked_best_bscf: float | None
    booked_high_bscf: float | None
    resource_class: str = "reserves"

    @property
    def categories(self):
        return ("1C", "2C", "3C") if self.resource_class == "contingent" else ("1P", "2P", "3P")


def _group(totals, group, cls="reserves"):
    (t,) = [t for t in totals if t.group == group and t.resource_class == cls]
    return t


def test_a_single_field_gives_back_its_own_p90_p50_p10():
    (asset, portfolio) = probabilistic_totals([Row("A", "North", 12.0, 20.0, 41.0)])
    for t in (asset, portfolio):
        assert t.fields == 1 and t.left_out == ()
        assert t.p90_bscf == pytest.approx(12.0, rel=2e-3)
        assert t.p50_bscf == pytest.approx(20.0, rel=2e-3)
        assert t.p10_bscf == pytest.approx(41.0, rel=2e-3)


def test_identical_independent_lognormal_fields_match_an_independent_monte_carlo_and_fenton_wilkinson():
    n, median, sigma = 8, 30.0, 0.35
    p90, p10 = median * math.exp(-Z90 * sigma), median * math.exp(Z90 * sigma)
    rows = [Row(f"F{i}", "North", p90, median, p10) for i in range(n)]
    t = _group(probabilistic_totals(rows), "portfolio")
    mu = math.log(median)
    mean_one = math.exp(mu + sigma**2 / 2)  # lognormal mean
    assert t.mean_bscf == pytest.approx(n * mean_one, rel=2e-3)
    # Independent reference: scipy's lognormal, numpy's other generator, 400,000 sums.
    rng = np.random.Generator(np.random.MT19937(7))
    draws = stats.lognorm(s=sigma, scale=median).rvs(size=(400_000, n), random_state=rng).sum(axis=1)
    ref90, ref50, ref10 = np.percentile(draws, [10, 50, 90])
    # 20,000 stratified trials against 400,000 draws: both within about 0.2 % here.
    assert t.p90_bscf == pytest.approx(ref90, rel=0.01)
    assert t.p50_bscf == pytest.approx(ref50, rel=0.01)
    assert t.p10_bscf == pytest.approx(ref10, rel=0.01)
    # Fenton-Wilkinson: a lognormal with the sum's mean and variance (an approximation: 2 %).
    var_one = (math.exp(sigma**2) - 1) * math.exp(2 * mu + sigma**2)
    m, v = n * mean_one, n * var_one
    s2 = math.log(1 + v / m**2)
    fw = stats.lognorm(s=math.sqrt(s2), scale=math.exp(math.log(m) - s2 / 2))
    assert t.p90_bscf == pytest.approx(fw.ppf(0.1), rel=0.02)
    assert t.p50_bscf == pytest.approx(fw.ppf(0.5), rel=0.02)
    assert t.p10_bscf == pytest.approx(fw.ppf(0.9), rel=0.02)
    # the arithmetic sums beside it are the plain sums
    assert t.arithmetic_p90_bscf == pytest.approx(n * p90, rel=2e-3)
    assert t.arithmetic_p10_bscf == pytest.approx(n * p10, rel=2e-3)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_independent_fields_show_the_portfolio_effect(seed):
    rng = np.random.default_rng(seed)
    rows = []
    for i in range(10):
        best = float(rng.uniform(2.0, 80.0))
        rows.append(
            Row(f"F{i}", "AB"[i % 2], best * rng.uniform(0.5, 0.95), best, best * rng.uniform(1.05, 2.5))
        )
    totals = probabilistic_totals(rows)
    for group in ("asset A", "asset B", "portfolio"):
        t = _group(totals, group)
        members = [r for r in rows if group == "portfolio" or group == "asset " + r.asset_name]
        assert t.fields == len(members)
        # strictly: more than 5 % for these sets of five and ten fields (an arithmetic or fully
        # dependent total would sit on the sums)
        assert t.p90_bscf > 1.05 * sum(r.booked_low_bscf for r in members)
        assert t.p10_bscf < 0.95 * sum(r.booked_high_bscf for r in members)
        assert t.p90_bscf < t.p50_bscf < t.p10_bscf
    assert probabilistic_totals(rows) == totals  # fixed seed: the same inputs, the same totals


def test_classes_are_kept_apart_and_unfittable_fields_are_named():
    rows = [
        Row("Res", "North", 10.0, 15.0, 22.0),
        Row("Con", "North", 3.0, 6.0, 12.0, resource_class="contingent"),
        Row("NoVolume", "North", None, 5.0, 9.0),
        Row("ZeroLow", "North", 0.0, 2.0, 4.0),
        Row("Depleted", "South", 0.0, 0.0, 0.0),
    ]
    totals = probabilistic_totals(rows)
    res, con = _group(totals, "portfolio"), _group(totals, "portfolio", "contingent")
    assert res.categories == ("1P", "2P", "3P") and con.categories == ("1C", "2C", "3C")
    assert res.left_out == ("NoVolume", "ZeroLow") and res.fields == 2  # Res and Depleted (zero)
    assert res.p50_bscf == pytest.approx(15.0, rel=2e-3)  # the depleted field adds nothing
    assert con.p50_bscf == pytest.approx(6.0, rel=2e-3) and con.fields == 1
    south = _group(totals, "asset South")
    assert (south.p90_bscf, south.p10_bscf, south.fields) == (0.0, 0.0, 1)
    assert [t.group for t in totals][-1] == "portfolio"
    assert "not for booking" in LABEL and "arithmetic" in LABEL


def _two_piece_quantile(low, best, high, u):
    """The two-piece lognormal written out here from its definition (ln X normal about ln P50,
    spread ln(P50/P90)/z90 below and ln(P10/P50)/z90 above), with scipy's normal quantile."""
    z = stats.norm.ppf(u)
    return best * np.exp(np.where(z < 0, math.log(best / low), math.log(high / best)) / Z90 * z)


def test_skewed_fields_match_a_forward_model_of_the_two_piece_lognormal():
    # invented skewed bookings (P10/P50 far wider than P50/P90, as remaining volumes often are)
    cases = [(2.0, 5.0, 19.0), (30.0, 41.0, 52.0), (8.0, 9.0, 30.0), (1.0, 3.0, 4.0), (12.0, 20.0, 60.0)]
    rows = [Row(f"F{i}", "North", *c) for i, c in enumerate(cases)]
    t = _group(probabilistic_totals(rows), "portfolio")
    # mean: the sum of each field's mean, the integral of its quantile function (scipy quad)
    means = [
        integrate.quad(lambda u, c=c: float(_two_piece_quantile(*c, u)), 0, 1, limit=200)[0] for c in cases
    ]
    assert t.mean_bscf == pytest.approx(sum(means), rel=2e-3)
    # percentiles: 400,000 independent sums drawn through the quantile functions above
    rng = np.random.Generator(np.random.PCG64DXSM(11))
    u = rng.uniform(size=(400_000, len(cases)))
    draws = sum(_two_piece_quantile(*c, u[:, i]) for i, c in enumerate(cases))
    for got, q in zip((t.p90_bscf, t.p50_bscf, t.p10_bscf), (10, 50, 90), strict=True):
        assert got == pytest.approx(np.percentile(draws, q), rel=0.01), q
