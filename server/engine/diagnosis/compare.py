"""Compare fitted reservoir models on the same observations, and say how sure we can be.

Every model reports its (weighted) residual sum of squares of p/z at the same included
surveys (:mod:`..modelfit`), so with n observations and k fitted parameters

    AIC  = n ln(RSS/n) + 2k
    AICc = AIC + 2k(k + 1)/(n - k - 1)
    BIC  = n ln(RSS/n) + k ln n

(Akaike 1974; Hurvich & Tsai 1989; Schwarz 1978 — from memory; domain reference §4.3;
k counts the model's parameters, not the noise variance, as in §7.5). Akaike weights
w_i = exp(-Δ_i/2) / Σ exp(-Δ_j/2) with Δ_i = AICc_i - min AICc.

Support, from ΔAICc (Burnham & Anderson 2002 rule of thumb — from memory): below 2 the
models fit comparably and none may be presented as the answer; 2 to 10 some support;
above 10 little support.

Where one model contains another (a single tank is the two-tank model with an infinite
connection, the tank with compressibility at c_e = 0, any aquifer model at zero influx),
the extra-sum-of-squares F-test is also given:
F = [(RSS_1 - RSS_2)/(k_2 - k_1)] / [RSS_2/(n - k_2)] against F(k_2 - k_1, n - k_2). When
the simpler model sits on the boundary of the larger one's parameter space (Γ -> ∞,
influx -> 0) the F reference distribution is only approximate.

Residual structure: the Wald-Wolfowitz runs test on the signs of the residuals ordered by
cumulative production (:func:`..stats.runs_test`; too few runs = systematic curvature, a
missing mechanism), and the lag-1 autocorrelation.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..modelfit import ModelFit
from ..stats import RunsTest, f_sf, runs_test, t_sf

COMPARABLE_DELTA = 2.0
LITTLE_SUPPORT_DELTA = 10.0
#: (simpler, larger) pairs that nest; a name ending in "*" matches a prefix.
NESTED = (
    ("single_tank", "tank_ce"),
    ("single_tank", "two_tank"),
    ("single_tank", "multi_tank"),
    ("single_tank", "aquifer_*"),
    ("tank_ce", "tank_ce_aquifer_*"),
)


@dataclass(frozen=True)
class FTest:
    simpler: str
    larger: str
    f_statistic: float
    df_num: int
    df_den: int
    p_value: float


@dataclass(frozen=True)
class ModelAssessment:
    name: str
    title: str
    n_params: int
    n_obs: int
    rss_psia2: float
    rms_psia: float
    aic: float
    aicc: float
    bic: float
    delta_aicc: float
    akaike_weight: float
    support: str  # "best", "comparable", "some support", "little support"
    giip_bscf: float | None
    giip_low_bscf: float | None
    giip_high_bscf: float | None
    runs: RunsTest | None
    lag1_autocorrelation: float | None
    identifiable: bool
    converged: bool
    notes: tuple[str, ...]


@dataclass(frozen=True)
class ModelComparison:
    rows: tuple[ModelAssessment, ...]  # ranked by AICc, best first
    f_tests: tuple[FTest, ...]
    preferred: str | None
    comparable: tuple[str, ...]  # models within COMPARABLE_DELTA of the best, best included
    statement: str
    left_out: tuple[tuple[str, str], ...]  # (model, why it could not be compared)
    comparable_delta: float = COMPARABLE_DELTA
    little_support_delta: float = LITTLE_SUPPORT_DELTA
    # The envelope of the comparable models' GIIP intervals [Bscf]: the range to report when
    # the data do not single out one model (None when any of them is unbounded).
    comparable_giip_low_bscf: float | None = None
    comparable_giip_high_bscf: float | None = None

    def row(self, name: str) -> ModelAssessment | None:
        return next((r for r in self.rows if r.name == name), None)


def information_criteria(rss: float, n: int, k: int) -> tuple[float, float, float]:
    """(AIC, AICc, BIC) of a least-squares fit; AICc is infinite when n <= k + 1."""
    if rss <= 0 or n <= 0:
        raise ValueError("information criteria need a positive RSS and observations")
    base = n * math.log(rss / n)
    aic = base + 2 * k
    aicc = aic + 2 * k * (k + 1) / (n - k - 1) if n - k - 1 > 0 else math.inf
    return aic, aicc, base + k * math.log(n)


def lag1_autocorrelation(residuals) -> float | None:
    """r1 = sum (e_t - mean)(e_t+1 - mean) / sum (e_t - mean)^2; None for < 3 values."""
    e = np.asarray(residuals, float)
    if e.size < 3:
        return None
    d = e - e.mean()
    den = float(d @ d)
    return float(d[:-1] @ d[1:] / den) if den > 0 else None


def nested_f_test(simpler: ModelFit, larger: ModelFit) -> FTest:
    """Extra-sum-of-squares F-test of a model against a larger one that contains it."""
    dk = larger.n_params - simpler.n_params
    dof = larger.n_obs - larger.n_params
    if dk <= 0 or dof <= 0 or simpler.n_obs != larger.n_obs:
        raise ValueError("the F-test needs a larger model with more parameters on the same observations")
    gain = max(simpler.rss_psia2 - larger.rss_psia2, 0.0)  # a non-converged larger fit gains nothing
    f = (gain / dk) / (larger.rss_psia2 / dof)
    return FTest(simpler.name, larger.name, float(f), dk, dof, float(f_sf(f, dk, dof)))


def _nests(simpler: str, larger: str) -> bool:
    for a, b in NESTED:
        if a == simpler and (b == larger or (b.endswith("*") and larger.startswith(b[:-1]))):
            return True
    return False


def support_label(delta: float, comparable: float = COMPARABLE_DELTA, little: float = LITTLE_SUPPORT_DELTA):
    if delta == 0.0:
        return "best"
    if delta < comparable:
        return "comparable"
    return "some support" if delta <= little else "little support"


def compare_models(
    fits,
    gp_bscf,
    *,
    comparable_delta: float = COMPARABLE_DELTA,
    little_support_delta: float = LITTLE_SUPPORT_DELTA,
) -> ModelComparison:
    """Rank fitted models by AICc and test the nested pairs.

    Parameters
    ----------
    fits : sequence of ModelFit
        Models fitted to the same included surveys (same order).
    gp_bscf : array
        Cumulative production at those surveys [Bscf], to order residuals for the runs
        test and the autocorrelation.
    comparable_delta, little_support_delta : float
        ΔAICc thresholds of the support labels (defaults 2 and 10).
    """
    gp = np.asarray(gp_bscf, float)
    order = np.argsort(gp, kind="stable")
    left_out = []
    usable = []
    for f in fits:
        if f.n_obs != gp.size or np.asarray(f.residual_pz_psia).size != gp.size:
            left_out.append((f.name, f"fitted to {f.n_obs} surveys, not the {gp.size} the others use"))
        elif not (f.rss_psia2 > 0 and math.isfinite(f.rss_psia2)):
            left_out.append((f.name, "no usable residual sum of squares"))
        elif f.n_obs - f.n_params - 1 <= 0:
            left_out.append((f.name, f"{f.n_params} parameters leave no degrees of freedom"))
        else:
            usable.append(f)
    crit = {f.name: information_criteria(f.rss_psia2, f.n_obs, f.n_params) for f in usable}
    best = min((c[1] for c in crit.values()), default=math.nan)
    delta = {name: c[1] - best for name, c in crit.items()}
    raw = {name: math.exp(-0.5 * d) for name, d in delta.items()}
    total = sum(raw.values())
    rows = []
    for f in sorted(usable, key=lambda f: (delta[f.name], f.n_params)):
        aic, aicc, bic = crit[f.name]
        e = np.asarray(f.residual_pz_psia, float)[order]
        rows.append(
            ModelAssessment(
                f.name,
                f.title,
                f.n_params,
                f.n_obs,
                f.rss_psia2,
                math.sqrt(f.rss_psia2 / f.n_obs),
                aic,
                aicc,
                bic,
                delta[f.name],
                raw[f.name] / total,
                support_label(delta[f.name], comparable_delta, little_support_delta),
                f.giip_bscf,
                f.giip_low_bscf,
                f.giip_high_bscf,
                runs_test(e),
                lag1_autocorrelation(e),
                f.identifiable,
                f.converged,
                f.notes,
            )
        )
    by_name = {f.name: f for f in usable}
    f_tests = tuple(
        nested_f_test(by_name[a], by_name[b])
        for a in by_name
        for b in by_name
        if _nests(a, b) and by_name[b].n_params > by_name[a].n_params
    )
    comparable = tuple(r.name for r in rows if r.delta_aicc < comparable_delta)
    preferred = rows[0].name if rows else None
    low, high = comparable_giip_envelope([r for r in rows if r.name in comparable])
    return ModelComparison(
        tuple(rows),
        f_tests,
        preferred,
        comparable,
        _statement(rows, comparable_delta, (low, high)),
        tuple(left_out),
        comparable_delta,
        little_support_delta,
        low,
        high,
    )


def comparable_giip_envelope(rows) -> tuple[float | None, float | None]:
    """(lowest low, highest high) of the rows' GIIP intervals [Bscf]; (None, None) when any
    interval is unbounded or missing (an envelope with an open end is not a range)."""
    if not rows or any(r.giip_low_bscf is None or r.giip_high_bscf is None for r in rows):
        return None, None
    return min(r.giip_low_bscf for r in rows), max(r.giip_high_bscf for r in rows)


def _giip_text(r: ModelAssessment) -> str:
    if r.giip_bscf is None:
        return "no GIIP"
    if r.giip_low_bscf is not None and r.giip_high_bscf is not None:
        return f"GIIP {r.giip_bscf:.1f} Bscf ({r.giip_low_bscf:.1f}-{r.giip_high_bscf:.1f})"
    return f"GIIP {r.giip_bscf:.1f} Bscf (interval not bounded)"


def _statement(rows, comparable_delta: float, envelope=(None, None)) -> str:
    if not rows:
        return "no model could be compared"
    best = rows[0]
    others = [r for r in rows[1:] if r.delta_aicc < comparable_delta]
    text = f"Best fit: {best.title}, {_giip_text(best)}"
    if others:
        low, high = envelope
        spread = (
            f"GIIP {low:.1f}-{high:.1f} Bscf across these models (the span of their intervals)"
            if low is not None
            else "no bounded GIIP range across these models (at least one interval is unbounded)"
        )
        text += (
            f". Fitting comparably (ΔAICc < {comparable_delta:g}): "
            + "; ".join(f"{r.title}, {_giip_text(r)}, ΔAICc {r.delta_aicc:.1f}" for r in others)
            + f". The data do not single out one model: {spread}; treat the spread of these"
            " estimates as part of the uncertainty"
        )
    else:
        text += f"; the next model is {rows[1].delta_aicc:.1f} AICc units behind" if len(rows) > 1 else ""
    return text + "."


@dataclass(frozen=True)
class CurvatureTest:
    """Weighted quadratic p/z = c0 + c1 Gp + c2 Gp^2: is the bend significant?

    c2 < 0 (concave down) is the overpressure shape; c2 > 0 (concave up) that of aquifer
    support or a connected neighbour (domain reference §2.4, §4.3). Curvature alone does
    not tell the mechanism.
    """

    c2_psia_per_bscf2: float
    se_psia_per_bscf2: float
    t_statistic: float
    p_value: float  # two-sided
    n_obs: int


def curvature_test(gp_bscf, pz_psia, weights=None) -> CurvatureTest | None:
    """t-test of the quadratic term of p/z against Gp; None with fewer than 5 points or
    fewer than 3 distinct cumulative productions (no curvature to test)."""
    x = np.asarray(gp_bscf, float)
    y = np.asarray(pz_psia, float)
    w = np.ones_like(x) if weights is None else np.asarray(weights, float)
    if x.size < 5 or np.unique(x).size < 3:
        return None
    scale = float(np.max(np.abs(x)))
    a = np.column_stack([np.ones_like(x), x / scale, (x / scale) ** 2]) * np.sqrt(w)[:, None]
    coef, *_ = np.linalg.lstsq(a, y * np.sqrt(w), rcond=None)
    r = y * np.sqrt(w) - a @ coef
    dof = x.size - 3
    s2 = float(r @ r) / dof
    cov = s2 * np.linalg.inv(a.T @ a)
    c2, se = coef[2] / scale**2, math.sqrt(max(cov[2, 2], 0.0)) / scale**2
    if se == 0:
        return CurvatureTest(
            float(c2), 0.0, math.copysign(math.inf, c2) if c2 else 0.0, 0.0 if c2 else 1.0, x.size
        )
    t = c2 / se
    return CurvatureTest(float(c2), float(se), float(t), float(2 * t_sf(abs(t), dof)), int(x.size))
