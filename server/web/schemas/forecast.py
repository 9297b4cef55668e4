"""Schemas of the forecast's API: the field plan (read and change) and the stored forecast.
Stored units in every name (Mscf/d of separator gas, psia, Bscf); dates ISO."""

from __future__ import annotations

import datetime as dt
from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

from .common import Schema


class PlannedWellRead(Schema):
    name: str
    start_date: dt.date
    compartment: str | None
    c_mscf_per_day_psi2n: float
    n: float


class PlanRead(Schema):
    """The field's plan; ``exists`` false: the defaults, and no forecast is made."""

    exists: bool
    plateau_rate_mscf_per_day: float | None
    uptime_frac: float
    min_flowing_bhp_psia: float | None
    compression_start_date: dt.date | None
    compression_min_flowing_bhp_psia: float | None
    economic_limit_mscf_per_day: float
    licence_end_date: dt.date | None
    deliverability_exponent: float
    deliverability_form: str = Field(
        "pressure_squared",
        description="pressure_squared: q = C (p̄² − p_wf²)^n; pseudo_pressure: q = C [m(p̄) − m(p_wf)]^n",
    )
    planned_wells: list[PlannedWellRead]


class PlanUpdate(BaseModel):
    """Only the values given change (null clears an optional one); the first change creates
    the plan. Checked as the field page's form and the field_plans upload are."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)
    plateau_rate_mscf_per_day: float | None = Field(None, gt=0, description="null: no limit")
    uptime_frac: float | None = Field(None, gt=0, le=1)
    min_flowing_bhp_psia: float | None = Field(None, gt=0)
    compression_start_date: dt.date | None = None
    compression_min_flowing_bhp_psia: float | None = Field(None, gt=0)
    economic_limit_mscf_per_day: float | None = Field(None, ge=0)
    licence_end_date: dt.date | None = None
    deliverability_exponent: float | None = Field(None, ge=0.5, le=1)
    deliverability_form: Literal["pressure_squared", "pseudo_pressure"] | None = None


class YearRead(Schema):
    year: int
    gas_bscf: float
    average_rate_mscf_per_day: float
    condensate_stb: float | None
    water_stb: float | None = Field(None, description="null: no water forecast (see water.method)")
    cumulative_bscf: float | None


class ProfileRead(Schema):
    case: str
    giip_bscf: float | None
    month_end_t_days: list[float]
    rate_mscf_per_day: list[float | None]
    gas_bscf: list[float | None]
    cumulative_bscf: list[float | None]
    pressure_psia: list[float | None]
    condensate_stb: list[float | None] | None
    water_stb: list[float | None] | None = None
    end_date: dt.date | None
    stop_reason: str
    stop_words: str
    eur_bscf: float | None
    remaining_bscf: float | None
    remaining_after_date_bscf: float | None = Field(
        None, description="what the case still produces after the date asked for (remaining_from)"
    )
    yearly: list[YearRead]


class DeliverabilityRead(Schema):
    well: str
    c_mscf_per_day_psi2n: float
    n: float
    source: str
    n_points: int
    rms_log_rate: float | None
    form: str = Field(
        "pressure_squared", description="C is in Mscf/d/psi^(2n) (pressure_squared) or Mscf/d/(psi²/cP)^n"
    )


class WaterRead(Schema):
    """How produced water follows the gas: trend (WGR linear in cumulative gas, significant
    slope), constant (the last 12 months' WGR) or none."""

    method: str
    wgr_stb_per_mmscf: float | None
    slope_stb_per_mmscf_per_bscf: float | None
    p_value: float | None
    n_points: int
    sentence: str


class ForecastRead(Schema):
    """The forecast stored with the field's current estimate (null profiles: none)."""

    estimate_id: int | None
    basis_model: str | None
    deliverability_form: str | None = Field(None, description="the form the forecast used (null: none)")
    deliverability: list[DeliverabilityRead]
    water: WaterRead | None = None
    profiles: list[ProfileRead]
    notes: list[str]
    remaining_from: dt.date | None
    caution: str
