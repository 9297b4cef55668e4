"""One field's analysis: the engine's entry point for the services layer.

Stage 1 (:mod:`..prepare.points`) corrects the data into p/z points; stage 2 (:mod:`.line`)
fits the single-tank p/z estimate the engineer chose (plain, anchored, with a given or fitted
ce), keeps the uncorrected line beside a corrected one for comparison, and fits the
comparable models on the same screened points; :mod:`.diagnosed` fits the rest, compares
them and raises the flags; :mod:`.basis` chooses the headline's basis and forecasts the
plan from it. The result (:mod:`.types`) is a frozen tree of dataclasses that the services
store as JSON with a summary in columns.
"""

from __future__ import annotations

from ..diagnosis.diagnose import field_pz_slope
from ..inputs import FieldInputs
from ..prepare.points import prepare
from .basis import with_forecast, with_headline
from .diagnosed import with_diagnosis, with_volumetric
from .line import analyse_prepared, check_choices, pz_estimate_for, screened_data
from .types import CAUTION, VOLUMETRIC_CAUTION, FieldAnalysis

__all__ = [
    "CAUTION",
    "VOLUMETRIC_CAUTION",
    "FieldAnalysis",
    "analyse_field",
    "analyse_prepared",
    "check_choices",
    "pz_estimate_for",
    "screened_data",
    "with_diagnosis",
    "with_forecast",
    "with_headline",
    "with_volumetric",
]


def analyse_field(inputs: FieldInputs) -> FieldAnalysis:
    """Prepare a field's data, analyse it and diagnose it; the p/z estimate refuses with a
    reason when data are too thin (the diagnosis still runs and says why).

    Raises
    ------
    EngineError
        The engine's only refusal (``InsufficientDataError``, ``InputRangeError``): inputs
        that cannot give an answer, e.g. surveys that all lie at one cumulative production.
        Degenerate fields never raise anything else (tests/engine/test_degenerate_inputs.py).
    """
    check_choices(inputs.choices)
    prepared = prepare(inputs)
    slope = field_pz_slope(inputs, prepared)
    return with_diagnosis(inputs, analyse_prepared(prepared, inputs.choices, pz_slope=slope))
