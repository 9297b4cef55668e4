"""Response schemas of the data pages' JSON twins (stored units, named in every field)."""

from __future__ import annotations

import datetime as dt
from typing import Literal

from pydantic import BaseModel, Field

from .common import Schema, UtcDatetime


class PagingRead(BaseModel):
    page: int = Field(description="this page, from 1")
    per_page: int
    total: int = Field(description="rows matching the search, on every page")
    n_pages: int
    first_index: int = Field(description="1-based position of this page's first row (0 when none match)")
    last_index: int
    prev_page: int | None
    next_page: int | None


class FieldRefRead(BaseModel):
    id: int
    name: str
    asset: str


class WellDataRead(Schema):
    id: int
    name: str
    compartment: str | None
    gauge_reference_depth_ft: float | None
    n_surveys: int
    first_survey_date: dt.date | None
    last_survey_date: dt.date | None
    cumulative_gas_mscf: float = Field(description="separator gas at the storage basis, all months stored")
    cumulative_condensate_stb: float = Field(description="condensate, all months stored")


class WellsRead(BaseModel):
    field: FieldRefRead
    wells: list[WellDataRead]


class SurveyFilterRead(BaseModel):
    well: str | None
    date_from: dt.date | None
    date_to: dt.date | None
    status: Literal["all", "included", "excluded"]
    quality: Literal["good", "fair", "poor"] | None


class SurveyDataRead(Schema):
    id: int
    well: str
    compartment: str | None
    survey_date: dt.date
    pressure_psia: float = Field(description="absolute pressure at the gauge")
    gauge_depth_ft: float
    kind: str
    quality: str
    excluded: bool
    exclusion_reason: str | None
    datum_pressure_psia: float | None = Field(description="at the datum, from the current estimate")
    pz_psia: float | None = Field(description="p/z at the datum, from the current estimate")


class SurveysRead(BaseModel):
    field: FieldRefRead
    filter: SurveyFilterRead
    paging: PagingRead
    surveys: list[SurveyDataRead]


class ProductionFilterRead(BaseModel):
    well: str | None
    date_from: dt.date | None
    date_to: dt.date | None


class ProductionDataRead(Schema):
    id: int
    well: str
    month: dt.date = Field(description="first day of the month")
    gas_mscf: float
    condensate_stb: float
    water_stb: float


class ProductionTotalsRead(Schema):
    gas_mscf: float
    condensate_stb: float
    water_stb: float


class ProductionRead(BaseModel):
    field: FieldRefRead
    filter: ProductionFilterRead
    paging: PagingRead
    totals: ProductionTotalsRead = Field(description="sums over every matching row, not only this page")
    production: list[ProductionDataRead]


class LabPointRead(Schema):
    pressure_psia: float
    z_factor: float | None = Field(description="as measured")
    bg_rcf_per_scf: float | None = Field(description="as measured, at the storage basis")
    z_from_lab: float
    bg_from_lab_rcf_per_scf: float
    correlation_z_factor: float | None
    difference_frac: float | None = Field(description="lab z / correlation z - 1")


class FluidCurveRead(Schema):
    pressure_psia: list[float]
    z_correlation: list[float]
    bg_correlation_rcf_per_scf: list[float]
    z_used: list[float] | None = Field(description="the lab-table z the estimate uses, if it uses one")
    bg_used_rcf_per_scf: list[float] | None
    correlation_label: str


class AtPressureRead(BaseModel):
    at: Literal["initial", "abandonment"]
    pressure_psia: float
    z_factor: float = Field(description="the estimate's z (lab table when it uses one)")
    bg_rcf_per_scf: float


class FluidRead(Schema):
    field: FieldRefRead
    gas_gravity: float | None = Field(
        description="separator (sales) gas gravity, air = 1, as stored; null when only the "
        "well-stream gravity is known"
    )
    wellstream_gravity: float | None = Field(
        description="well-stream (reservoir) gas gravity, air = 1, as stored; when given z uses it as it is"
    )
    y_co2_frac: float
    y_h2s_frac: float
    y_n2_frac: float
    condensate_api: float | None
    z_gas_gravity: float = Field(
        description="gravity z is computed for (well stream when condensate is corrected)"
    )
    z_gravity_source: Literal["separator", "recombined", "given"] = Field(
        description="separator: the separator gas as it is; recombined: from the separator gas, "
        "condensate yield and API gravity; given: the stored well-stream gravity"
    )
    gravity_warnings: list[str] = Field(description="gas gravities a person should check, in words")
    z_method: str
    pseudo_critical_method: str
    z_source: str
    uses_lab_table: bool
    reservoir_temperature_degF: float
    initial_pressure_psia: float
    abandonment_pressure_psia: float
    standard_conditions: str = Field(description="the basis of every Bg (scf at these conditions)")
    lab_points: list[LabPointRead]
    curve: FluidCurveRead | None
    at_pressures: list[AtPressureRead]
    notes: list[str]


class DynamicGiipRead(Schema):
    giip_low_bscf: float | None
    giip_best_bscf: float
    giip_high_bscf: float | None
    computed_at: UtcDatetime


class VolumetricDataRead(Schema):
    id: int
    estimate_date: dt.date
    author: str
    method: str
    giip_low_bscf: float
    giip_best_bscf: float
    giip_high_bscf: float
    inputs: dict | None = Field(
        description="Monte Carlo ranges as stored: {'porosity_frac': {'low': .., 'best': .., 'high': ..}}"
    )
    dynamic_to_best: float | None = Field(description="current dynamic best GIIP / this best GIIP")
    dynamic_position: Literal["below", "within", "above"] | None


class VolumetricsRead(BaseModel):
    field: FieldRefRead
    dynamic: DynamicGiipRead | None = Field(description="the current estimate's GIIP (None if it has none)")
    estimates: list[VolumetricDataRead] = Field(description="newest first; the first is what the flags use")
