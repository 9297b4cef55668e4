"""The booked range: data scatter, model spread and systematic inputs, combined.

Each part is a standard deviation of ln GIIP; independent parts add in variance and the
P90/P10 are G exp(∓ 1.2816 σ) (a lognormal range about the basis, common practice for
combining relative uncertainties):

- **scatter**: the basis model's own interval (for the straight line the residual
  bootstrap's P90-P10, else its confidence interval at the choices' level);
- **models**: the Akaike-weighted spread of ln GIIP of the determined models about the
  basis, σ² = Σ w_i (ln G_i − ln G_basis)² (Burnham & Anderson 2002 model averaging, from
  memory): the models the data cannot tell apart widen the range, those they reject do not;
- **metering**: a bias of the metered gas scales every Gp and so GIIP by the same share;
- **gauge** and **z-factor**: a relative error ε of p/z late in the history, against the
  initial p/z, moves the extrapolated GIIP by ε (1 − D)/D, with D the fall of p/z so
  far (from G = Gp / (1 − (p/z)/(p/z)_i)): small on a depleted field, large on a young one.
  ε is the gauge accuracy over the late pressure, and the z-factor correlation's error
  (or a laboratory table's);
- **neighbour** (connected tank only): the gas a set-apart compartment has given to the
  producers, sized from its well's depletion and the mapped volume beyond the producers'
  compartment (:mod:`.neighbour`). That gas can only make the producers' line read too
  large, so this part lowers the P90 and leaves the P10: P90 = G (1 − Q/G_p) e^(−1.2816 σ)
  with σ of the other parts (engine 0.6.8; added in quadrature to both ends before, when the
  range held the producers' tank in 132 of 200 forward-model fields with the systematic
  errors drawn in, 182 now; benchmarks/README.md). Its share of the variance is shown as if
  it were symmetric.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from statistics import NormalDist

from ..thresholds import FlagThresholds
from .types import ModelOutcome, RangePart

Z90 = NormalDist().inv_cdf(0.9)  # 1.2816
#: The fall of p/z below which systematic parts are taken at this fall (they grow as 1/D).
MIN_FALL_FRAC = 0.02


def sigma_from_interval(low: float | None, high: float | None, level: float) -> float | None:
    """σ of ln G from a two-sided interval at ``level``; None when unbounded."""
    if low is None or high is None or not (0 < low <= high) or not 0 < level < 1:
        return None
    return math.log(high / low) / (2.0 * NormalDist().inv_cdf(0.5 + level / 2.0))


def model_spread(basis: ModelOutcome, outcomes: Sequence[ModelOutcome]) -> float:
    """Akaike-weighted spread of ln GIIP about the basis over the determined, compared models."""
    rows = [
        o for o in outcomes if o.delta_aicc is not None and o.determined and o.giip_bscf and o.giip_bscf > 0
    ]
    if not rows or basis.giip_bscf is None:
        return 0.0
    w = [math.exp(-0.5 * o.delta_aicc) for o in rows]
    total = sum(w)
    ln_b = math.log(basis.giip_bscf)
    return math.sqrt(
        sum(wi * (math.log(o.giip_bscf) - ln_b) ** 2 for wi, o in zip(w, rows, strict=True)) / total
    )


def booked_range(
    basis: ModelOutcome,
    outcomes: Sequence[ModelOutcome],
    *,
    scatter_sigma: float | None,
    fall_frac: float | None,
    late_pressure_psia: float | None,
    lab_z: bool,
    th: FlagThresholds,
    neighbour_sigma: float | None = None,
) -> tuple[float | None, float | None, tuple[RangePart, ...]]:
    """(P90, P10, parts) of GIIP about the basis [Bscf]; P10 is None when the scatter is unbounded."""
    d = max(fall_frac if fall_frac is not None else MIN_FALL_FRAC, MIN_FALL_FRAC)
    lever = (1.0 - d) / d
    gauge = th.gauge_uncertainty_psi / late_pressure_psia * lever if late_pressure_psia else 0.0
    z_eps = th.z_uncertainty_lab_frac if lab_z else th.z_uncertainty_frac
    raw = [
        ("scatter", "Scatter of the surveys about the basis model", scatter_sigma),
        ("models", "Models the data cannot tell apart", model_spread(basis, outcomes)),
        ("metering", "Metered gas volumes", th.metered_gas_uncertainty_frac),
        ("gauge", "Gauge accuracy", gauge),
        ("z_factor", "z-factor " + ("laboratory table" if lab_z else "correlation"), z_eps * lever),
        ("neighbour", "Gas from the set-apart compartment", neighbour_sigma),
    ]
    known = [(k, t, s) for k, t, s in raw if s is not None]
    var = sum(s * s for _, _, s in known)
    parts = tuple(RangePart(k, t, s, s * s / var if var > 0 else 0.0) for k, t, s in known)
    g = basis.giip_bscf
    sigma = math.sqrt(sum(s * s for k, _, s in known if k != "neighbour"))  # both ends
    low = g * math.exp(-Z90 * (sigma + (neighbour_sigma or 0.0)))  # the feed lowers the low end only
    high = None if scatter_sigma is None else g * math.exp(Z90 * sigma)
    return low, high, parts
