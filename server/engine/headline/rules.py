"""The automatic basis: move away from the straight line only on decisive evidence.

A model other than the straight p/z line becomes the basis only when all of these hold
(docs/flags.md "The headline basis"; thresholds are team settings, :class:`FlagThresholds`):

1. the field has depleted enough to judge (no "too little depletion" flag);
2. the flag of the model's mechanism has fired (overpressure: rock and water expansion;
   aquifer support: the aquifer models; compartments: the tank networks; one flag for
   "aquifer or compartment": both families);
3. the data determine the model: GIIP bounded, no parameter at a search bound, and its
   interval no wider than ``basis_max_giip_ratio`` (high / low);
4. it is physically plausible: GIIP above the gas already produced, and for a mechanism
   that supports the pressure (aquifer, rock and water expansion) below the straight
   line's (support makes the line overstate, never understate);
5. it fits better than the straight line by ``model_preference_delta_aicc`` AICc units,
   or at all when independent evidence points to the mechanism (water-gas ratio rising
   for an aquifer, an overpressure gradient for rock and water expansion, wells that
   disagree for compartments).

A well reading near initial pressure while the others deplete is another compartment: the
connected tank (the line of the other wells) is then the basis. Among qualifying models
the best AICc wins; where the aquifer and tank-network families both qualify (the data
cannot tell them apart) the lower GIIP is taken, as the cautious reading. Among comparable
aquifer models the radial van Everdingen-Hurst solution is preferred to its approximations
(pot, Fetkovich), and one inside the volumetric range to one outside it.
"""

from __future__ import annotations

from collections.abc import Sequence

from ..diagnosis.diagnose import Diagnosis
from ..diagnosis.flags import Flag
from ..diagnosis.support_signs import (
    bend_followed,
    cole_rising,
    cole_strictly_rising,
    compressible_support,
    map_followed,
    water_rising,
)
from ..thresholds import FlagThresholds
from .types import ModelOutcome

AQUIFERS = ("aquifer_pot", "aquifer_fetkovich", "aquifer_veh_radial")
NETWORKS = ("two_tank", "multi_tank")
SUPPORT = (*AQUIFERS, "tank_ce")  # mechanisms that hold the pressure up


def _usable(o: ModelOutcome | None, gp_bscf: float, th: FlagThresholds) -> bool:
    if o is None or not (o.has_results and o.determined) or o.giip_bscf <= gp_bscf:
        return False
    low, high = o.giip_low_bscf, o.giip_high_bscf
    return low is not None and high is not None and low > 0 and high / low <= th.basis_max_giip_ratio


def _gain(diag: Diagnosis, model: str) -> float | None:
    cmp = diag.comparison
    if cmp is None:
        return None
    single, row = cmp.row("single_tank"), cmp.row(model)
    return None if single is None or row is None else single.aicc - row.aicc


def _independent(model: str, ev, th: FlagThresholds) -> bool:
    """Evidence for the mechanism that does not come from the fit itself."""
    if model in AQUIFERS:  # rising water, a rising Cole plot, a bend or the map an aquifer model follows
        return (
            cole_rising(ev, th)
            or bend_followed(ev, th) is not None
            or map_followed(ev, th) is not None
            or water_rising(ev, th)
        )
    if model == "tank_ce":
        g = ev.gradient_psi_per_ft
        return g is not None and g >= th.overpressure_gradient_psi_per_ft
    return any(f.disagrees for f in ev.wells)


def _need(model: str, ev, th: FlagThresholds) -> float:
    """AICc units by which the model must beat the straight line. Formation water rising at the
    wells shows the aquifer itself, and a Cole plot rising by the flag's strict rule
    (``cole_p_value``, ``cole_min_change_frac``) shows support without any model: F/Eg of a
    closed tank stays at G (Cole 1969; domain reference §2.3). Either rules the line (no
    influx) out, so an aquifer model then only has to keep some support against it (no more
    than ``model_preference_delta_aicc`` behind; engine 0.6.8). Other independent evidence: any
    margin; none: the preference margin."""
    if model in AQUIFERS and (water_rising(ev, th) or cole_strictly_rising(ev, th)):
        return -th.model_preference_delta_aicc
    return 0.0 if _independent(model, ev, th) else th.model_preference_delta_aicc


