"""The connected tank: the straight p/z line of the wells that share one trend.

A well whose surveys sit off the others' trend as a group, reading near the initial
pressure while the rest deplete, sees gas the producers do not (domain reference §4.3).
One line through both groups fits neither; the line through the other wells' surveys is
the volume connected to the producers.
"""

from __future__ import annotations

import dataclasses

from ..compartments.well_trend import WellFinding
from ..errors import EngineError
from ..inputs import AnalysisChoices
from ..modelfit import ModelFit
from ..prepare.points import PreparedData
from ..tank.overpressure import single_tank_modelfit


def apart_wells(wells: tuple[WellFinding, ...]) -> tuple[str, ...]:
    """Wells that read near initial while the others deplete: another compartment."""
    return tuple(sorted(f.well for f in wells if f.disagrees and f.near_initial))


def set_apart(prepared: PreparedData, wells: tuple[WellFinding, ...]) -> PreparedData:
    """The prepared data with the set-apart wells' surveys excluded (the connected tank's data)."""
    apart = set(apart_wells(wells))
    points = tuple(
        dataclasses.replace(p, included=False, reason="another compartment") if p.well in apart else p
        for p in prepared.points
    )
    return dataclasses.replace(prepared, points=points)


def connected_tank_fit(
    prepared: PreparedData, choices: AnalysisChoices, wells: tuple[WellFinding, ...]
) -> ModelFit | None:
    """The line through the included surveys of every well but those set apart, or None."""
    apart = set(apart_wells(wells))
    if not apart:
        return None
    try:
        fit = single_tank_modelfit(set_apart(prepared, wells), choices)
    except EngineError:
        return None
    note = f"surveys of {', '.join(sorted(apart))} set apart as another compartment"
    return dataclasses.replace(
        fit,
        name="connected_tank",
        title="Connected tank (wells on a separate trend set apart)",
        notes=(note, *fit.notes),
    )
