"""Fit a two-tank (or star N-tank) balance to the surveyed p/z of a field.

Parameters: the common initial p/z, each tank's GIIP and each connection's Gamma'
(see :mod:`.multitank`). Fitted by Levenberg-Marquardt on the weighted p/z residuals at the
included surveys, the same observable as every other model (:mod:`..modelfit`).

Tanks come from the wells' compartment labels when the data carry two or more (surveys
then observe their own compartment, production is split by compartment); otherwise the
field is one produced tank with a hidden neighbour that no well sees.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares

from .. import accel
from ..errors import InsufficientDataError
from ..inputs import FieldInputs
from ..modelfit import ModelFit, parameter_words
from ..prepare.points import PreparedData
from ..pvt.gas import z_factor
from ..pvt.pseudopressure import viscosity_lee_gonzalez_eakin_of_p
from ..stats import t_multiplier
from ..tank.pz_estimate import fit_pz_line
from .multitank import PotentialTable, potential_table, simulate_star_tanks
from .two_tank_sensitivity import simulate_two_with_sensitivities

MAX_TANKS = 4
HIDDEN = "hidden neighbour"
#: Identifiability: a GIIP or connection whose relative standard error exceeds this
#: (a 95 % interval wider than a factor of about 2.7 either way) is not determined by the
#: data. Strong correlation is reported too; it is already priced into the errors.
MAX_RELATIVE_SE = 0.5
MAX_CORRELATION = 0.99


@dataclass(frozen=True)
class TankLayout:
    """Which tank each survey observes and how production is shared between tanks."""

    labels: tuple[str, ...]  # tank 0 is the hub (holds the producers)
    obs_tank: np.ndarray  # tank index of each included survey
    share: np.ndarray  # fraction of each period's production from each tank, (periods, N)
    labelled: bool


def carries_tanks(params: dict) -> bool:
    """Whether fitted parameters are a tank network's (its tanks' GIIPs): the two-tank and star
    fits, and the connected tank read from one (headline/connected.py)."""
    return "giip_tank1_bscf" in params


def network_layout(inputs: FieldInputs, prepared: PreparedData) -> TankLayout:
    """The tanks the network fit makes of a field's labels (tank 0, the hub, holds the producers)."""
    return _layout(inputs, prepared)


def _layout(inputs: FieldInputs, prepared: PreparedData) -> TankLayout:
    pts = [p for p in prepared.points if p.included]
    periods = len(prepared.production_end_t_days)
    by_comp = {k: np.asarray(v, float) for k, v in inputs.production_by_compartment if np.sum(v) > 0}
    survey_labels = {p.compartment for p in pts if p.compartment}
    labels = set(by_comp) | survey_labels
    if len(labels) < 2:
        share = np.zeros((periods, 2))
        share[:, 0] = 1.0
        return TankLayout(("field", HIDDEN), np.zeros(len(pts), int), share, False)
    if by_comp:
        hub = max(by_comp, key=lambda k: float(np.sum(by_comp[k])))
    else:  # no split given: the compartment that has depleted most holds the producers
        t_mid = np.median([p.t_days for p in pts])
        late = {k: [p.pz_psia for p in pts if p.compartment == k and p.t_days >= t_mid] for k in labels}
        hub = min((k for k in labels if late[k]), key=lambda k: float(np.median(late[k])))
    order = [hub] + sorted(labels - {hub}, key=lambda k: -float(np.sum(by_comp.get(k, 0.0))))
    if len(order) > MAX_TANKS:
        raise InsufficientDataError(f"{len(order)} compartments: the tank fit handles at most {MAX_TANKS}")
    index = {k: i for i, k in enumerate(order)}
    obs = np.array([index.get(p.compartment, 0) if p.compartment else 0 for p in pts], int)
    share = np.zeros((periods, len(order)))
    total = np.asarray(inputs.production_gas_mscf, float)
    safe = np.where(total > 0, total, 1.0)
    for k, v in by_comp.items():
        share[:, index[k]] = np.where(total > 0, v / safe, 0.0)
    share[:, 0] += np.clip(1.0 - share.sum(axis=1), 0.0, None)  # unlabelled wells: the hub
    return TankLayout(tuple(order), obs, share, True)


