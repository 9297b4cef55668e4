"""Fields, wells, surveys, production, fluids and volumetric estimates (oilfield units)."""

from __future__ import annotations

import datetime as dt

from sqlalchemy import (
    JSON,
    Boolean,
    CheckConstraint,
    Date,
    Float,
    ForeignKey,
    String,
    Text,
    UniqueConstraint,
)
from sqlalchemy.orm import Mapped, mapped_column, relationship

from ..base import Base, utcnow


class Asset(Base):
    """A business unit or basin grouping that owns fields (the unit of access control)."""

    __tablename__ = "asset"
    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(120), unique=True)
    basin: Mapped[str] = mapped_column(String(120), default="")
    fields: Mapped[list[Field]] = relationship(back_populates="asset")


class Field(Base):
    __tablename__ = "field"
    __table_args__ = (
        CheckConstraint("datum_depth_ft >= 0", name="datum_depth_nonneg"),
        CheckConstraint(
            '"reservoir_temperature_degF" > 32 AND "reservoir_temperature_degF" < 700',
            name="temperature_range",
        ),
        CheckConstraint("initial_pressure_psia > 0", name="initial_pressure_pos"),
        CheckConstraint(
            "abandonment_pressure_psia > 0 AND abandonment_pressure_psia < initial_pressure_psia",
            name="abandonment_below_initial",
        ),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    asset_id: Mapped[int] = mapped_column(ForeignKey("asset.id", ondelete="RESTRICT"), index=True)
    name: Mapped[str] = mapped_column(String(120), unique=True)
    datum_depth_ft: Mapped[float] = mapped_column(Float)
    reservoir_temperature_degF: Mapped[float] = mapped_column(Float)
    initial_pressure_psia: Mapped[float] = mapped_column(Float)
    abandonment_pressure_psia: Mapped[float] = mapped_column(Float)
    description: Mapped[str] = mapped_column(Text, default="")
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    updated_at: Mapped[dt.datetime] = mapped_column(default=utcnow, onupdate=utcnow)

    asset: Mapped[Asset] = relationship(back_populates="fields")
    wells: Mapped[list[Well]] = relationship(back_populates="field", order_by="Well.name")
    fluid: Mapped[Fluid | None] = relationship(back_populates="field", uselist=False)
    settings: Mapped[FieldAnalysisSettings | None] = relationship(back_populates="field", uselist=False)
    volumetrics: Mapped[list[VolumetricEstimate]] = relationship(
        back_populates="field", order_by="VolumetricEstimate.estimate_date"
    )


class Fluid(Base):
    """Gas description; an optional lab table takes precedence over correlations.

    The separator gas gravity, the well-stream gravity, or both (engine/pvt/wellstream.py).
    """

    __tablename__ = "fluid"
    __table_args__ = (
        CheckConstraint(
            "gas_gravity IS NULL OR (gas_gravity > 0.55 AND gas_gravity < 1.8)", name="gravity_range"
        ),
        CheckConstraint(
            "wellstream_gravity IS NULL OR (wellstream_gravity > 0.55 AND wellstream_gravity < 1.8)",
            name="wellstream_gravity_range",
        ),
        CheckConstraint("gas_gravity IS NOT NULL OR wellstream_gravity IS NOT NULL", name="a_gravity"),
        CheckConstraint(
            "y_co2_frac >= 0 AND y_h2s_frac >= 0 AND y_n2_frac >= 0 "
            "AND y_co2_frac + y_h2s_frac + y_n2_frac < 1",
            name="inerts_range",
        ),
        CheckConstraint(
            "condensate_api IS NULL OR (condensate_api > 10 AND condensate_api < 100)",
            name="api_range",
        ),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    field_id: Mapped[int] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), unique=True)
    gas_gravity: Mapped[float | None] = mapped_column(Float)  # separator (sales) gas, air = 1
    y_co2_frac: Mapped[float] = mapped_column(Float, default=0.0)
    y_h2s_frac: Mapped[float] = mapped_column(Float, default=0.0)
    y_n2_frac: Mapped[float] = mapped_column(Float, default=0.0)
    condensate_api: Mapped[float | None] = mapped_column(Float)
    # The reservoir (well-stream) gas gravity, air = 1, when the team has it; z then uses it.
    wellstream_gravity: Mapped[float | None] = mapped_column(Float)
    field: Mapped[Field] = relationship(back_populates="fluid")
    lab_points: Mapped[list[FluidLabPoint]] = relationship(
        back_populates="fluid", order_by="FluidLabPoint.pressure_psia", cascade="all, delete-orphan"
    )


