"""A fitted two-tank (or star) model stepped past the history to the abandonment pressure.

The wells produce from the hub tank (and each labelled tank its last share) at a constant
rate, the recent rate unless given; the neighbours feed the hub through their connections
(:mod:`.multitank`). Recovery ends when the hub's p/z falls to the abandonment p/z; gas
left behind in a poorly connected neighbour is not recovered, which is why a two-tank EUR
is below the total GIIP times the volumetric recovery factor.
"""

from __future__ import annotations

import math

import numpy as np

from ..inputs import FieldInputs
from ..modelfit import HORIZON_YEARS, ModelFit, SteppedRecovery
from ..prepare.points import PreparedData
from .multitank import simulate_star_tanks
from .multitank_fit import _layout, _problem, carries_tanks

STEP_DAYS = 91.3


def two_tank_recovery(
    inputs: FieldInputs, prepared: PreparedData, fit: ModelFit, rate_bscf_per_day: float
) -> SteppedRecovery | None:
    """EUR of a fitted tank network at the abandonment p/z of its hub [Bscf], or None."""
    if not carries_tanks(fit.params) or fit.giip_bscf is None or rate_bscf_per_day <= 0:
        return None
    layout = _layout(inputs, prepared)
    n = len(layout.labels)
    prob = _problem(inputs, prepared, layout, 50, "pseudo_pressure", None)
    p = fit.params
    g = [p[f"giip_tank{i + 1}_bscf"] * 1e9 for i in range(n)]
    gam = [v for k, v in p.items() if k.startswith("transmissibility_tank")]
    pzi = p["initial_pz_psia"]
    share = np.asarray(layout.share[-1], float)
    share = share / share.sum() if share.sum() > 0 else np.eye(n)[0]
    n_more = math.ceil(HORIZON_YEARS * 365.25 / STEP_DAYS)
    steps = list(prob.step_days) + [STEP_DAYS] * n_more
    per_step = (rate_bscf_per_day * 1e9 * STEP_DAYS * share).tolist()
    withdrawal = [list(w) for w in prob.withdrawal_scf] + [per_step] * n_more
    u = np.asarray(simulate_star_tanks(g, gam, pzi, prob.potential, steps, withdrawal))
    hub_pz = pzi * u[:, 0]
    cum = np.concatenate([[0.0], np.cumsum(np.sum(withdrawal, axis=1))])
    h = len(prob.step_days)
    pz_ab = prepared.abandonment_pz_psia
    below = np.nonzero(hub_pz[h:] <= pz_ab)[0]
    how = f"stepped at {rate_bscf_per_day * 1e6:,.0f} Mscf/d (the recent rate) from the hub tank"
    if below.size == 0:
        return SteppedRecovery(
            float(cum[-1]) / 1e9, False, HORIZON_YEARS, how + "; above abandonment at the horizon"
        )
    k = h + int(below[0])
    if k == h:
        return SteppedRecovery(float(cum[h]) / 1e9, True, 0.0, how)
    frac = (hub_pz[k - 1] - pz_ab) / max(hub_pz[k - 1] - hub_pz[k], 1e-12)
    eur = cum[k - 1] + frac * (cum[k] - cum[k - 1])
    years = (k - 1 - h + frac) * STEP_DAYS / 365.25
    return SteppedRecovery(float(eur) / 1e9, True, float(years), how)
