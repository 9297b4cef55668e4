"""Flags: what a reserves engineer should look at in a field, with the reason and numbers.

This module holds the contract (the flag and the evidence the rules read); the rules are
in :mod:`.flag_rules` and the thresholds (:class:`FlagThresholds`) in
:mod:`server.engine.thresholds`. Each flag has a stable ``code``, a ``severity`` ("info",
"warning", "alert": alert means the booked number is likely to mislead), a short title, a
plain-language reason that quotes the numbers behind it, and those numbers. The rules and
every threshold are documented in docs/flags.md.

The rules weigh evidence rather than trust one test: curvature of p/z alone does not
tell aquifer support from a connected neighbour (domain reference §4.3), and a pot
aquifer and rock/water expansion give the same balance, so each mechanism needs its
own discriminating evidence (water production, pressures of different wells, the
initial pressure gradient).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # annotations only
    from ..compartments.well_trend import WellFinding
    from ..tank.balance_terms import ColeTrend
    from ..volumetrics.estimate import VolumetricResult
    from .compare import CurvatureTest, ModelComparison

SEVERITIES = ("info", "warning", "alert")


@dataclass(frozen=True)
class Flag:
    code: str
    severity: str
    title: str
    reason: str
    numbers: dict = field(default_factory=dict)


@dataclass(frozen=True)
class WaterTrend:
    early_wgr_stb_per_mmscf: float
    late_wgr_stb_per_mmscf: float


@dataclass(frozen=True)
class Outlier:
    well: str
    t_days: float
    offset_psia: float
    sigmas: float
    kind: str
    quality: str


@dataclass(frozen=True)
class Evidence:
    """Everything the flag rules read, gathered by :mod:`.diagnose`."""

    n_surveys: int
    initial_pz_psia: float
    initial_pressure_psia: float
    datum_depth_ft: float
    overpressure_mode: str
    depletion_frac: float | None  # 1 - (p/z at the last survey on the trend) / initial p/z
    dynamic_method: str | None
    dynamic_giip_bscf: float | None
    dynamic_low_bscf: float | None
    dynamic_high_bscf: float | None
    volumetric: VolumetricResult | None
    comparison: ModelComparison | None
    curvature: CurvatureTest | None
    wells: tuple[WellFinding, ...] = ()
    water: WaterTrend | None = None
    cole: ColeTrend | None = None
    noise_psia: float | None = None
    outliers: tuple[Outlier, ...] = ()
    above_initial: tuple[tuple[str, float, float], ...] = ()  # (well, t_days, p_datum_psia)
    longest_survey_gap_days: float | None = None
    longest_production_period_days: float | None = None
    dynamic_interval_kind: str | None = None  # what the dynamic low/high are
    fluid_warnings: tuple[str, ...] = ()  # gas gravities to check (engine/pvt/wellstream.py)
    fitted_ce_per_psi: float | None = None  # the constant-compressibility tank's fitted c_e

    @property
    def gradient_psi_per_ft(self) -> float | None:
        return self.initial_pressure_psia / self.datum_depth_ft if self.datum_depth_ft > 0 else None