class FluidLabPoint(Base):
    __tablename__ = "fluid_lab_point"
    __table_args__ = (
        UniqueConstraint("fluid_id", "pressure_psia"),
        CheckConstraint("pressure_psia > 0", name="pressure_pos"),
        CheckConstraint("z_factor IS NULL OR (z_factor > 0.1 AND z_factor < 3)", name="z_range"),
        CheckConstraint("bg_rcf_per_scf IS NULL OR bg_rcf_per_scf > 0", name="bg_pos"),
        CheckConstraint("z_factor IS NOT NULL OR bg_rcf_per_scf IS NOT NULL", name="z_or_bg"),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    fluid_id: Mapped[int] = mapped_column(ForeignKey("fluid.id", ondelete="CASCADE"), index=True)
    pressure_psia: Mapped[float] = mapped_column(Float)
    z_factor: Mapped[float | None] = mapped_column(Float)
    bg_rcf_per_scf: Mapped[float | None] = mapped_column(Float)
    fluid: Mapped[Fluid] = relationship(back_populates="lab_points")


class FieldAnalysisSettings(Base):
    """The analysis choices an engineer makes for a field (each change is audited)."""

    __tablename__ = "field_analysis_settings"
    __table_args__ = (
        CheckConstraint(
            "effective_compressibility_per_psi IS NULL OR "
            "(effective_compressibility_per_psi >= 0 AND effective_compressibility_per_psi < 1e-3)",
            name="ce_range",
        ),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    field_id: Mapped[int] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), unique=True)
    z_method: Mapped[str] = mapped_column(String(40), default="dak")
    use_lab_table: Mapped[bool] = mapped_column(Boolean, default=True)
    datum_correction: Mapped[bool] = mapped_column(Boolean, default=True)
    condensate_correction: Mapped[bool] = mapped_column(Boolean, default=True)
    overpressure_mode: Mapped[str] = mapped_column(String(20), default="off")
    effective_compressibility_per_psi: Mapped[float | None] = mapped_column(Float)
    # The headline's basis: "automatic" or a model key (engine/headline/types.BASIS_MODELS),
    # with the engineer's reason (required for a model). Replaced aquifer_model (migration 0009w).
    basis_model: Mapped[str] = mapped_column(String(40), default="automatic", server_default="automatic")
    basis_reason: Mapped[str] = mapped_column(Text, default="", server_default="")
    anchor_initial: Mapped[bool] = mapped_column(Boolean, default=False)
    options: Mapped[dict] = mapped_column(JSON, default=dict)
    updated_at: Mapped[dt.datetime] = mapped_column(default=utcnow, onupdate=utcnow)
    field: Mapped[Field] = relationship(back_populates="settings")


class Well(Base):
    __tablename__ = "well"
    __table_args__ = (
        UniqueConstraint("field_id", "name"),
        CheckConstraint(
            "gauge_reference_depth_ft IS NULL OR gauge_reference_depth_ft >= 0",
            name="gauge_depth_nonneg",
        ),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    field_id: Mapped[int] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), index=True)
    name: Mapped[str] = mapped_column(String(120))
    compartment: Mapped[str | None] = mapped_column(String(60))
    gauge_reference_depth_ft: Mapped[float | None] = mapped_column(Float)
    field: Mapped[Field] = relationship(back_populates="wells")