@dataclass(frozen=True)
class _Problem:
    step_days: list
    withdrawal_scf: list  # (steps, N)
    obs_step: np.ndarray  # step whose end follows each survey (0: before production)
    obs_alpha: np.ndarray  # interpolation weight within that step
    obs_tank: np.ndarray
    y: np.ndarray
    sqrt_w: np.ndarray
    potential: PotentialTable

    def step_arrays(self) -> tuple[np.ndarray, np.ndarray]:
        """(step_days, withdrawal_scf) as float arrays, for the compiled march (cached)."""
        cached = self.__dict__.get("_step_arrays")
        if cached is None:
            cached = (np.array(self.step_days, dtype=float), np.array(self.withdrawal_scf, dtype=float))
            object.__setattr__(self, "_step_arrays", cached)
        return cached


def _problem(inputs, prepared, layout, max_steps, potential, viscosity_cp_of_p, step_days=91.3) -> _Problem:
    t_obs, gp_obs, y, w = prepared.arrays()
    ends = np.asarray(prepared.production_end_t_days, float)
    cum = np.asarray(prepared.cumulative_gas_at_end_bscf, float) * 1e9
    if ends.size == 0:
        raise InsufficientDataError("no production: a tank model needs withdrawals")
    # First period starts one period length before its end (as production.cumulative_at_times).
    first = ends[0] - (ends[1] - ends[0] if ends.size > 1 else 30.4375)
    per_period = np.diff(np.concatenate([[0.0], cum]))[:, None] * layout.share
    knots = np.concatenate([[first], ends])
    cum_tank = np.vstack([np.zeros(layout.share.shape[1]), np.cumsum(per_period, axis=0)])
    # Quarterly steps keep the balance within 0.1 psia of daily steps
    # (tests/engine/compartments/test_multitank.py).
    period = float(np.median(np.diff(knots)))
    every = max(1, round(step_days / period), math.ceil(ends.size / max_steps))
    keep = np.unique(np.concatenate([np.arange(0, knots.size, every), [knots.size - 1]]))
    knots, cum_tank = knots[keep], cum_tank[keep]
    if t_obs.size and t_obs.max() > knots[-1]:  # surveys after the last month: tanks still equalise
        extra = np.arange(knots[-1] + 30.4375, t_obs.max() + 30.4375, 30.4375)
        knots = np.concatenate([knots, extra])
        cum_tank = np.vstack([cum_tank, np.repeat(cum_tank[-1:], extra.size, axis=0)])
    cum_field = cum_tank.sum(axis=1)
    step = np.searchsorted(knots, t_obs, side="left")
    step = np.clip(step, 0, knots.size - 1)
    alpha = np.zeros(t_obs.size)
    for i, n in enumerate(step):
        if n == 0:
            continue
        dg = cum_field[n] - cum_field[n - 1]
        if dg > 0:
            alpha[i] = (gp_obs[i] * 1e9 - cum_field[n - 1]) / dg
        else:
            alpha[i] = (t_obs[i] - knots[n - 1]) / (knots[n] - knots[n - 1])
    alpha = np.clip(alpha, 0.0, 1.0)

    # The fluid z was computed for (well stream when corrected); the lab table, if any, is
    # not used here: it would change the flow term only, by the table's small deviation.
    fluid = prepared.fluid or inputs.fluid
    return _Problem(
        np.diff(knots).tolist(),
        np.diff(cum_tank, axis=0).tolist(),
        step,
        alpha,
        layout.obs_tank,
        y,
        np.sqrt(w),
        _potential(inputs, fluid, potential, viscosity_cp_of_p),
    )


#: The last flow-potential table built from the field's own z and viscosity: (key, table).
_last_potential: tuple = (None, None)


def _potential(inputs, fluid, potential: str, viscosity_cp_of_p) -> PotentialTable:
    """The flow-potential table of the field's gas up to 1.5 p_i + 500 psia. Without a given
    viscosity the table depends only on the gas, temperature, z method and p_i, and a field's
    analysis asks for it again (the two-tank fit, then its stepped recovery): the last one is
    kept (issue 17)."""
    global _last_potential
    t_degF, method = inputs.reservoir_temperature_degF, inputs.choices.z_method
    key = (fluid, t_degF, method, float(inputs.initial_pressure_psia), potential)
    if viscosity_cp_of_p is None and _last_potential[0] == key:
        return _last_potential[1]

    last: list = [None, None]  # the viscosity asks for z on the table's own pressures again

    def z_of_p(p):
        if p is not last[0]:
            last[:] = [p, z_factor(p, t_degF, fluid, method)]
        return last[1]

    viscosity = viscosity_cp_of_p
    if potential == "pseudo_pressure" and viscosity is None:
        viscosity = viscosity_lee_gonzalez_eakin_of_p(t_degF, fluid.gas_gravity, z_of_p)
    table = potential_table(
        z_of_p, 1.5 * inputs.initial_pressure_psia + 500.0, method=potential, viscosity_cp_of_p=viscosity
    )
    if viscosity_cp_of_p is None:
        _last_potential = (key, table)
    return table


