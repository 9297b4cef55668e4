"""Gas the set-apart compartment has given to the producers: a range part of the connected tank.

The connected tank's line (connected.py) treats the producers' compartment as closed. When a
neighbour feeds it, part of the produced gas came from the neighbour and the line reads the
producers' compartment too large: with Q the gas that has crossed by the time of a survey and
G_p the field's cumulative production then, the compartment's own material balance
G_1 δ_1 = G_p − Q against the line's G_app δ_1 = G_p gives G_1 = G_app (1 − Q/G_p).

The set-apart well measures the neighbour's depletion δ_2 = 1 − (p/z)/(p/z)_i, so Q = G_2 δ_2
(the neighbour produces nothing itself). Its size G_2 is what the mapped volume holds beyond
the connected tank, G_2 = max(V_P50 − G_app, 0), when a volumetric estimate of the field is
given. Without one, or when the well shows no depletion, there is no part. The part is a
σ of ln GIIP that puts the P90 at G_app (1 − Q/G_p) by itself (σ = −ln(1 − Q/G_p) / 1.2816);
the headline stays the connected tank's line, which is what the producers' data say.
Material balance of two tanks: Payne (1996), Hagoort & Hoogstra (1999), domain reference §4.3;
sizing the neighbour from the map is common practice.
"""

from __future__ import annotations

import math

from ..inputs import FieldInputs
from ..prepare.points import PreparedData
from .ranges import Z90

#: Largest share of the produced gas ascribed to the neighbour (beyond it the connected tank is
#: not a meaningful basis and the two-tank model should carry the field).
MAX_SHARE = 0.5


def neighbour_share(
    inputs: FieldInputs, prepared: PreparedData, connected_giip_bscf: float, apart: tuple[str, ...]
) -> float | None:
    """Q / G_p [-] at the set-apart wells' latest survey, or None when it cannot be sized."""
    vol = inputs.volumetric
    if not apart or vol is None or connected_giip_bscf <= 0:
        return None
    g2 = max(vol.p50_bscf - connected_giip_bscf, 0.0)
    points = [p for p in prepared.points if p.well in apart and p.gp_bscf > 0]
    if g2 <= 0 or not points:
        return None
    last = max(points, key=lambda p: p.t_days)
    fall = max(1.0 - last.pz_psia / prepared.initial_pz_psia, 0.0)
    if fall <= 0:
        return None
    return min(g2 * fall / last.gp_bscf, MAX_SHARE)


def neighbour_sigma(share: float | None) -> float | None:
    """σ of ln GIIP whose P90 alone is G_app (1 − share); None without a share."""
    if share is None or share <= 0:
        return None
    return -math.log(1.0 - share) / Z90
