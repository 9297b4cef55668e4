"""Pydantic schemas of the JSON API (units in every field name)."""

from __future__ import annotations

import datetime as dt
from typing import Annotated, Any, Literal

from fastapi import Path
from pydantic import AfterValidator, BaseModel, ConfigDict, Field


def _utc(value: dt.datetime) -> dt.datetime:
    """Stored times are UTC; SQLite hands them back without a zone, which RFC 3339 needs."""
    return value if value.tzinfo is not None else value.replace(tzinfo=dt.UTC)


UtcDatetime = Annotated[dt.datetime, AfterValidator(_utc)]

# Ids are 32-bit integers on PostgreSQL: larger values are a 422, not a database error.
FieldId = Annotated[int, Path(ge=1, le=2**31 - 1, description="a field's id")]


class Schema(BaseModel):
    model_config = ConfigDict(from_attributes=True)


class VolumetricRead(Schema):
    low_bscf: float
    best_bscf: float
    high_bscf: float
    estimate_date: dt.date
    author: str


class EstimateRead(Schema):
    id: int
    status: Literal["ok", "refused", "error"]
    method: str
    message: str
    giip_low_bscf: float | None
    giip_best_bscf: float | None
    giip_high_bscf: float | None
    eur_bscf: float | None
    recovery_factor_frac: float | None
    cumulative_gas_bscf: float
    remaining_bscf: float | None
    forecast_eur_low_bscf: float | None = None
    forecast_eur_best_bscf: float | None = None
    forecast_eur_high_bscf: float | None = None
    forecast_end_date: dt.date | None = None
    forecast_stop_reason: str | None = None
    flags: list[Any]
    inputs_fingerprint: str
    engine_version: str
    computed_at: UtcDatetime
    # Added with the headline's basis (issue 12): giip_*/eur/recovery/remaining above come
    # from the basis model; the straight p/z line's GIIP is beside it. None on older rows.
    basis_model: str | None = Field(None, description="model key the headline comes from")
    basis_title: str | None = None
    basis_source: Literal["automatic", "engineer"] | None = None
    line_giip_low_bscf: float | None = None
    line_giip_best_bscf: float | None = None
    line_giip_high_bscf: float | None = None


class PortfolioRowRead(Schema):
    field_id: int
    name: str
    asset: str
    basin: str
    estimate: EstimateRead | None
    volumetric: VolumetricRead | None
    last_survey_date: dt.date | None
    dynamic_to_volumetric: float | None
    # Added with the portfolio filters (issue 6); older clients ignore them.
    volumetric_position: Literal["below", "within", "above"] | None = None
    depletion_frac: float | None = None  # produced / dynamic best GIIP
    flag_codes: list[str] = []


class PortfolioTotalRead(Schema):
    """Totals of one set of GIIP ranges [Bscf at the storage basis]; P90 = 10th percentile."""

    n_fields: int
    arithmetic_p90_bscf: float
    arithmetic_p50_bscf: float
    arithmetic_p10_bscf: float
    mean_bscf: float
    p90_bscf: float
    p50_bscf: float
    p10_bscf: float
    dependence: str
    trials: int
    seed: int


class PortfolioTotalsRead(Schema):
    """The portfolio page's totals of the fields that match the filters."""

    n_fields: int
    filters: str
    volumetric: PortfolioTotalRead | None
    dynamic: PortfolioTotalRead | None


class WellRead(Schema):
    id: int
    name: str
    compartment: str | None
    gauge_reference_depth_ft: float | None


class HistoryRead(Schema):
    """One stored estimate of a field (oldest first in a list), with what triggered it."""

    estimate_id: int
    computed_at: UtcDatetime
    status: str
    method: str
    giip_low_bscf: float | None
    giip_best_bscf: float | None
    giip_high_bscf: float | None
    eur_bscf: float | None
    engine_version: str
    trigger: str


class NoteRead(Schema):
    id: int
    author: str
    author_id: int | None
    created_at: UtcDatetime
    body: str
    survey_id: int | None
    estimate_id: int | None


class ChoicesRead(Schema):
    """A field's abandonment pressure and analysis choices (stored units)."""

    abandonment_pressure_psia: float
    z_method: str
    datum_correction: bool
    condensate_correction: bool
    use_lab_table: bool
    anchor_initial: bool
    overpressure_mode: str
    effective_compressibility_per_psi: float | None
    basis_model: str = Field(description='"automatic" (the evidence rule) or the model key chosen')
    basis_reason: str = Field(description="the engineer's reason for a chosen model (empty when automatic)")


class SurveyRead(Schema):
    id: int
    well: str
    survey_date: dt.date
    pressure_psia: float
    gauge_depth_ft: float
    quality: str
    excluded: bool
    exclusion_reason: str | None


class FieldProductionRead(Schema):
    """The field's production per calendar month (``month`` is its first day)."""

    month: list[dt.date]
    gas_mscf: list[float]
    condensate_stb: list[float]
    water_stb: list[float]


class OutcomeRead(Schema):
    """One model's own outcome at the abandonment pressure [Bscf]."""

    model: str
    title: str
    giip_bscf: float | None
    giip_low_bscf: float | None
    giip_high_bscf: float | None
    eur_bscf: float | None
    recovery_factor_frac: float | None
    remaining_bscf: float | None
    determined: bool
    status: str
    eur_method: str
    delta_aicc: float | None
    has_results: bool
    is_basis: bool


class RangePartRead(Schema):
    key: str
    title: str
    plus_minus_pct: float = Field(description="100 x the standard deviation of ln GIIP (about ± %)")
    share_frac: float = Field(description="share of the booked range's variance")


class HeadlineRead(Schema):
    """The headline's basis, the straight line beside it, the range's parts, every model's outcome."""

    status: str
    model: str | None
    title: str
    source: Literal["automatic", "engineer"] | None
    reason: str
    engineer_reason: str | None
    recommended_model: str | None
    recommended_title: str
    recommended_reason: str
    range_kind: str
    line_low_bscf: float | None
    line_best_bscf: float | None
    line_high_bscf: float | None
    line_eur_bscf: float | None
    range_parts: list[RangePartRead]
    outcomes: list[OutcomeRead]


class FieldRead(Schema):
    summary: PortfolioRowRead
    datum_depth_ft: float
    reservoir_temperature_degF: float
    initial_pressure_psia: float
    abandonment_pressure_psia: float
    description: str
    wells: list[WellRead]
    detail: dict[str, Any]
    # what the field page shows besides the estimate (added later; old clients ignore them)
    choices: ChoicesRead | None = None
    surveys: list[SurveyRead] = []
    history: list[HistoryRead] = []
    notes: list[NoteRead] = []
    production: FieldProductionRead | None = None
    headline: HeadlineRead | None = None


class HealthRead(BaseModel):
    status: Literal["ok"]
    engine_version: str


class ErrorRead(BaseModel):
    """Every error other than a validation error: a plain sentence."""

    detail: str