#: Search box of the log parameters (GIIP in Bscf, connection in its unit): far wider than
#: any field, it only keeps a wandering fit from overflowing; a fit at the edge is flat
#: there and reported as not identifiable.
LOG_GIIP_BOUNDS = (math.log(1e-4), math.log(1e7))
LOG_GAMMA_BOUNDS = (math.log(1e-14), math.log(1e6))


def _predict(theta, prob: _Problem, n_tanks: int) -> np.ndarray:
    if n_tanks == 2 and accel.enabled():  # the compiled march: the same fractions, bit for bit
        return _march_two(theta, prob)[0]
    pzi = theta[0]
    g = np.exp(np.clip(theta[1 : 1 + n_tanks], *LOG_GIIP_BOUNDS)) * 1e9
    gam = np.exp(np.clip(theta[1 + n_tanks :], *LOG_GAMMA_BOUNDS))
    march = simulate_star_tanks(g, gam, pzi, prob.potential, prob.step_days, prob.withdrawal_scf)
    # fromiter: about twice as fast as numpy.array on a list of tuples (the fit calls this often)
    u = np.fromiter(itertools.chain.from_iterable(march), float, n_tanks * len(march)).reshape(-1, n_tanks)
    n, a, k = prob.obs_step, prob.obs_alpha, prob.obs_tank
    prev = u[np.maximum(n - 1, 0), k]
    return pzi * (prev + a * (u[n, k] - prev))


def _jacobian_two(theta, prob: _Problem) -> np.ndarray:
    """d(weighted residual)/dθ of the two-tank model from the forward sensitivities
    (:mod:`.two_tank_sensitivity`); zero along a log parameter clipped to its bound."""
    return _march_two(theta, prob)[1]


def _march_two(theta, prob: _Problem) -> tuple[np.ndarray, np.ndarray]:
    """(p/z at the surveys, d(weighted residual)/dθ) of the two-tank model from one march.

    The march with sensitivities gives the same tank fractions as the plain one, bit for bit
    (tests/engine/compartments/test_two_tank_march.py), so the prediction equals
    :func:`_predict`'s."""
    pzi = float(theta[0])
    lg = np.asarray(theta[1:3], float)
    lgam = float(theta[3])
    g = np.exp(np.clip(lg, *LOG_GIIP_BOUNDS)) * 1e9
    gam = float(np.exp(np.clip(lgam, *LOG_GAMMA_BOUNDS)))  # as _predict computes it
    # Arrays for the compiled march, the problem's own lists for the interpreted one.
    steps = prob.step_arrays() if accel.enabled() else (prob.step_days, prob.withdrawal_scf)
    march = simulate_two_with_sensitivities(g[0], g[1], gam, pzi, prob.potential, *steps)
    u = march[:, :2]  # (steps + 1, 2)
    du = march[:, 2:].reshape(-1, 2, 4)  # (steps + 1, tank, by pzi, G0, G1, Gamma)
    inside = np.array(
        [
            1.0,
            *((LOG_GIIP_BOUNDS[0] <= lg) & (lg <= LOG_GIIP_BOUNDS[1])),
            float(LOG_GAMMA_BOUNDS[0] <= lgam <= LOG_GAMMA_BOUNDS[1]),
        ]
    )
    chain = np.array([1.0, g[0], g[1], gam]) * inside  # d(natural)/dθ
    n, a, k = prob.obs_step, prob.obs_alpha, prob.obs_tank
    before = np.maximum(n - 1, 0)
    frac = u[before, k] + a * (u[n, k] - u[before, k])
    dfrac = du[before, k] + a[:, None] * (du[n, k] - du[before, k])
    dy = pzi * dfrac * chain
    dy[:, 0] += frac
    return pzi * frac, -prob.sqrt_w[:, None] * dy


def _gamma_for(tau_days, g_hub, g_other, pzi, pot: PotentialTable):
    """Gamma' giving an exchange time constant tau between two tanks at initial pressure."""
    g_eff = g_hub * g_other / (g_hub + g_other) * 1e9
    return g_eff / (tau_days * pzi * pot(pzi)[1])


