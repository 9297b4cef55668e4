"""Portfolio totals of uncertain volumes: means add, percentiles do not.

The arithmetic total adds each field's P90, P50 and P10 (how reported reserves are
normally aggregated by category, conservative at P90 — domain reference §6.3, PRMS
wording to be checked). The probabilistic total adds the fields' distributions trial by
trial under a stated dependence: independent fields, or one rank correlation between
every pair of fields (Gaussian copula, as in :mod:`.estimate`).

Each field enters as trials (its own Monte Carlo) or as low/best/high, turned into trials
of the two-piece lognormal through those values at stratified probabilities. Trials are
re-ordered, never resampled (Iman & Conover 1982 — from memory), so every field keeps its
own distribution exactly and the mean of the total equals the sum of the means
(check value 34).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputRangeError
from ..stats import norm_ppf
from .estimate import DEFAULT_TRIALS, Z90, split_lognormal_quantile


@dataclass(frozen=True)
class FieldVolume:
    """One field's volume [Bscf]: Monte Carlo trials, or low (P90) / best (P50) / high (P10)."""

    name: str
    samples_bscf: np.ndarray | None = None
    low_bscf: float | None = None
    best_bscf: float | None = None
    high_bscf: float | None = None

    def trials(self, n: int, z=None) -> np.ndarray:
        """n values of the field's distribution, ascending (``z``: the standard-normal
        quantiles of the n stratified probabilities, shared by many fields)."""
        if self.samples_bscf is not None:
            s = np.sort(np.asarray(self.samples_bscf, float))
            return s if s.size == n else np.quantile(s, (np.arange(n) + 0.5) / n)
        lo, best, hi = self.low_bscf, self.best_bscf, self.high_bscf
        if lo is None or best is None or hi is None or not 0 < lo <= best <= hi:
            raise InputRangeError(f"{self.name}: needs trials or 0 < low <= best <= high")
        if lo == hi:
            return np.full(n, float(best))
        return split_lognormal_quantile(lo, best, hi, (np.arange(n) + 0.5) / n, z=z)


@dataclass(frozen=True)
class PortfolioTotal:
    """Arithmetic and probabilistic totals [Bscf] (P90 = 10th percentile)."""

    n_fields: int
    arithmetic_p90_bscf: float
    arithmetic_p50_bscf: float
    arithmetic_p10_bscf: float
    mean_bscf: float  # sum of the field means = mean of the probabilistic total
    p90_bscf: float
    p50_bscf: float
    p10_bscf: float
    dependence: str
    trials: int
    seed: int


def aggregate_portfolio(
    fields, *, rank_correlation: float = 0.0, trials: int = DEFAULT_TRIALS, seed: int = 20261202
) -> PortfolioTotal:
    """Add field volumes arithmetically and probabilistically.

    Parameters
    ----------
    fields : sequence of FieldVolume
    rank_correlation : float
        Spearman rank correlation between every pair of fields, 0 (independent) to 1
        (comonotone: the probabilistic percentiles then equal the arithmetic sums).
    trials : int
    seed : int
        Seed of the dependence structure (the same inputs give the same totals).
    """
    fields = list(fields)
    if not fields:
        raise InputRangeError("no fields to aggregate")
    k = len(fields)
    if not 0.0 <= rank_correlation <= 1.0:
        raise InputRangeError("the rank correlation between fields must lie between 0 and 1")
    z = norm_ppf((np.arange(trials) + 0.5) / trials)
    if rank_correlation == 0.0 and k > 1:
        # Independent: each field's trials in a random order of their own. Done a block of
        # fields at a time (the same permutations, drawn in the same order, as one call on
        # the whole array): 2,000 fields x 5,000 trials would be an 80 MB array, written
        # three times; blocks stay in the processor's cache (issue 17).
        total, p90s, p50s, p10s, mean = _independent_total(fields, trials, z, seed)
        dependence = "independent fields"
    else:
        values = np.column_stack([f.trials(trials, z) for f in fields])  # each column ascending
        if rank_correlation >= 1.0 - 1e-12 or k == 1:
            total = values.sum(axis=1)
            dependence = "fully dependent (comonotone)" if k > 1 else "single field"
        else:
            rho = 2.0 * math.sin(math.pi * rank_correlation / 6.0)
            rng = np.random.default_rng(seed)
            common = rng.standard_normal((trials, 1))
            z = math.sqrt(rho) * common + math.sqrt(1.0 - rho) * rng.standard_normal((trials, k))
            ranks = np.argsort(np.argsort(z, axis=0), axis=0)
            total = np.take_along_axis(values, ranks, axis=0).sum(axis=1)
            dependence = f"rank correlation {rank_correlation:g} between every pair of fields"
        p90s, p50s, p10s = (float(v.sum()) for v in _percentiles_of_sorted(values, (10, 50, 90)))
        mean = float(values.mean(axis=0).sum())
    t90, t50, t10 = np.percentile(total, [10, 50, 90])
    return PortfolioTotal(
        k,
        p90s,
        p50s,
        p10s,
        mean,
        float(t90),
        float(t50),
        float(t10),
        dependence,
        trials,
        seed,
    )


#: Fields per block of the independent total (5,000 trials x 128 fields = 5 MB).
BLOCK_FIELDS = 128


def _independent_total(fields, trials: int, z, seed: int):
    """(total per trial, sums of the P90s, P50s and P10s, sum of the means) of independent fields."""
    rng = np.random.default_rng(seed)
    total = np.zeros(trials)
    p90s = p50s = p10s = mean = 0.0
    for start in range(0, len(fields), BLOCK_FIELDS):
        block = _block_trials(fields[start : start + BLOCK_FIELDS], trials, z)
        q90, q50, q10 = _percentiles_of_sorted(block, (10, 50, 90))
        p90s, p50s, p10s = p90s + float(q90.sum()), p50s + float(q50.sum()), p10s + float(q10.sum())
        mean += float(block.mean(axis=0).sum())
        rng.permuted(block, axis=0, out=block)
        total += block.sum(axis=1)
    return total, p90s, p50s, p10s, mean


def _block_trials(fields, trials: int, z) -> np.ndarray:
    """Trials of a block of fields, one ascending column each; fields known by low/best/high
    all at once (the two-piece lognormal of :func:`.estimate.split_lognormal_quantile`)."""
    if any(f.samples_bscf is not None for f in fields):
        return np.column_stack([f.trials(trials, z) for f in fields])
    lbh = np.array([(f.low_bscf, f.best_bscf, f.high_bscf) for f in fields], float)
    lo, best, hi = lbh.T
    bad = ~(np.isfinite(lbh).all(axis=1) & (lo > 0) & (lo <= best) & (best <= hi))
    if bad.any():
        fields[int(np.argmax(bad))].trials(trials, z)  # raises the field's own error
    s_lo, s_hi = np.log(best / lo) / Z90, np.log(hi / best) / Z90
    zc = np.asarray(z, float)[:, None]
    return best * np.exp(np.where(zc < 0, s_lo, s_hi) * zc)


def _percentiles_of_sorted(values: np.ndarray, qs) -> list[np.ndarray]:
    """Percentiles of ascending columns, as numpy's default (linear) method, without sorting."""
    n = values.shape[0]
    out = []
    for q in qs:
        pos = q / 100.0 * (n - 1)
        i = min(int(pos), n - 2) if n > 1 else 0
        frac = pos - i
        out.append(values[i] + frac * (values[min(i + 1, n - 1)] - values[i]))
    return out
