"""Flag thresholds: every number a flag rule compares with, its default and its allowed range.

A plain input type (carried by :class:`.inputs.FieldInputs`, so it is part of the inputs'
fingerprint); the rules that read them are in :mod:`.diagnosis.flag_rules` and each
threshold's meaning and source are in docs/flags.md.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields

from .errors import EngineError

#: The p/z estimate refuses when the fitted line has fallen less than this share of its
#: intercept by the last survey (common practice, from memory); the flags' "too little
#: depletion" rule uses the same fall by default.
MIN_DEPLETION_FRAC = 0.10


@dataclass(frozen=True)
class FlagThresholds:
    """Every threshold the flags use, with its default (see docs/flags.md)."""

    min_depletion_frac: float = MIN_DEPLETION_FRAC  # p/z fall below this: too little depletion
    min_surveys: int = 3  # included surveys needed to judge anything
    model_preference_delta_aicc: float = 10.0  # a mechanism model must beat the single tank by this
    unidentified_model_delta_aicc: float = 30.0  # ... or by this when its parameters are undetermined
    comparable_delta_aicc: float = 2.0  # models closer than this to the best fit comparably
    overpressure_gradient_psi_per_ft: float = 0.55  # initial pressure / datum depth
    normal_rock_max_ce_per_psi: float = 1e-5  # most rock and water expansion of normally pressured rock
    curvature_p_value: float = 0.01  # significance of the p/z bend
    cole_p_value: float = 0.01  # a Cole plot "rising" by the Cole rule must also be this significant
    cole_min_change_frac: float = 0.02  # ... and rise by at least this share across the production
    support_model_delta_aicc: float = 4.0  # an aquifer model a bend or the map agrees with beats the line by
    bend_min_giip_drop_frac: float = 0.05  # ... with a GIIP at least this share below the line's
    water_rise_factor: float = 2.0  # late / early water-gas ratio
    water_rise_min_stb_per_mmscf: float = 5.0  # and the late ratio at least this
    well_disagreement_sigma: float = 4.0  # median offset of a well in noise widths
    well_min_points: int = 2  # surveys of a well beyond that, on the same side
    near_initial_ratio: float = 0.25  # a well that has seen at most this share of the others' fall
    apart_max_depletion_ratio: float = 0.75  # a well above the others that has seen at most this share
    outlier_sigma: float = 4.0  # a survey this many noise widths off the trend is an outlier
    above_initial_sigma: float = 4.0  # a survey above pi by this many noise widths ...
    above_initial_min_psia: float = 25.0  # ... and by at least this much
    survey_gap_days: float = 3 * 365.25  # no survey for this long while producing
    production_gap_days: float = 62.0  # a production period longer than this (missing months)
    max_scatter_frac: float = 0.01  # survey noise on p/z above this share of the initial p/z
    well_trend_min_points: int = 5  # other wells' surveys needed before a well is judged against them
    # The headline basis and its booked range (engine/headline; docs/flags.md "The headline basis").
    basis_max_giip_ratio: float = 2.0  # widest GIIP interval (high / low) of a basis
    metered_gas_uncertainty_frac: float = 0.02  # bias of metered gas volumes (common practice, ~1-3 %)
    gauge_uncertainty_psi: float = 5.0  # accuracy of a pressure survey (quartz gauges ~1-5 psi, from memory)
    z_uncertainty_frac: float = 0.01  # z-factor correlation against laboratory data (DAK ~0.5-1 %, memory)
    z_uncertainty_lab_frac: float = 0.003  # a laboratory z table (common practice)

    def __post_init__(self):
        for f in fields(self):
            check_threshold(f.name, getattr(self, f.name))


class FlagThresholdError(EngineError):
    """A flag threshold outside the range in which its rule means anything."""


@dataclass(frozen=True)
class ThresholdLimits:
    """The range a threshold may be set to (inclusive), its unit and what it means."""

    low: float
    high: float
    unit: str
    meaning: str
    integer: bool = False


#: Every threshold's allowed range. The ranges keep each rule meaningful (a p-value in
#: (0, 0.5], a sigma count that is not below one noise width, ...); the defaults and
#: their reasons are in docs/flags.md.
THRESHOLD_LIMITS: dict[str, ThresholdLimits] = {
    "min_depletion_frac": ThresholdLimits(
        0.01, 0.5, "fraction", "p/z fall below which there is too little depletion to judge"
    ),
    "min_surveys": ThresholdLimits(2, 20, "surveys", "included surveys needed to judge anything", True),
    "model_preference_delta_aicc": ThresholdLimits(
        2.0, 100.0, "AICc", "margin by which a mechanism model must beat the single tank"
    ),
    "unidentified_model_delta_aicc": ThresholdLimits(
        2.0, 200.0, "AICc", "margin when the mechanism model's parameters are not determined"
    ),
    "comparable_delta_aicc": ThresholdLimits(0.5, 10.0, "AICc", "models closer than this fit comparably"),
    "overpressure_gradient_psi_per_ft": ThresholdLimits(
        0.44, 1.0, "psi/ft", "initial pressure / datum depth at or above which a field is overpressured"
    ),
    "normal_rock_max_ce_per_psi": ThresholdLimits(
        0.0,
        1e-3,
        "1/psi",
        "most rock and water expansion of normally pressured rock (more points to an aquifer)",
    ),
    "curvature_p_value": ThresholdLimits(1e-6, 0.2, "p-value", "significance of the p/z bend"),
    "cole_p_value": ThresholdLimits(1e-6, 0.2, "p-value", "significance of a rising Cole plot"),
    "cole_min_change_frac": ThresholdLimits(
        0.0, 1.0, "fraction", "rise of F/Eg across the production a rising Cole plot needs"
    ),
    "support_model_delta_aicc": ThresholdLimits(
        0.0, 100.0, "AICc", "margin over the single tank of an aquifer model a model-free sign agrees with"
    ),
    "bend_min_giip_drop_frac": ThresholdLimits(
        0.0, 0.9, "fraction", "GIIP drop below the straight line that makes a followed bend material"
    ),
    "water_rise_factor": ThresholdLimits(1.1, 20.0, "ratio", "late / early water-gas ratio that is rising"),
    "water_rise_min_stb_per_mmscf": ThresholdLimits(
        0.0, 1000.0, "stb/MMscf", "late water-gas ratio a rising water trend needs"
    ),
    "well_disagreement_sigma": ThresholdLimits(
        1.0, 20.0, "noise widths", "median offset of a well from the others that is a disagreement"
    ),
    "well_min_points": ThresholdLimits(1, 20, "surveys", "surveys of a well beyond that, on one side", True),
    "near_initial_ratio": ThresholdLimits(
        0.0, 0.9, "fraction", "share of the others' p/z fall a well reading near initial has seen"
    ),
    "apart_max_depletion_ratio": ThresholdLimits(
        0.0,
        0.95,
        "fraction",
        "share of the others' p/z fall a well set apart as another compartment has seen",
    ),
    "outlier_sigma": ThresholdLimits(2.0, 20.0, "noise widths", "offset from the trend that is an outlier"),
    "above_initial_sigma": ThresholdLimits(
        1.0, 20.0, "noise widths", "excess over the initial pressure that is suspicious"
    ),
    "above_initial_min_psia": ThresholdLimits(
        0.0, 1000.0, "psi", "and the least excess over the initial pressure that is suspicious"
    ),
    "survey_gap_days": ThresholdLimits(30.0, 7305.0, "days", "time without a survey while producing"),
    "production_gap_days": ThresholdLimits(
        32.0, 3653.0, "days", "production period that suggests missing months"
    ),
    "max_scatter_frac": ThresholdLimits(
        1e-4, 0.2, "fraction", "survey scatter on p/z, as a share of the initial p/z, that is too large"
    ),
    "well_trend_min_points": ThresholdLimits(
        3, 50, "surveys", "other wells' surveys needed to judge a well against their trend", True
    ),
    "basis_max_giip_ratio": ThresholdLimits(
        1.05, 20.0, "ratio", "widest GIIP interval (high / low) of a model that can be the basis"
    ),
    "metered_gas_uncertainty_frac": ThresholdLimits(
        0.0, 0.2, "fraction", "bias of the metered gas volumes, in the booked range"
    ),
    "gauge_uncertainty_psi": ThresholdLimits(0.0, 100.0, "psi", "gauge accuracy, in the booked range"),
    "z_uncertainty_frac": ThresholdLimits(
        0.0, 0.1, "fraction", "error of the z-factor correlation, in the booked range"
    ),
    "z_uncertainty_lab_frac": ThresholdLimits(
        0.0, 0.1, "fraction", "error of a laboratory z table, in the booked range"
    ),
}


def check_threshold(name: str, value) -> None:
    """Raise :class:`FlagThresholdError` unless ``value`` is allowed for threshold ``name``."""
    try:
        lim = THRESHOLD_LIMITS[name]
    except KeyError:
        raise FlagThresholdError(f"unknown flag threshold {name!r}") from None
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise FlagThresholdError(f"flag threshold {name} must be a finite number, got {value!r}")
    if lim.integer and value != int(value):
        raise FlagThresholdError(f"flag threshold {name} must be a whole number, got {value!r}")
    if not lim.low <= value <= lim.high:
        raise FlagThresholdError(
            f"flag threshold {name} must lie between {lim.low:g} and {lim.high:g} {lim.unit}, got {value:g}"
        )