def automatic_basis(
    outcomes: Sequence[ModelOutcome],
    flags: Sequence[Flag],
    diag: Diagnosis,
    th: FlagThresholds,
    gp_bscf: float,
) -> tuple[str | None, str]:
    """(model key, reason) of the automatic basis; (None, why) when no model has results."""
    by = {o.model: o for o in outcomes}
    codes = {f.code for f in flags}
    line = by.get("single_tank")
    line_ok = line is not None and line.has_results
    stay = "single_tank" if line_ok else None
    if "too_little_depletion" in codes:
        return stay, "too little depletion to tell mechanisms apart: the straight p/z line, with a wide range"
    connected = by.get("connected_tank")
    split = "compartment_signature" in codes and _usable(connected, gp_bscf, th)
    read = (
        "the producers' tank of the two-tank fit that reads that well's surveys (it allows for the gas "
        "the other compartment feeds them)"
        if connected is not None and connected.network_read
        else "the line of the other wells"
    )
    if split and any(f.disagrees and f.near_initial for f in diag.wells):
        return "connected_tank", (
            "a well reads near the initial pressure while the others deplete: it sees another "
            f"compartment, so the volume connected to the producers is {read}"
        )
    families = []
    if "overpressure_signature" in codes:
        families.append(("tank_ce",))
    if codes & {"aquifer_signature", "aquifer_or_compartment"}:
        families.append(AQUIFERS)
        # Support that grows with the pressure drop on a normally pressured field: the
        # determined constant-compressibility tank is the small aquifer's balance.
        if "overpressure_signature" not in codes and compressible_support(diag.evidence, th):
            families.append(("tank_ce",))
    if codes & {"compartment_signature", "aquifer_or_compartment"}:
        families.append(NETWORKS)
    qualified = []
    for family in families:
        for model in family:
            o = by.get(model)
            gain = _gain(diag, model)
            if not _usable(o, gp_bscf, th) or gain is None:
                continue
            if model in SUPPORT and line_ok and o.giip_bscf >= line.giip_bscf:
                continue
            need = _need(model, diag.evidence, th)
            if gain >= need:
                qualified.append((o, gain))
    if split and not any(q[0].model in NETWORKS for q in qualified):
        return "connected_tank", (
            "a well reads far above the others' trend, having seen little of their depletion: it "
            f"sees another compartment, which no qualifying tank network explains, so the volume "
            f"connected to the producers is {read}"
        )
    if not qualified:
        if not line_ok:
            return None, "no model has a GIIP and an EUR"
        why = "no mechanism is both flagged and determined by the data"
        return "single_tank", why + ": the straight p/z line"
    aquifer = sorted((q for q in qualified if q[0].model in AQUIFERS), key=lambda q: -q[1])
    network = sorted((q for q in qualified if q[0].model in NETWORKS), key=lambda q: -q[1])
    if aquifer and network and "aquifer_or_compartment" in codes:
        o, gain = min(aquifer[:1] + network[:1], key=lambda q: q[0].giip_bscf)
        return o.model, (
            f"an aquifer and a neighbouring tank explain the data comparably; the lower GIIP "
            f"({o.title}, {o.giip_bscf:.0f} Bscf) is taken as the cautious reading"
        )
    best, best_gain = max(qualified, key=lambda q: q[1])
    o, gain = _radial_diffusion(best, best_gain, qualified, th)
    mapped = _inside_the_map(o, gain, qualified, diag.evidence.volumetric, th)
    if mapped is not None:
        other, (o, gain), vol = o, mapped, diag.evidence.volumetric
        return o.model, (
            f"its mechanism is flagged, the data determine it, and it fits as well as the "
            f"{_lower(other.title)} (within "
            f"{th.comparable_delta_aicc:g} AICc units), whose GIIP lies outside the volumetric range "
            f"({vol.p90_bscf:.0f}-{vol.p10_bscf:.0f} Bscf) while its own ({o.giip_bscf:.0f} Bscf) lies inside"
        )
    if not line_ok:
        return o.model, f"its mechanism is flagged and the data determine it ({o.giip_bscf:.0f} Bscf)"
    ev = diag.evidence
    sign = (
        "formation water rising at the wells"
        if water_rising(ev, th)
        else f"a Cole plot rising by {100 * ev.cole.change_frac:.0f} % (p = {ev.cole.p_value:.2g})"
    )
    fit = (
        f"it fits better than the straight line by {gain:.0f} AICc units"
        if gain >= 0
        else f"{sign} rules out a tank without influx, and it fits within {-gain:.0f} AICc units "
        "of the straight line"
    )
    radial = (
        ""
        if o is best
        else f"; taken over the best-fitting {_lower(best.title)}, within {th.comparable_delta_aicc:g} AICc "
        "units of it, because it solves the aquifer's radial flow where that model approximates it"
    )
    return o.model, (
        f"its mechanism is flagged, the data determine it, and {fit} "
        f"({o.giip_bscf:.0f} against {line.giip_bscf:.0f} Bscf){radial}"
    )


def _lower(title: str) -> str:
    return title[:1].lower() + title[1:]


def _radial_diffusion(best, gain, qualified, th: FlagThresholds):
    """(outcome, gain): the van Everdingen-Hurst radial model when it qualifies and fits comparably
    (within ``comparable_delta_aicc``) to a best-fitting pot or Fetkovich aquifer; else ``best``.

    The radial model solves the diffusivity equation in the aquifer, infinite or bounded
    (van Everdingen & Hurst 1949); the Fetkovich model replaces it by pseudo-steady flow, exact
    only once the aquifer's boundary is felt, and the pot by instant equilibrium (Fetkovich
    1971; Dake 1978 ch. 9, from memory). When the surveys cannot tell them apart the exact
    solution is the reading to book (engine 0.6.9; bench_accuracy seeds 1-200: 1,949 → 1,952
    fields met, the truth inside the range in 17 more aquifer fields, benchmarks/README.md)."""
    if best.model not in ("aquifer_pot", "aquifer_fetkovich"):
        return best, gain
    radial = [
        q for q in qualified if q[0].model == "aquifer_veh_radial" and gain - q[1] < th.comparable_delta_aicc
    ]
    return radial[0] if radial else (best, gain)


def _inside_the_map(best, gain, qualified, vol, th: FlagThresholds):
    """(outcome, gain) of another qualified aquifer model that fits comparably to ``best`` (within
    ``comparable_delta_aicc``) and whose GIIP lies inside the volumetric P90-P10 range while
    ``best``'s does not; else None. The surveys cannot tell the two apart; the mapped volume,
    evidence independent of them, can (reconciling material balance with volumetrics is common
    practice; engine 0.6.8)."""
    if vol is None or best.model not in AQUIFERS:
        return None

    def inside(o):
        return vol.p90_bscf <= o.giip_bscf <= vol.p10_bscf

    if inside(best):
        return None
    near = [
        q
        for q in qualified
        if q[0].model in AQUIFERS
        and q[0] is not best
        and gain - q[1] < th.comparable_delta_aicc
        and inside(q[0])
    ]
    return max(near, key=lambda q: q[1]) if near else None
