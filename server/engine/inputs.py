"""The engine's input contract for one field: arrays with units in their names.

The services layer builds a :class:`FieldInputs` from stored rows; the offline
``tankbook analyse`` command builds one from files. Nothing here knows where the
numbers came from.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .plan import FieldPlan, WellTest
from .pvt.gas import GasFluid
from .thresholds import FlagThresholds
from .units import OILFIELD_60F, StandardConditions
from .volumetrics.estimate import VolumetricResult

Z_METHODS = ("dak", "hall_yarborough")
PSEUDO_CRITICAL_METHODS = ("sutton", "standing_natural_gas", "standing_condensate")
OVERPRESSURE_MODES = ("off", "given", "fitted")
WEIGHTINGS = ("none", "quality")


@dataclass(frozen=True)
class LabTable:
    """A laboratory table at reservoir temperature: pressure -> z (or Bg).

    When given and chosen it takes precedence over the correlations.
    """

    pressure_psia: np.ndarray
    z_factor: np.ndarray | None = None
    bg_rcf_per_scf: np.ndarray | None = None


@dataclass(frozen=True)
class AnalysisChoices:
    """What the engineer chose for this field (stored per field, every change audited)."""

    z_method: str = "dak"
    pseudo_critical_method: str = "sutton"
    use_lab_table: bool = True
    datum_correction: bool = True
    condensate_correction: bool = True
    # Produced water is normally free formation or aquifer water, a liquid withdrawal;
    # only an engineer who knows it is condensed vapour (fresh water, low water-gas
    # ratio) should count it as a gas equivalent. See engine/prepare/points.py.
    water_vapour_correction: bool = False
    overpressure_mode: str = "off"
    effective_compressibility_per_psi: float | None = None
    anchor_initial: bool = False
    weighting: str = "quality"
    # The headline's basis: "automatic" (engine/headline/rules.py) or a model key of
    # engine/headline/types.BASIS_MODELS, with the engineer's reason (required for a model).
    basis_model: str = "automatic"
    basis_reason: str = ""
    confidence_level: float = 0.95
    bootstrap_samples: int = 1000
    random_seed: int = 20261202  # fixed: the same inputs always give the same numbers


@dataclass(frozen=True)
class FieldInputs:
    """Everything the engine needs for one field (oilfield units, absolute pressures).

    Surveys are one entry per measurement (several wells may share a date); production
    is the field total per period, optionally split by compartment label.
    """

    fluid: GasFluid
    reservoir_temperature_degF: float
    initial_pressure_psia: float
    abandonment_pressure_psia: float
    datum_depth_ft: float
    survey_t_days: np.ndarray
    survey_p_psia: np.ndarray  # measured at the gauge, absolute
    survey_gauge_depth_ft: np.ndarray
    survey_included: np.ndarray  # bool: False where an engineer set the survey aside
    production_end_t_days: np.ndarray  # end of each production period, ascending
    production_gas_mscf: np.ndarray  # separator gas per period
    production_condensate_stb: np.ndarray | None = None
    production_water_stb: np.ndarray | None = None
    survey_well: tuple[str, ...] = ()
    survey_compartment: tuple[str | None, ...] = ()
    survey_quality: tuple[str, ...] = ()  # "good" | "fair" | "poor"
    survey_kind: tuple[str, ...] = ()  # "static" | "buildup" | "formation_test"
    survey_exclusion_reason: tuple[str | None, ...] = ()
    survey_id: tuple[int, ...] = ()
    production_by_compartment: tuple[tuple[str, np.ndarray], ...] = ()
    condensate_api: float | None = None
    # The reservoir gas gravity as entered (air = 1); when given, z uses it as it is and the
    # separator gas is recombined only to check it (engine/pvt/wellstream.py).
    wellstream_gravity: float | None = None
    # False when no separator gas gravity is known: fluid.gas_gravity is then the
    # well-stream gravity standing in for it.
    separator_gravity_given: bool = True
    lab_table: LabTable | None = None
    choices: AnalysisChoices = field(default_factory=AnalysisChoices)
    standard_conditions: StandardConditions = OILFIELD_60F
    volumetric: VolumetricResult | None = None  # the static estimate the flags compare with
    flag_thresholds: FlagThresholds = field(default_factory=FlagThresholds)
    well_tests: tuple[WellTest, ...] = ()  # multi-rate tests for deliverability (engine/forecast)
    plan: FieldPlan | None = None  # how the field will be produced; None: no forecast
    production_by_well: tuple[tuple[str, np.ndarray], ...] = ()  # separator gas per period [Mscf]

    @property
    def n_surveys(self) -> int:
        return int(np.asarray(self.survey_t_days).size)

    def survey_text(self, name: str, i: int, default=None):
        """The i-th entry of an optional per-survey tuple, or ``default`` when absent."""
        values = getattr(self, name)
        return values[i] if i < len(values) else default
