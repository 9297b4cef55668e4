"""Gas the set-apart compartment has given to the producers: a range part of the connected tank.

The connected tank's line (connected.py) treats the producers' compartment as closed. When a
neighbour feeds it, part of the produced gas came from the neighbour and the line reads the
producers' compartment too large: with Q the gas that has crossed by the time of a survey and
G_p the field's cumulative production then, the compartment's own material balance
G_1 δ_1 = G_p − Q against the line's G_app δ_1 = G_p gives G_1 = G_app (1 − Q/G_p).

The set-apart well measures the neighbour's depletion δ_2 = 1 − (p/z)/(p/z)_i, so Q = G_2 δ_2
(the neighbour produces nothing itself). Its size G_2 is what the mapped volume holds beyond
the producers' compartment, G_2 = V_P50 − G_1, when a volumetric estimate of the field is
given; solved with the balance above (k = δ_2/G_p), G_1 = G_app (1 − V k)/(1 − G_app k), so
Q/G_p = k (V − G_app)/(1 − G_app k). Engine 0.6.8: before, G_2 = V − G_app, which the
neighbour's own feed makes too small (on bench_accuracy's 200 two-compartment fields the range
held the producers' tank in 177; now 191). Without a map, or when the well shows no
depletion, there is no part. The part is a
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
    beyond = vol.p50_bscf - connected_giip_bscf  # V − G_app
    points = [p for p in prepared.points if p.well in apart and p.gp_bscf > 0]
    if beyond <= 0 or not points:
        return None
    last = max(points, key=lambda p: p.t_days)
    fall = max(1.0 - last.pz_psia / prepared.initial_pz_psia, 0.0)
    if fall <= 0:
        return None
    k = fall / last.gp_bscf  # δ_2 / G_p [1/Bscf]
    rest = 1.0 - connected_giip_bscf * k
    if rest <= 0:  # the neighbour would have given all the gas produced: beyond any share
        return MAX_SHARE
    return min(k * beyond / rest, MAX_SHARE)


def neighbour_sigma(share: float | None) -> float | None:
    """σ of ln GIIP whose P90 alone is G_app (1 − share); None without a share."""
    if share is None or share <= 0:
        return None
    return -math.log(1.0 - share) / Z90