def fit_two_tank(
    inputs: FieldInputs,
    prepared: PreparedData,
    *,
    potential: str = "pseudo_pressure",
    viscosity_cp_of_p=None,
    max_steps: int = 50,
) -> ModelFit:
    """Fit a star network of volumetric tanks (two unless labels give more) to p/z.

    Parameters
    ----------
    inputs, prepared : the field's inputs and its prepared p/z points.
    potential : {"pressure_squared", "pseudo_pressure"}
        Flow-potential form of the connection (see :func:`.multitank.potential_table`).
    viscosity_cp_of_p : callable, optional
        Gas viscosity [cP] against pressure [psia] at reservoir temperature, for the
        pseudo-pressure form; Lee, Gonzalez & Eakin (1966) for the prepared fluid when
        omitted.
    max_steps : int
        Production periods are merged into steps of about a quarter, and into at most
        this many steps (cumulative withdrawals are exact at every step end). Quarterly
        steps stay within 0.1 psia of daily ones, half-year steps within about 0.6 psia
        (tests/engine/compartments/test_multitank.py and the notes in DEVELOPERS.md), far inside survey noise.

    Raises
    ------
    InsufficientDataError
        Too few included surveys for the parameters, or no production.
    """
    layout = _layout(inputs, prepared)
    n_tanks = len(layout.labels)
    k = 2 * n_tanks  # initial p/z, N GIIPs, N - 1 connections
    prob = _problem(inputs, prepared, layout, max_steps, potential, viscosity_cp_of_p)
    n = prob.y.size
    if n < k + 2:
        raise InsufficientDataError(f"{n} included surveys: a {n_tanks}-tank fit needs at least {k + 2}")
    theta0 = _start(prob, layout, prepared, inputs)

    held = {}  # two tanks: θ -> the Jacobian of the march that gave the last residuals

    def resid(theta):
        if n_tanks != 2:
            return prob.sqrt_w * (prob.y - _predict(theta, prob, n_tanks))
        predicted, jacobian = _march_two(theta, prob)
        held.clear()
        held[np.asarray(theta, float).tobytes()] = jacobian
        return prob.sqrt_w * (prob.y - predicted)

    def jac_two(theta):
        jacobian = held.get(np.asarray(theta, float).tobytes())
        return _jacobian_two(theta, prob) if jacobian is None else jacobian

    # Two tanks: the Jacobian from the sensitivities carried in the time-march (one march,
    # not one per parameter), which every residual evaluation runs: Levenberg-Marquardt asks
    # for the Jacobian at each point it accepts, right after its residuals. More tanks:
    # forward differences.
    jac = jac_two if n_tanks == 2 else "2-point"
    # A relative tolerance of 1e-5 on the cost moves AICc by less than 1e-3.
    best = least_squares(
        resid, theta0, jac=jac, method="lm", x_scale="jac", ftol=1e-5, xtol=1e-5, max_nfev=200
    )
    if not (np.all(np.isfinite(best.x)) and np.all(np.isfinite(best.fun))):
        raise InsufficientDataError("the two-tank fit did not settle on finite parameters")
    best.x[1:] = np.clip(
        best.x[1:], *np.array([LOG_GIIP_BOUNDS] * n_tanks + [LOG_GAMMA_BOUNDS] * (n_tanks - 1)).T
    )
    return _model_fit(best, prob, layout, prepared, inputs, resid)


def _start(prob: _Problem, layout: TankLayout, prepared: PreparedData, inputs: FieldInputs) -> np.ndarray:
    """The best starting point of a coarse grid of tank sizes and exchange times."""
    n_tanks = len(layout.labels)
    hub = prob.obs_tank == 0
    _, gp, _, w = prepared.arrays()
    try:
        line = fit_pz_line(gp[hub], prob.y[hub], w[hub])
        pzi, g_single = line.intercept_psia, line.giip_bscf
    except (InsufficientDataError, ValueError):
        pzi, g_single = prepared.initial_pz_psia, 10.0 * max(prepared.cumulative_gas_bscf, 1e-3)
    g_single = max(g_single, 1.05 * prepared.cumulative_gas_bscf, 1e-3)
    span = max(sum(prob.step_days), 30.0)
    candidates = []
    for f_hub in (0.5, 0.8):
        for f_other in (0.3, 1.0):
            for tau in (0.2 * span, span, 5.0 * span):
                g0 = max(f_hub * g_single, 1.02 * prepared.cumulative_gas_bscf)
                go = f_other * g0
                gam = _gamma_for(tau, g0, go, pzi, prob.potential)
                th = np.array([pzi, *np.log([g0] + [go] * (n_tanks - 1)), *np.log([gam] * (n_tanks - 1))])
                res = prob.sqrt_w * (prob.y - _predict(th, prob, n_tanks))
                candidates.append((float(res @ res), th))
    return min(candidates, key=lambda c: c[0])[1]


