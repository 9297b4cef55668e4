"""What the forecast needs besides the history: multi-rate well tests, the field plan (one row
per field) and planned wells (oilfield units: Mscf/d of separator gas, psia)."""

from __future__ import annotations

import datetime as dt

from sqlalchemy import CheckConstraint, Date, Float, ForeignKey, String, UniqueConstraint
from sqlalchemy.orm import Mapped, mapped_column, relationship

from ..base import Base, utcnow
from .portfolio import Well

#: Bounds shared by the upload checks, the plan form and the check constraints.
EXPONENT_RANGE = (0.5, 1.0)  # back-pressure n: 0.5 fully turbulent, 1 laminar (Rawlins & Schellhardt 1936)
UPTIME_RANGE = (0.0, 1.0)  # (exclusive, inclusive)


class WellTest(Base):
    """One stabilised flow period of a multi-rate (back-pressure) test of a well."""

    __tablename__ = "well_test"
    __table_args__ = (
        UniqueConstraint("well_id", "test_date", "rate_mscf_per_day"),
        CheckConstraint("rate_mscf_per_day > 0", name="rate_pos"),
        CheckConstraint(
            "static_pressure_psia > 0 AND static_pressure_psia < 30000", name="static_pressure_range"
        ),
        CheckConstraint(
            "flowing_bhp_psia > 0 AND flowing_bhp_psia < static_pressure_psia", name="flowing_below_static"
        ),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    well_id: Mapped[int] = mapped_column(ForeignKey("well.id", ondelete="CASCADE"), index=True)
    test_date: Mapped[dt.date] = mapped_column(Date)
    rate_mscf_per_day: Mapped[float] = mapped_column(Float)
    flowing_bhp_psia: Mapped[float] = mapped_column(Float)
    static_pressure_psia: Mapped[float] = mapped_column(Float)
    upload_id: Mapped[int | None] = mapped_column(ForeignKey("upload.id", ondelete="SET NULL"))
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    well: Mapped[Well] = relationship()


class FieldPlan(Base):
    """How a field will be produced (one row per field; every change audited)."""

    __tablename__ = "field_plan"
    __table_args__ = (
        CheckConstraint(
            "plateau_rate_mscf_per_day IS NULL OR plateau_rate_mscf_per_day > 0", name="plateau_pos"
        ),
        CheckConstraint("uptime_frac > 0 AND uptime_frac <= 1", name="uptime_range"),
        CheckConstraint(
            "min_flowing_bhp_psia IS NULL OR (min_flowing_bhp_psia > 0 AND min_flowing_bhp_psia < 30000)",
            name="min_flowing_range",
        ),
        CheckConstraint(
            "(compression_start_date IS NULL) = (compression_min_flowing_bhp_psia IS NULL)",
            name="compression_complete",
        ),
        CheckConstraint(
            "compression_min_flowing_bhp_psia IS NULL OR compression_min_flowing_bhp_psia > 0",
            name="compression_pos",
        ),
        CheckConstraint(
            "compression_min_flowing_bhp_psia IS NULL OR min_flowing_bhp_psia IS NULL "
            "OR compression_min_flowing_bhp_psia < min_flowing_bhp_psia",
            name="compression_lowers",
        ),
        CheckConstraint("economic_limit_mscf_per_day >= 0", name="economic_limit_nonneg"),
        CheckConstraint(
            "deliverability_exponent >= 0.5 AND deliverability_exponent <= 1", name="exponent_range"
        ),
        CheckConstraint(
            "deliverability_form IN ('pressure_squared', 'pseudo_pressure')", name="deliverability_form_known"
        ),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    field_id: Mapped[int] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), unique=True)
    plateau_rate_mscf_per_day: Mapped[float | None] = mapped_column(Float)
    uptime_frac: Mapped[float] = mapped_column(Float, default=0.95)
    min_flowing_bhp_psia: Mapped[float | None] = mapped_column(Float)
    compression_start_date: Mapped[dt.date | None] = mapped_column(Date)
    compression_min_flowing_bhp_psia: Mapped[float | None] = mapped_column(Float)
    economic_limit_mscf_per_day: Mapped[float] = mapped_column(Float, default=0.0)
    licence_end_date: Mapped[dt.date | None] = mapped_column(Date)
    deliverability_exponent: Mapped[float] = mapped_column(Float, default=0.85)
    # The back-pressure equation's form (engine/forecast/deliverability.FORMS).
    deliverability_form: Mapped[str] = mapped_column(
        String(20), default="pressure_squared", server_default="pressure_squared"
    )
    updated_at: Mapped[dt.datetime] = mapped_column(default=utcnow, onupdate=utcnow)


class PlannedWell(Base):
    """A well the team plans to drill: its start date, compartment and expected C and n."""

    __tablename__ = "planned_well"
    __table_args__ = (
        UniqueConstraint("field_id", "name"),
        CheckConstraint("c_mscf_per_day_psi2n > 0", name="c_pos"),
        CheckConstraint("n >= 0.5 AND n <= 1", name="n_range"),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    field_id: Mapped[int] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), index=True)
    name: Mapped[str] = mapped_column(String(120))
    start_date: Mapped[dt.date] = mapped_column(Date)
    compartment: Mapped[str | None] = mapped_column(String(60))
    c_mscf_per_day_psi2n: Mapped[float] = mapped_column(Float)
    n: Mapped[float] = mapped_column(Float)
    upload_id: Mapped[int | None] = mapped_column(ForeignKey("upload.id", ondelete="SET NULL"))
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
