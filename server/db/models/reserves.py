"""The annual reserves review: the review, its frozen field snapshots, bookings and reconciliation.

Snapshots are copies: they keep the estimate's numbers, ids and names as plain values, never
foreign keys to rows that later uploads or recomputes can change (issue 14, "Integrity").
Volumes are gas in Bscf at the storage basis and condensate in stb (oilfield, as everywhere).
"""

from __future__ import annotations

import datetime as dt

from sqlalchemy import (
    JSON,
    Boolean,
    CheckConstraint,
    Date,
    Float,
    ForeignKey,
    Integer,
    String,
    Text,
    UniqueConstraint,
)
from sqlalchemy.orm import Mapped, mapped_column

from ..base import Base, utcnow

REVIEW_STATUSES = ("draft", "submitted", "approved")
RESOURCE_CLASSES = ("reserves", "contingent")
# SPE-PRMS (2018): reserves status (developed producing / non-producing, undeveloped) and the
# contingent-resources maturity subclasses (development pending / on hold / unclarified / not viable).
RESERVES_STATUSES = ("developed_producing", "developed_non_producing", "undeveloped")
CONTINGENT_STATUSES = (
    "development_pending",
    "development_on_hold",
    "development_unclarified",
    "development_not_viable",
)
RECONCILIATION_CATEGORIES = ("1P", "2P", "3P")


def _in(column: str, values: tuple[str, ...]) -> str:
    return f"{column} IN ({', '.join(repr(v) for v in values)})"


class ReservesReview(Base):
    """One revision of a review as at an effective date; approved revisions never change."""

    __tablename__ = "reserves_review"
    __table_args__ = (
        CheckConstraint(_in("status", REVIEW_STATUSES), name="status_known"),
        CheckConstraint("revision >= 1", name="revision_pos"),
        UniqueConstraint("name", "revision", name="name_revision"),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(120))
    effective_date: Mapped[dt.date] = mapped_column(Date)
    status: Mapped[str] = mapped_column(String(12), default="draft")
    revision: Mapped[int] = mapped_column(Integer, default=1)
    reopened_from_id: Mapped[int | None] = mapped_column(
        ForeignKey("reserves_review.id", ondelete="RESTRICT")
    )
    reopen_reason: Mapped[str] = mapped_column(Text, default="")
    created_by_id: Mapped[int | None] = mapped_column(ForeignKey("user_account.id", ondelete="SET NULL"))
    created_by_name: Mapped[str] = mapped_column(String(120), default="")
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    submitted_by_id: Mapped[int | None] = mapped_column(Integer)
    submitted_by_name: Mapped[str] = mapped_column(String(120), default="")
    submitted_at: Mapped[dt.datetime | None] = mapped_column()
    approved_by_id: Mapped[int | None] = mapped_column(Integer)
    approved_by_name: Mapped[str] = mapped_column(String(120), default="")
    approved_at: Mapped[dt.datetime | None] = mapped_column()
    approval_comment: Mapped[str] = mapped_column(Text, default="")


