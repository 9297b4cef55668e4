"""What one field's analysis returns: :class:`FieldAnalysis` and the cautions reported beside it."""

from __future__ import annotations

from dataclasses import dataclass, field

from .. import ENGINE_VERSION
from ..diagnosis.diagnose import Diagnosis
from ..forecast.types import Forecast
from ..headline.types import Basis, ModelOutcome
from ..modelfit import ModelFit
from ..prepare.points import PreparedData
from ..tank.pz_estimate import PzEstimate

CAUTION = (
    "Low, best and high (P90, P50, P10) combine survey scatter, the spread of the models the data "
    "cannot tell apart, and metering, gauge and z-factor errors; they cannot see a mechanism no model "
    "holds. Estimates support, and do not replace, the judgement of qualified engineers and the "
    "reserves rules that apply (regulators, SPE-PRMS)."
)
# In place of CAUTION when the headline rests on the volumetric estimate (engine/headline/volumetric.py).
VOLUMETRIC_CAUTION = (
    "Low, best and high (P90, P50, P10) are the volumetric estimate's; the surveys cannot yet check "
    "them, and EUR assumes a closed tank (an aquifer would lower it). Keep surveying: material balance "
    "takes over once the pressure has fallen enough. Estimates support, and do not replace, the "
    "judgement of qualified engineers and the reserves rules that apply (regulators, SPE-PRMS)."
)


@dataclass(frozen=True)
class FieldAnalysis:
    """Result of one field analysis (Bscf at the field's standard conditions).

    Summary fields: ``giip_low_bscf``/``giip_high_bscf`` are the bootstrap P90/P10 of
    GIIP (an 80 % range; ``giip_range_kind`` says so) and ``giip_best_bscf`` the
    least-squares estimate; ``giip_ci_*`` hold the confidence interval named by
    ``giip_ci_kind`` (Fieller at the chosen level). A later ``diagnosis`` section
    (model comparison, flags) builds on ``models``, which are all fitted to the same
    screened points.
    """

    status: str  # "ok" or "refused"
    message: str
    method: str
    prepared: PreparedData
    pz: PzEstimate | None = None
    pz_uncorrected: PzEstimate | None = None  # the plain line, when a ce correction applies
    models: tuple[ModelFit, ...] = ()
    giip_low_bscf: float | None = None
    giip_best_bscf: float | None = None
    giip_high_bscf: float | None = None
    giip_range_kind: str | None = None
    giip_ci_low_bscf: float | None = None
    giip_ci_high_bscf: float | None = None
    giip_ci_kind: str | None = None
    eur_bscf: float | None = None
    recovery_factor_frac: float | None = None
    remaining_bscf: float | None = None
    flags: tuple = ()  # the diagnosis' flags (engine/diagnosis/flags.py), most severe first
    diagnosis: Diagnosis | None = None  # every model compared, wells, evidence (see with_diagnosis)
    # The headline (engine/headline): the model the giip_*/eur/recovery/remaining numbers above
    # come from once the diagnosis has run, and every model's own outcome. The straight line
    # (the p/z estimate of the choices) stays beside it in line_*.
    basis: Basis | None = None
    outcomes: tuple[ModelOutcome, ...] = ()
    line_giip_low_bscf: float | None = None
    line_giip_best_bscf: float | None = None
    line_giip_high_bscf: float | None = None
    line_eur_bscf: float | None = None
    forecast: Forecast | None = None  # engine/forecast: profiles from the basis (None without a plan)
    engine_version: str = ENGINE_VERSION
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def pz_model(self) -> str:
        """The outcome key of the p/z estimate: the line, or rock and water expansion when corrected."""
        return "single_tank" if self.pz_uncorrected is None else "tank_ce"

    @property
    def cumulative_gas_bscf(self) -> float:
        return self.prepared.cumulative_gas_bscf
