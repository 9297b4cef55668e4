"""A fitted tank-with-aquifer model stepped past the history to the abandonment pressure.

The fitted model (G, p_i, aquifer strength and time constant) is solved on the history's
own uniform grid extended into the future, with gas produced at a constant rate (the
recent rate, unless given) and water at its recent rate, until the tank pressure falls to
the abandonment pressure. Influx depends on time, so unlike a volumetric tank the
recovery depends on the rate; a pressure still above abandonment at the horizon gives
the gas produced by then. (Havlena & Odeh 1963 balance; van Everdingen & Hurst 1949,
Fetkovich 1971 influx; domain reference §3.)
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from ..inputs import FieldInputs
from ..modelfit import HORIZON_YEARS, ModelFit, SteppedRecovery
from ..prepare.points import PreparedData
from .models import SPECS, KernelCache
from .tank_solver import TankSolver, tank_grid

#: Net water influx, as a share of the gas pore volume, at which the producing wells are
#: taken to have watered out: the invaded region keeps S_gr/S_gi of its gas, about 0.35
#: (domain reference §2.5: S_gr 0.15-0.40 under water drive, water-drive recovery 0.45-0.70,
#: from memory there; the share itself is common practice, a team may well argue for another).
WATERED_OUT_PV_FRAC = 0.65
#: Most grid steps of history and future together (the solve is dense in the steps).
MAX_TOTAL_STEPS = 1200


def model_parameters(name: str, params: dict[str, float], pi_given: float):
    """(G [scf], p_i [psia], strength [rb/psi], time constant [1/day] or None, r_eD or None)
    of a fitted aquifer model ``name`` (a key of :data:`.models.SPECS`) from its parameters."""
    spec = SPECS[name]
    p = params
    pi = p.get("initial_pressure_psia", pi_given)
    if spec.name == "aquifer_fetkovich":
        strength = p["wei_rb"] / pi
        rate = p["j_rb_per_day_psi"] / strength if strength > 0 else 1.0
    else:
        strength = p[spec.strength_name]
        rate = p.get(spec.rate_name) if spec.has_rate else None
    return p["giip_bscf"] * 1e9, pi, strength, rate, p.get("red")


def aquifer_recovery(
    inputs: FieldInputs, prepared: PreparedData, fit: ModelFit, rate_bscf_per_day: float
) -> SteppedRecovery | None:
    """EUR of a fitted aquifer model at the abandonment pressure [Bscf], or None if it cannot be stepped."""
    if fit.name not in SPECS or fit.giip_bscf is None or rate_bscf_per_day <= 0:
        return None
    grid = tank_grid(inputs, prepared)
    g, pi, strength, rate, red = model_parameters(fit.name, fit.params, grid.initial_pressure_psia)
    dt = float(grid.t_days[0])
    n_hist = grid.n_steps
    n_more = min(math.ceil(HORIZON_YEARS * 365.25 / dt), MAX_TOTAL_STEPS - n_hist)
    # The tank cannot give more than it holds: stop before the cumulative reaches G.
    room = (0.999 * g - float(grid.gp_scf[-1])) / (rate_bscf_per_day * 1e9 * dt)
    n_more = min(n_more, int(room))
    if n_more < 1:
        return None
    ahead = dt * np.arange(1, n_more + 1)
    look = n_hist * dt - 365.25
    wrate = (grid.wp_rb[-1] - float(np.interp(look, grid.t_days, grid.wp_rb))) / 365.25 if look > 0 else 0.0
    ext = dataclasses.replace(
        grid,
        t_days=np.concatenate([grid.t_days, grid.t_days[-1] + ahead]),
        gp_scf=np.concatenate([grid.gp_scf, grid.gp_scf[-1] + rate_bscf_per_day * 1e9 * ahead]),
        wp_rb=np.concatenate([grid.wp_rb, grid.wp_rb[-1] + max(wrate, 0.0) * ahead]),
    )
    spec = SPECS[fit.name]
    influx = spec.influx
    hist = TankSolver(grid, influx).solve(g, pi, strength * KernelCache(spec, dt, n_hist, red).unit(rate))
    kernel = strength * KernelCache(spec, dt, ext.n_steps, red).unit(rate)
    solver = TankSolver(ext, influx)
    start = np.concatenate([hist.p_psia, np.full(n_more, hist.p_psia[-1])])  # Newton from the history
    state = solver.solve(g, pi, kernel, start)
    if not state.converged:
        return None
    p = state.p_psia
    invaded = (state.we_rb - ext.wp_rb) / solver.gas_pore_volume_rb(g, pi)
    ended = (p <= inputs.abandonment_pressure_psia) | (invaded >= WATERED_OUT_PV_FRAC)
    stop = np.nonzero(ended[n_hist - 1 :])[0]
    how = f"stepped at {rate_bscf_per_day * 1e6:,.0f} Mscf/d (the recent rate)"
    if stop.size == 0:
        years = n_more * dt / 365.25
        return SteppedRecovery(
            float(ext.gp_scf[-1]) / 1e9, False, years, how + f"; still producing after {years:.0f} years"
        )
    k = n_hist - 1 + int(stop[0])
    watered = bool(invaded[k] >= WATERED_OUT_PV_FRAC and p[k] > inputs.abandonment_pressure_psia)
    if watered:
        how += (
            f"; ends when water has invaded {100 * WATERED_OUT_PV_FRAC:.0f} % of the gas pore volume "
            "(the rest trapped at residual gas saturation)"
        )
    frac = 1.0
    if k > n_hist - 1:  # interpolate within the step on whichever ended it
        before, after = (p[k - 1], p[k]) if not watered else (-invaded[k - 1], -invaded[k])
        level = inputs.abandonment_pressure_psia if not watered else -WATERED_OUT_PV_FRAC
        frac = float(np.clip((before - level) / max(before - after, 1e-12), 0.0, 1.0))
    else:
        frac = 0.0
    j = max(k - 1, 0)
    gp = ext.gp_scf[j] + frac * (ext.gp_scf[k] - ext.gp_scf[j])
    years = (ext.t_days[j] + frac * (ext.t_days[k] - ext.t_days[j]) - grid.t_days[-1]) / 365.25
    return SteppedRecovery(float(gp) / 1e9, not watered, max(float(years), 0.0), how)