class ReviewField(Base):
    """What a review books for one field: a copy of the estimate and the production to the date."""

    __tablename__ = "reserves_review_field"
    __table_args__ = (
        UniqueConstraint("review_id", "field_id", name="review_field"),
        CheckConstraint(_in("volume_source", ("forecast", "basis", "none")), name="volume_source_known"),
        CheckConstraint(
            "sales_gas_frac IS NULL OR (sales_gas_frac > 0 AND sales_gas_frac <= 1)",
            name="sales_gas_frac_range",
        ),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    review_id: Mapped[int] = mapped_column(ForeignKey("reserves_review.id", ondelete="CASCADE"), index=True)
    field_id: Mapped[int] = mapped_column(Integer)  # a copy, not a reference
    field_name: Mapped[str] = mapped_column(String(120))
    asset_id: Mapped[int] = mapped_column(Integer)
    asset_name: Mapped[str] = mapped_column(String(120))
    estimate_id: Mapped[int | None] = mapped_column(Integer)
    estimate_status: Mapped[str] = mapped_column(String(10), default="")
    estimate_computed_at: Mapped[dt.datetime | None] = mapped_column()
    inputs_fingerprint: Mapped[str] = mapped_column(String(64), default="")
    engine_version: Mapped[str] = mapped_column(String(20), default="")
    basis_model: Mapped[str] = mapped_column(String(40), default="")
    basis_title: Mapped[str] = mapped_column(String(200), default="")
    basis_source: Mapped[str] = mapped_column(String(20), default="")
    giip_low_bscf: Mapped[float | None] = mapped_column(Float)
    giip_best_bscf: Mapped[float | None] = mapped_column(Float)
    giip_high_bscf: Mapped[float | None] = mapped_column(Float)
    eur_low_bscf: Mapped[float | None] = mapped_column(Float)
    eur_best_bscf: Mapped[float | None] = mapped_column(Float)
    eur_high_bscf: Mapped[float | None] = mapped_column(Float)
    volume_source: Mapped[str] = mapped_column(String(10), default="none")
    forecast: Mapped[dict | None] = mapped_column(JSON)
    produced_gas_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    produced_condensate_stb: Mapped[float] = mapped_column(Float, default=0.0)
    production_last_month: Mapped[dt.date | None] = mapped_column(Date)
    flags: Mapped[list] = mapped_column(JSON, default=list)
    has_alert: Mapped[bool] = mapped_column(Boolean, default=False)
    # Share of separator gas delivered for sale (after fuel, flare, shrinkage), frozen from the
    # team setting; None in reviews frozen before it existed (their sales gas is not stated).
    sales_gas_frac: Mapped[float | None] = mapped_column(Float)
    sales_gas_frac_source: Mapped[str] = mapped_column(
        String(10), default="", server_default=""
    )  # team, field
    snapshot_at: Mapped[dt.datetime] = mapped_column(default=utcnow)


class Booking(Base):
    """The booked class, status and volumes of one field in one review (one per snapshot)."""

    __tablename__ = "reserves_booking"
    __table_args__ = (
        CheckConstraint(_in("resource_class", RESOURCE_CLASSES), name="class_known"),
        CheckConstraint(
            f"(resource_class = 'reserves' AND {_in('status', RESERVES_STATUSES)}) OR "
            f"(resource_class = 'contingent' AND {_in('status', CONTINGENT_STATUSES)})",
            name="status_of_class",
        ),
        CheckConstraint(
            "(override_low_bscf IS NULL AND override_best_bscf IS NULL AND override_high_bscf IS NULL)"
            " OR override_reason <> ''",
            name="override_has_reason",
        ),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    review_field_id: Mapped[int] = mapped_column(
        ForeignKey("reserves_review_field.id", ondelete="CASCADE"), unique=True
    )
    resource_class: Mapped[str] = mapped_column(String(12), default="reserves")
    status: Mapped[str] = mapped_column(String(30), default="developed_producing")
    computed_low_bscf: Mapped[float | None] = mapped_column(Float)  # remaining at the effective date
    computed_best_bscf: Mapped[float | None] = mapped_column(Float)
    computed_high_bscf: Mapped[float | None] = mapped_column(Float)
    condensate_gas_ratio_stb_per_mmscf: Mapped[float | None] = mapped_column(Float)
    override_low_bscf: Mapped[float | None] = mapped_column(Float)
    override_best_bscf: Mapped[float | None] = mapped_column(Float)
    override_high_bscf: Mapped[float | None] = mapped_column(Float)
    override_reason: Mapped[str] = mapped_column(Text, default="")
    justification: Mapped[str] = mapped_column(Text, default="")
    updated_by_id: Mapped[int | None] = mapped_column(Integer)
    updated_by_name: Mapped[str] = mapped_column(String(120), default="")
    updated_at: Mapped[dt.datetime | None] = mapped_column()


class ReconciliationLine(Base):
    """Change of one field's remaining reserves in one category since the last approved review.

    closing = opening - production + revisions + extensions + improved recovery + acquisitions
    - disposals (every column a non-signed Bscf amount except revisions, which may be negative).
    """

    __tablename__ = "reserves_reconciliation_line"
    __table_args__ = (
        UniqueConstraint("review_id", "field_id", "category", name="review_field_category"),
        CheckConstraint(_in("category", RECONCILIATION_CATEGORIES), name="category_known"),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    review_id: Mapped[int] = mapped_column(ForeignKey("reserves_review.id", ondelete="CASCADE"), index=True)
    field_id: Mapped[int] = mapped_column(Integer)
    field_name: Mapped[str] = mapped_column(String(120))
    asset_name: Mapped[str] = mapped_column(String(120))
    category: Mapped[str] = mapped_column(String(2))
    presence: Mapped[str] = mapped_column(String(10), default="both")  # both, new, left
    opening_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    production_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    revisions_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    extensions_discoveries_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    improved_recovery_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    acquisitions_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    disposals_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    closing_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    assigned: Mapped[bool] = mapped_column(Boolean, default=False)  # the engineer set the split
    assigned_by_name: Mapped[str] = mapped_column(String(120), default="")
