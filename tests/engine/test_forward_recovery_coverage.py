"""Do the stated intervals cover the truth at their nominal rate? (check value 29)

Check value 29 (domain reference §2.7 and §8, computed for the reference): 3000
replicates of 8 surveys spread over Gp <= 40 % of G with sigma(p/z) = 20 psia; the delta,
Fieller and anchored 95 % intervals cover the true G in 95 % of replicates, +/- 0.015
(the binomial sd at 3000 replicates is 0.004, so 0.015 is almost 4 sd). The true p/z
come from the independent forward simulator (server/synthetic/tank.py, volumetric tank,
G = 100 Bscf); noise is added to p/z as in the reference's experiment.

The bootstrap P90-P10 range is an 80 % range; with residuals rescaled by t/z (engine/tank/pz_estimate.py) it
should cover about 80 % of the time. Fitted-ce intervals are asymptotic (nonlinear
least squares) and are checked on fewer replicates with a wider tolerance.
"""

import numpy as np
import pytest

from server.engine.pvt.gas import GasFluid, z_factor
from server.engine.tank.pz_estimate import estimate_pz
from server.synthetic.tank import TankSpec, simulate

FLUID = GasFluid(0.65)
RATE_MSCF_D = 20000.0


def _true_pz(gp_bscf, pi_psia=5000.0, ce_per_psi=0.0):
    """True p (and p/z) at each cumulative, from the forward simulator."""
    t = gp_bscf[1:] * 1e6 / RATE_MSCF_D
    hist = simulate(TankSpec(100.0, pi_psia, 200.0, FLUID, ce_per_psi), t, np.full(t.size, RATE_MSCF_D))
    p = np.concatenate([[pi_psia], hist.p1_psia])
    return p, p / z_factor(p, 200.0, FLUID)


GP = np.linspace(0.0, 40.0, 8)
P_TRUE, PZ_TRUE = _true_pz(GP)
PZ_I = float(PZ_TRUE[0])
KW = {"abandonment_pz_psia": 1000.0, "cumulative_gas_bscf": 40.0}


def _replicates(n, seed):
    return PZ_TRUE + np.random.default_rng(seed).normal(0.0, 20.0, (n, GP.size))


@pytest.mark.slow
def test_delta_fieller_and_anchored_intervals_cover_at_95_percent_check_29():
    hits = {"delta": 0, "fieller": 0, "anchored_delta": 0, "anchored_fieller": 0}
    ys = _replicates(3000, seed=2029)
    for y in ys:
        free = estimate_pz(GP, y, bootstrap_samples=0, **KW).giip_range_bscf
        anch = estimate_pz(GP, y, bootstrap_samples=0, anchor_pz_psia=PZ_I, **KW).giip_range_bscf
        hits["delta"] += free.ci_delta.contains(100.0)
        hits["fieller"] += free.ci_fieller is not None and free.ci_fieller.contains(100.0)
        hits["anchored_delta"] += anch.ci_delta.contains(100.0)
        hits["anchored_fieller"] += anch.ci_fieller is not None and anch.ci_fieller.contains(100.0)
    rates = {k: v / ys.shape[0] for k, v in hits.items()}
    for name, rate in rates.items():
        assert rate == pytest.approx(0.95, abs=0.015), (name, rates)


@pytest.mark.slow
def test_bootstrap_p90_p10_covers_about_80_percent():
    ys = _replicates(1000, seed=2030)
    hits = 0
    for i, y in enumerate(ys):
        b = estimate_pz(GP, y, bootstrap_samples=400, random_seed=i, **KW).giip_range_bscf.bootstrap
        hits += b.p90 <= 100.0 <= b.p10
    # binomial sd at 1000 replicates is 0.013; a residual bootstrap is approximate with 8
    # points (resampling 8 residuals), hence +/- 0.04
    assert hits / ys.shape[0] == pytest.approx(0.80, abs=0.04)


@pytest.mark.slow
def test_fitted_ce_intervals_cover_near_nominal():
    ce = 14.333e-6
    gp = np.linspace(0.0, 50.0, 12)
    p, pz = _true_pz(gp, pi_psia=9000.0, ce_per_psi=ce)
    ys = pz + np.random.default_rng(2031).normal(0.0, 15.0, (400, gp.size))
    hits_g = hits_ce = 0
    for y in ys:
        e = estimate_pz(
            gp,
            y,
            pressure_drop_psi=9000.0 - p,
            ce_per_psi=None,
            overpressure_mode="fitted",
            bootstrap_samples=0,
            abandonment_pz_psia=1000.0,
            cumulative_gas_bscf=50.0,
        )
        hits_g += e.giip_range_bscf.ci_delta.contains(100.0)
        hits_ce += e.ce_uncertainty_per_psi.ci_delta.contains(ce)
    # binomial sd at 400 replicates is 0.011; the intervals are asymptotic: +/- 0.04
    assert hits_g / 400 == pytest.approx(0.95, abs=0.04)
    assert hits_ce / 400 == pytest.approx(0.95, abs=0.04)