class PressureSurvey(Base):
    """A static pressure measurement at a stated gauge depth (absolute pressure)."""

    __tablename__ = "pressure_survey"
    __table_args__ = (
        UniqueConstraint("well_id", "survey_date"),
        CheckConstraint("pressure_psia > 0 AND pressure_psia < 30000", name="pressure_range"),
        CheckConstraint("gauge_depth_ft >= 0", name="gauge_depth_nonneg"),
        CheckConstraint("kind IN ('static', 'buildup', 'formation_test')", name="kind_known"),
        CheckConstraint("quality IN ('good', 'fair', 'poor')", name="quality_known"),
        CheckConstraint("excluded = false OR exclusion_reason IS NOT NULL", name="exclusion_has_reason"),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    well_id: Mapped[int] = mapped_column(ForeignKey("well.id", ondelete="CASCADE"), index=True)
    survey_date: Mapped[dt.date] = mapped_column(Date)
    pressure_psia: Mapped[float] = mapped_column(Float)
    gauge_depth_ft: Mapped[float] = mapped_column(Float)
    kind: Mapped[str] = mapped_column(String(20), default="static")
    quality: Mapped[str] = mapped_column(String(10), default="good")
    excluded: Mapped[bool] = mapped_column(Boolean, default=False)
    exclusion_reason: Mapped[str | None] = mapped_column(Text)
    upload_id: Mapped[int | None] = mapped_column(ForeignKey("upload.id", ondelete="SET NULL"))
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    well: Mapped[Well] = relationship()


class ProductionMonth(Base):
    """Volumes produced by a well in a calendar month (``month`` is its first day)."""

    __tablename__ = "production_month"
    __table_args__ = (
        UniqueConstraint("well_id", "month"),
        CheckConstraint("gas_mscf >= 0", name="gas_nonneg"),
        CheckConstraint("condensate_stb >= 0", name="condensate_nonneg"),
        CheckConstraint("water_stb >= 0", name="water_nonneg"),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    well_id: Mapped[int] = mapped_column(ForeignKey("well.id", ondelete="CASCADE"), index=True)
    month: Mapped[dt.date] = mapped_column(Date)
    gas_mscf: Mapped[float] = mapped_column(Float)
    condensate_stb: Mapped[float] = mapped_column(Float, default=0.0)
    water_stb: Mapped[float] = mapped_column(Float, default=0.0)
    upload_id: Mapped[int | None] = mapped_column(ForeignKey("upload.id", ondelete="SET NULL"))
    well: Mapped[Well] = relationship()


class VolumetricEstimate(Base):
    """The geologists' static GIIP: low/best/high, optionally with Monte Carlo inputs."""

    __tablename__ = "volumetric_estimate"
    __table_args__ = (
        CheckConstraint(
            "giip_low_bscf > 0 AND giip_low_bscf <= giip_best_bscf AND giip_best_bscf <= giip_high_bscf",
            name="ordered",
        ),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    field_id: Mapped[int] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), index=True)
    estimate_date: Mapped[dt.date] = mapped_column(Date)
    author: Mapped[str] = mapped_column(String(120), default="")
    giip_low_bscf: Mapped[float] = mapped_column(Float)
    giip_best_bscf: Mapped[float] = mapped_column(Float)
    giip_high_bscf: Mapped[float] = mapped_column(Float)
    method: Mapped[str] = mapped_column(String(20), default="deterministic")
    inputs: Mapped[dict | None] = mapped_column(JSON)
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    field: Mapped[Field] = relationship(back_populates="volumetrics")


NOTE_MAX_CHARS = 4000  # a note is a paragraph or two; longer belongs in a report


class FieldNote(Base):
    """An interpretation note written by the team on a field (plain text, shown escaped).

    The author's name is kept beside the id so a note still says who wrote it after the
    account is deleted; a note may point at one survey or one estimate it discusses."""

    __tablename__ = "field_note"
    __table_args__ = (
        CheckConstraint(f"length(body) >= 1 AND length(body) <= {NOTE_MAX_CHARS}", name="body_length"),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    field_id: Mapped[int] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), index=True)
    author_id: Mapped[int | None] = mapped_column(ForeignKey("user_account.id", ondelete="SET NULL"))
    author_username: Mapped[str] = mapped_column(String(120), default="", server_default="")
    body: Mapped[str] = mapped_column(Text)
    survey_id: Mapped[int | None] = mapped_column(ForeignKey("pressure_survey.id", ondelete="SET NULL"))
    estimate_id: Mapped[int | None] = mapped_column(ForeignKey("estimate.id", ondelete="SET NULL"))
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
