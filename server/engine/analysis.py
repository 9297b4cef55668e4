"""One field's analysis: the engine's entry point for the services layer.

Stage 1 (:mod:`.prepare`) corrects the data into p/z points; stage 2 fits the p/z
line (and, as they land, the other models and the diagnosis). The result is a frozen
tree of dataclasses that the services store as JSON with a summary in columns.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from . import ENGINE_VERSION
from .errors import EngineError
from .inputs import FieldInputs
from .prepare import PreparedData, prepare
from .pz import fit_pz_line, recovery_factor_volumetric


@dataclass(frozen=True)
class PzResult:
    """The single-tank p/z estimate."""

    method: str
    n_points: int
    intercept_psia: float
    slope_psia_per_bscf: float
    giip_bscf: float
    eur_bscf: float
    recovery_factor_frac: float


@dataclass(frozen=True)
class FieldAnalysis:
    """Result of one field analysis (Bscf at the field's standard conditions)."""

    status: str  # "ok" or "refused"
    message: str
    method: str
    prepared: PreparedData
    pz: PzResult | None = None
    giip_low_bscf: float | None = None
    giip_best_bscf: float | None = None
    giip_high_bscf: float | None = None
    eur_bscf: float | None = None
    recovery_factor_frac: float | None = None
    remaining_bscf: float | None = None
    flags: tuple = ()
    engine_version: str = ENGINE_VERSION
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def cumulative_gas_bscf(self) -> float:
        return self.prepared.cumulative_gas_bscf


def analyse_field(inputs: FieldInputs) -> FieldAnalysis:
    """Single-tank p/z analysis of a field; refuses with a reason when data are too thin."""
    prepared = prepare(inputs)
    _, gp, pz, _ = prepared.arrays()
    try:
        line = fit_pz_line(gp, pz)
    except EngineError as exc:
        return FieldAnalysis(status="refused", message=str(exc), method="pz-ols", prepared=prepared)
    rf = recovery_factor_volumetric(prepared.abandonment_pz_psia, line.intercept_psia)
    giip = line.giip_bscf
    result = PzResult(
        "pz-ols", line.n_points, line.intercept_psia, line.slope_psia_per_bscf, giip, giip * rf, rf
    )
    return FieldAnalysis(
        status="ok",
        message=f"single-tank p/z line through {line.n_points} surveys",
        method="pz-ols",
        prepared=prepared,
        pz=result,
        giip_best_bscf=giip,
        eur_bscf=result.eur_bscf,
        recovery_factor_frac=rf,
        remaining_bscf=result.eur_bscf - prepared.cumulative_gas_bscf,
    )
