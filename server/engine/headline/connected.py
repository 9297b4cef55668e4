"""The connected tank: the straight p/z line of the wells that share one trend.

A well whose surveys sit above the others' trend as a group, reading near the initial
pressure while the rest deplete (or having seen at most ``apart_max_depletion_ratio`` of
their fall), sees gas the producers do not (domain reference §4.3). One line through both
groups fits neither; the line through the other wells' surveys is the volume connected to
the producers.

That line still reads the gas the neighbour feeds across a leaky boundary as the producers'
own: on forward-model fields with a weak connection it read their tank 2-8 % high, and 6-26 %
high with a connection four times stronger. When the two-tank fit reads the set-apart wells'
surveys as its second tank's pressure and the data determine it, the connected tank is that
fit's producers' (hub) tank instead, which accounts for the feed: within 3 % of the truth on
the same fields (engine 0.6.10; benchmarks/README.md). Its EUR then steps the two tanks.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Sequence

from ..compartments.well_trend import WellFinding, apart_wells
from ..errors import EngineError
from ..inputs import AnalysisChoices
from ..modelfit import ModelFit, determined
from ..prepare.points import PreparedData
from ..stats import t_multiplier
from ..tank.overpressure import single_tank_modelfit


def set_apart(prepared: PreparedData, wells: tuple[WellFinding, ...]) -> PreparedData:
    """The prepared data with the set-apart wells' surveys excluded (the connected tank's data)."""
    apart = set(apart_wells(wells))
    points = tuple(
        dataclasses.replace(p, included=False, reason="another compartment") if p.well in apart else p
        for p in prepared.points
    )
    return dataclasses.replace(prepared, points=points)


#: Largest relative standard error of the hub tank's GIIP for the network to give the connected tank.
MAX_HUB_RELATIVE_SE = 0.25
TITLE = "Connected tank (wells on a separate trend set apart)"  # one title per key (services/words.py)


def connected_tank_fit(
    prepared: PreparedData,
    choices: AnalysisChoices,
    wells: tuple[WellFinding, ...],
    models: Sequence[ModelFit] = (),
    neighbour_wells: tuple[str, ...] = (),
) -> ModelFit | None:
    """The producers' tank of a determined two-tank fit that reads the set-apart wells as its
    second tank (among ``models``), else the line through the included surveys of every well
    but those set apart; None when no well is set apart."""
    apart = set(apart_wells(wells))
    if not apart:
        return None
    hub = _network_hub(models, apart, neighbour_wells, choices, prepared.cumulative_gas_bscf)
    if hub is not None:
        return hub
    try:
        fit = single_tank_modelfit(set_apart(prepared, wells), choices)
    except EngineError:
        return None
    note = f"surveys of {', '.join(sorted(apart))} set apart as another compartment"
    return dataclasses.replace(
        fit,
        name="connected_tank",
        title=TITLE,
        notes=(note, *fit.notes),
    )


def _network_hub(models, apart: set[str], neighbour_wells, choices: AnalysisChoices, gp_bscf: float):
    """The two-tank fit's hub tank as the connected tank, or None (see the module's docstring)."""
    net = next((m for m in models if m.name == "two_tank"), None)
    if net is None or not apart <= set(neighbour_wells) or not determined(net)[0]:
        return None
    g, se = net.params.get("giip_tank1_bscf"), net.param_se.get("giip_tank1_bscf")
    if g is None or se is None or not (math.isfinite(se) and g > 0 and se <= MAX_HUB_RELATIVE_SE * g):
        return None
    t = t_multiplier(choices.confidence_level, net.n_obs - net.n_params)
    note = (
        f"the producers' tank of the two-tank fit, whose second tank reads the surveys of "
        f"{', '.join(sorted(apart))}; it allows for the gas that tank feeds to the producers"
    )
    return dataclasses.replace(
        net,
        name="connected_tank",
        title=TITLE,
        giip_bscf=g,
        giip_low_bscf=max(g - t * se, gp_bscf),
        giip_high_bscf=g + t * se,
        notes=(note, *net.notes),
    )
