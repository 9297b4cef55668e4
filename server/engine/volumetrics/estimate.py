"""Volumetric GIIP: the deterministic formula, a Monte Carlo from input ranges, and
portfolio aggregation.

    GIIP [scf] = 43,560 · GRV [acre-ft] · NTG · φ · Sg / Bgi [ft³/scf]
               = 7758 · GRV [acre-ft] · NTG · φ · Sg / Bgi [rb/scf]

(43,560 ft² per acre; 43,560/5.614583 = 7758.4 bbl per acre-ft; domain reference §6.3,
standard constants from memory.) Percentiles follow the reserves convention (SPE-PRMS
2018, §6.1): P90 is the value exceeded with 90 % probability, i.e. the 10th percentile;
P10 is the 90th percentile.

Rank correlation between inputs (e.g. porosity and gas saturation) is imposed with a
Gaussian copula: the Spearman coefficient ρ_s of a bivariate normal is (6/π) asin(ρ/2),
so the normal correlation is ρ = 2 sin(π ρ_s / 6) (Pearson 1907 — from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputRangeError
from ..stats import norm_cdf, norm_ppf
from ..units import FT3_PER_BBL

FT2_PER_ACRE = 43560.0
BBL_PER_ACRE_FT = FT2_PER_ACRE / FT3_PER_BBL  # 7758.37; textbooks print 7758
Z90 = float(norm_ppf(0.9))  # 1.28155: P10 (90th percentile) of a standard normal
DEFAULT_TRIALS = 20000
VARIABLES = (
    "rock_volume_acre_ft",
    "net_to_gross_frac",
    "porosity_frac",
    "gas_saturation_frac",
    "bgi_rcf_per_scf",
)
FRACTIONS = ("net_to_gross_frac", "porosity_frac", "gas_saturation_frac")


def giip_volumetric_scf(
    rock_volume_acre_ft, net_to_gross_frac, porosity_frac, gas_saturation_frac, bgi_rcf_per_scf
):
    """Gas initially in place from rock volume and rock and fluid properties [scf].

    Parameters
    ----------
    rock_volume_acre_ft : float or array
        Gross rock volume above the gas-water contact, area times gross thickness [acre-ft].
    net_to_gross_frac, porosity_frac, gas_saturation_frac : float or array
        Net-to-gross ratio, porosity and initial gas saturation (1 - Swi) [fraction].
    bgi_rcf_per_scf : float or array
        Gas formation volume factor at initial conditions [reservoir ft³ per scf].
    """
    return (
        FT2_PER_ACRE
        * np.asarray(rock_volume_acre_ft, float)
        * net_to_gross_frac
        * porosity_frac
        * gas_saturation_frac
        / np.asarray(bgi_rcf_per_scf, float)
    )


# --- input distributions --------------------------------------------------------------


@dataclass(frozen=True)
class Constant:
    value: float

    def ppf(self, u):
        return np.full(np.shape(u), float(self.value))

    def check(self, name: str):
        if not math.isfinite(self.value):
            raise InputRangeError(f"{name}: value must be finite")


@dataclass(frozen=True)
class Uniform:
    low: float
    high: float

    def ppf(self, u):
        return self.low + (self.high - self.low) * np.asarray(u, float)

    def check(self, name: str):
        if not self.low <= self.high:
            raise InputRangeError(f"{name}: uniform needs low <= high (got {self.low}, {self.high})")


@dataclass(frozen=True)
class Triangular:
    low: float
    mode: float
    high: float

    def ppf(self, u):
        """Inverse CDF of the triangular distribution (closed form)."""
        u = np.asarray(u, float)
        a, c, b = self.low, self.mode, self.high
        if b == a:
            return np.full(u.shape, a)
        fc = (c - a) / (b - a)
        left = a + np.sqrt(u * (b - a) * (c - a))
        right = b - np.sqrt((1.0 - u) * (b - a) * (b - c))
        return np.where(u < fc, left, right)

    def check(self, name: str):
        if not self.low <= self.mode <= self.high:
            raise InputRangeError(
                f"{name}: triangular needs low <= mode <= high (got {self.low}, {self.mode}, {self.high})"
            )


@dataclass(frozen=True)
class Lognormal:
    """A lognormal given by its 10th and 90th percentiles (its P90 and P10)."""

    low: float  # 10th percentile
    high: float  # 90th percentile

    @property
    def mu_sigma(self) -> tuple[float, float]:
        return 0.5 * math.log(self.low * self.high), math.log(self.high / self.low) / (2 * Z90)

    def ppf(self, u):
        mu, sigma = self.mu_sigma
        return np.exp(mu + sigma * norm_ppf(np.asarray(u, float)))

    def check(self, name: str):
        if not 0 < self.low <= self.high:
            raise InputRangeError(f"{name}: lognormal needs 0 < low <= high (got {self.low}, {self.high})")


Distribution = Constant | Uniform | Triangular | Lognormal


@dataclass(frozen=True)
class VolumetricInputs:
    """Ranges of the volumetric inputs; ``rank_correlations`` lists (name, name, ρ_s)."""

    rock_volume_acre_ft: Distribution
    net_to_gross_frac: Distribution
    porosity_frac: Distribution
    gas_saturation_frac: Distribution
    bgi_rcf_per_scf: Distribution
    rank_correlations: tuple[tuple[str, str, float], ...] = ()


@dataclass(frozen=True)
class VolumetricResult:
    """GIIP percentiles (P90 = 10th percentile) and mean [Bscf]."""

    p90_bscf: float
    p50_bscf: float
    p10_bscf: float
    mean_bscf: float
    method: str  # "monte_carlo" or "deterministic"
    trials: int = 0
    seed: int | None = None


def volumetric_range(low_bscf: float, best_bscf: float, high_bscf: float) -> VolumetricResult:
    """A low/best/high entered directly, checked; its mean is that of the split lognormal
    through the three values (see :func:`split_lognormal_quantile`)."""
    if not 0 < low_bscf <= best_bscf <= high_bscf:
        raise InputRangeError(
            f"volumetric GIIP needs 0 < low <= best <= high (got {low_bscf}, {best_bscf}, {high_bscf})"
        )
    return VolumetricResult(
        low_bscf, best_bscf, high_bscf, split_lognormal_mean(low_bscf, best_bscf, high_bscf), "deterministic"
    )


def normal_correlation_from_rank(pairs, names) -> np.ndarray:
    index = {n: i for i, n in enumerate(names)}
    r = np.eye(len(names))
    for a, b, rho_s in pairs:
        if a not in index or b not in index or a == b:
            raise InputRangeError(f"rank correlation between {a!r} and {b!r}: unknown or repeated input")
        if not -1.0 < rho_s < 1.0:
            raise InputRangeError(f"rank correlation between {a} and {b} must lie strictly between -1 and 1")
        r[index[a], index[b]] = r[index[b], index[a]] = 2.0 * math.sin(math.pi * rho_s / 6.0)
    if np.linalg.eigvalsh(r).min() <= 1e-10:
        raise InputRangeError("the rank correlations given are not consistent (matrix not positive definite)")
    return r


def copula_uniforms(correlation: np.ndarray, trials: int, rng: np.random.Generator) -> np.ndarray:
    """Uniforms (trials, k) with the Gaussian-copula dependence of a normal correlation matrix."""
    z = rng.standard_normal((trials, correlation.shape[0])) @ np.linalg.cholesky(correlation).T
    return norm_cdf(z)


def giip_samples_bscf(inputs: VolumetricInputs, *, trials: int = DEFAULT_TRIALS, seed: int = 20261202):
    """Monte Carlo trials of GIIP [Bscf] (seeded: the same inputs give the same trials)."""
    if trials < 100:
        raise InputRangeError("a Monte Carlo needs at least 100 trials")
    dists = [getattr(inputs, n) for n in VARIABLES]
    for name, d in zip(VARIABLES, dists, strict=True):
        d.check(name)
    u = copula_uniforms(
        normal_correlation_from_rank(inputs.rank_correlations, VARIABLES), trials, np.random.default_rng(seed)
    )
    x = {name: d.ppf(u[:, i]) for i, (name, d) in enumerate(zip(VARIABLES, dists, strict=True))}
    for name in FRACTIONS:
        if np.any((x[name] < 0) | (x[name] > 1)):
            raise InputRangeError(f"{name}: the range reaches outside 0-1")
    for name in ("rock_volume_acre_ft", "bgi_rcf_per_scf"):
        if np.any(x[name] <= 0):
            raise InputRangeError(f"{name}: the range must stay above zero")
    return giip_volumetric_scf(*(x[n] for n in VARIABLES)) / 1e9


def summarise_bscf(samples, *, method: str = "monte_carlo", seed: int | None = None) -> VolumetricResult:
    """P90 (10th percentile), P50, P10 (90th percentile) and mean of trials [Bscf]."""
    s = np.asarray(samples, float)
    p90, p50, p10 = np.percentile(s, [10, 50, 90])
    return VolumetricResult(float(p90), float(p50), float(p10), float(s.mean()), method, int(s.size), seed)


def giip_monte_carlo(inputs: VolumetricInputs, *, trials: int = DEFAULT_TRIALS, seed: int = 20261202):
    """Monte Carlo volumetric GIIP: P90/P50/P10 and mean [Bscf]."""
    return summarise_bscf(giip_samples_bscf(inputs, trials=trials, seed=seed), seed=seed)


def split_lognormal_quantile(low: float, best: float, high: float, u, z=None):
    """Quantiles of the two-piece lognormal with P90 = low, P50 = best, P10 = high.

    ln X is normal with median ln(best) and a different spread on either side,
    σ_low = ln(best/low)/z_0.9 and σ_high = ln(high/best)/z_0.9; it reproduces the three
    values exactly and stays positive. Our choice for aggregating fields known only by
    low/best/high. ``z``, if given, is norm_ppf(u) computed once for many fields.
    """
    z = norm_ppf(np.asarray(u, float)) if z is None else np.asarray(z, float)
    s_lo, s_hi = math.log(best / low) / Z90, math.log(high / best) / Z90
    return best * np.exp(np.where(z < 0, s_lo, s_hi) * z)


def split_lognormal_mean(low: float, best: float, high: float) -> float:
    """E[X] = best·[exp(σ_lo²/2) Φ(-σ_lo) + exp(σ_hi²/2) Φ(σ_hi)] for the two-piece lognormal."""
    s_lo, s_hi = math.log(best / low) / Z90, math.log(high / best) / Z90
    return best * (math.exp(s_lo**2 / 2) * norm_cdf(-s_lo) + math.exp(s_hi**2 / 2) * norm_cdf(s_hi))


def volumetric_inputs_from_cases(cases: dict, rank_correlations=()) -> VolumetricInputs:
    """Triangular ranges from low/best/high of each input, as uploaded
    (``rock_volume_acre_ft_low``, ``..._best``, ``..._high``, and so on for every name in
    VARIABLES); the best case is the mode. Raises InputRangeError naming what is missing."""
    missing = [
        f"{v}_{c}" for v in VARIABLES for c in ("low", "best", "high") if cases.get(f"{v}_{c}") is None
    ]
    if missing:
        raise InputRangeError("Monte Carlo inputs are incomplete: missing " + ", ".join(missing))
    dists = {v: Triangular(*(float(cases[f"{v}_{c}"]) for c in ("low", "best", "high"))) for v in VARIABLES}
    for name, d in dists.items():
        d.check(name)
    return VolumetricInputs(**dists, rank_correlations=tuple(rank_correlations))