def _model_fit(res, prob, layout, prepared, inputs, resid) -> ModelFit:
    n_tanks = len(layout.labels)
    n, k = prob.y.size, res.x.size
    theta = res.x
    fitted = _predict(theta, prob, n_tanks)
    r_w = resid(theta)
    rss = float(r_w @ r_w)
    dof = n - k
    s2 = rss / dof
    notes = []
    _, sv, vt = np.linalg.svd(res.jac, full_matrices=False)
    null = sv <= 1e-9 * sv[0] if sv.size and sv[0] > 0 else np.ones(k, bool)

    def variance(grad):
        """Var of a linear combination of theta: infinite along directions the data do not see."""
        proj = vt @ grad
        if np.any(null & (np.abs(proj) > 1e-9 * np.linalg.norm(grad))):
            return math.inf
        return float(s2 * np.sum((proj[~null] / sv[~null]) ** 2))

    eye = np.eye(k)
    se = np.sqrt([variance(e) for e in eye])
    with np.errstate(divide="ignore", invalid="ignore"):
        cov = s2 * (vt.T[:, ~null] / sv[~null] ** 2) @ vt[~null]
        corr = np.where(np.isfinite(np.outer(se, se)), cov / np.outer(se, se), np.nan)
    g = np.exp(theta[1 : 1 + n_tanks])
    gam = np.exp(theta[1 + n_tanks :])
    names = ["initial_pz_psia"] + [f"giip_tank{i + 1}_bscf" for i in range(n_tanks)]
    unit = "scf_per_day_psi2" if prob.potential.name == "pressure_squared" else "scf_cp_per_day_psi2"
    names += [f"transmissibility_tank{i + 1}_{unit}" for i in range(1, n_tanks)]
    values = np.concatenate([[theta[0]], g, gam])
    natural_se = np.concatenate([[se[0]], g * se[1 : 1 + n_tanks], gam * se[1 + n_tanks :]])
    identifiable = True
    for name, rel in zip(names[1:], se[1:], strict=True):
        if not rel <= MAX_RELATIVE_SE:
            identifiable = False
            shown = "unbounded" if not math.isfinite(rel) else f"{100 * rel:.0f} %"
            notes.append(
                f"{parameter_words(name)} is not determined by the data (relative standard error {shown})"
            )
    off = np.abs(corr[np.triu_indices(k, 1)])
    off = off[np.isfinite(off)]
    if off.size and off.max() > MAX_CORRELATION:
        notes.append(f"parameters are strongly correlated (|r| up to {off.max():.3f})")
    total = float(g.sum())
    se_total = math.sqrt(variance(np.concatenate([[0.0], g, np.zeros(n_tanks - 1)])))
    t = t_multiplier(inputs.choices.confidence_level, dof)
    low = max(total - t * se_total, prepared.cumulative_gas_bscf) if math.isfinite(se_total) else None
    high = total + t * se_total if identifiable and math.isfinite(se_total) else None
    reported = total
    if not se_total <= MAX_RELATIVE_SE * total:  # also catches an infinite error
        reported = low = high = None
        notes.append("the connected GIIP is not determined by the data (no neighbour is seen)")
    pzi = theta[0]
    for j in range(1, n_tanks):
        tau = g[0] * g[j] / (g[0] + g[j]) * 1e9 / (gam[j - 1] * pzi * prob.potential(pzi)[1])
        notes.append(
            f"{layout.labels[j]}: {g[j]:.1f} Bscf, exchange time constant about {tau / 365.25:.1f} years"
        )
    if layout.labelled:
        notes.insert(0, "tanks from the wells' compartment labels: " + ", ".join(layout.labels))
    else:
        notes.insert(0, "one produced tank with a hidden neighbour (no compartment labels)")
    form = "pressure-squared" if prob.potential.name == "pressure_squared" else "pseudo-pressure"
    notes.append(f"flow between tanks in the {form} form")
    return ModelFit(
        name="two_tank" if n_tanks == 2 else "multi_tank",
        title="Two tanks with gas flow between them" if n_tanks == 2 else f"{n_tanks} connected tanks",
        n_params=k,
        n_obs=n,
        rss_psia2=rss,
        residual_pz_psia=prob.y - fitted,
        fitted_pz_psia=fitted,
        giip_bscf=reported,
        giip_low_bscf=None if low is None else float(low),
        giip_high_bscf=None if high is None else float(high),
        params={nm: float(v) for nm, v in zip(names, values, strict=True)},
        param_se={nm: float(v) for nm, v in zip(names, natural_se, strict=True)},
        correlation=corr,
        identifiable=identifiable,
        converged=bool(res.success),
        notes=tuple(notes),
    )
