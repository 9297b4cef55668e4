"""Computed estimates, uploads and background jobs."""

from __future__ import annotations

import datetime as dt

from sqlalchemy import JSON, CheckConstraint, Date, Float, ForeignKey, Integer, String, Text
from sqlalchemy.orm import Mapped, mapped_column

from ..base import Base, utcnow


class Estimate(Base):
    """A stored engine result for a field; append-only, newest row is current."""

    __tablename__ = "estimate"
    __table_args__ = (CheckConstraint("status IN ('ok', 'refused', 'error')", name="status_known"),)
    id: Mapped[int] = mapped_column(primary_key=True)
    field_id: Mapped[int] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), index=True)
    method: Mapped[str] = mapped_column(String(40))
    status: Mapped[str] = mapped_column(String(10))
    message: Mapped[str] = mapped_column(Text, default="")
    giip_low_bscf: Mapped[float | None] = mapped_column(Float)
    giip_best_bscf: Mapped[float | None] = mapped_column(Float)
    giip_high_bscf: Mapped[float | None] = mapped_column(Float)
    eur_bscf: Mapped[float | None] = mapped_column(Float)
    recovery_factor_frac: Mapped[float | None] = mapped_column(Float)
    cumulative_gas_bscf: Mapped[float] = mapped_column(Float, default=0.0)
    remaining_bscf: Mapped[float | None] = mapped_column(Float)
    # The forecast's summary (detail["forecast"] holds the profiles): EUR at the commercial
    # limit per case, the best case's last producing date and why it stops.
    forecast_eur_low_bscf: Mapped[float | None] = mapped_column(Float)
    forecast_eur_best_bscf: Mapped[float | None] = mapped_column(Float)
    forecast_eur_high_bscf: Mapped[float | None] = mapped_column(Float)
    forecast_end_date: Mapped[dt.date | None] = mapped_column(Date)
    forecast_stop_reason: Mapped[str | None] = mapped_column(String(40))
    # Gas per calendar year per case, {"years": [...], "low": [...], "best": [...], "high": [...]}
    # in Bscf: what the portfolio's stacked profile and export read (services/forecast.py).
    forecast_yearly: Mapped[dict | None] = mapped_column(JSON)
    flags: Mapped[list] = mapped_column(JSON, default=list)
    # The headline's basis (the giip_*/eur/recovery/remaining columns above come from it) and
    # the straight p/z line beside it, as plain columns so the portfolio need not read detail.
    basis_model: Mapped[str | None] = mapped_column(String(40))
    basis_title: Mapped[str | None] = mapped_column(String(200))
    basis_source: Mapped[str | None] = mapped_column(String(20))  # "automatic" or "engineer"
    line_giip_low_bscf: Mapped[float | None] = mapped_column(Float)
    line_giip_best_bscf: Mapped[float | None] = mapped_column(Float)
    line_giip_high_bscf: Mapped[float | None] = mapped_column(Float)
    inputs_fingerprint: Mapped[str] = mapped_column(String(64), index=True)
    engine_version: Mapped[str] = mapped_column(String(20))
    computed_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    # Last: on SQLite a column after this large JSON costs a walk of its overflow pages
    # (migration 0009s; the portfolio reads every other column of 2,000 rows).
    detail: Mapped[dict] = mapped_column(JSON, default=dict)


class Upload(Base):
    """A committed file (or API body) of rows; rejected files leave no row."""

    __tablename__ = "upload"
    id: Mapped[int] = mapped_column(primary_key=True)
    kind: Mapped[str] = mapped_column(String(30))
    filename: Mapped[str] = mapped_column(String(255), default="")
    sha256: Mapped[str] = mapped_column(String(64), index=True)
    size_bytes: Mapped[int] = mapped_column(Integer)
    rows_total: Mapped[int] = mapped_column(Integer)
    rows_inserted: Mapped[int] = mapped_column(Integer, default=0)
    rows_unchanged: Mapped[int] = mapped_column(Integer, default=0)
    rows_replaced: Mapped[int] = mapped_column(Integer, default=0)
    uploaded_by_id: Mapped[int | None] = mapped_column(ForeignKey("user_account.id", ondelete="SET NULL"))
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    summary: Mapped[dict] = mapped_column(JSON, default=dict)


class Job(Base):
    """A unit of background work: a recompute of one field, of the portfolio, or a part of
    a portfolio recompute (``parent_id`` its portfolio job, ``field_ids`` its fields), which
    any worker may claim (issue 17)."""

    __tablename__ = "job"
    __table_args__ = (
        CheckConstraint("status IN ('queued', 'running', 'done', 'failed')", name="status_known"),
        CheckConstraint("progress_done >= 0 AND progress_total >= 0", name="progress_nonneg"),
    )
    id: Mapped[int] = mapped_column(primary_key=True)
    kind: Mapped[str] = mapped_column(String(30))
    field_id: Mapped[int | None] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), index=True)
    status: Mapped[str] = mapped_column(String(10), default="queued", index=True)
    reason: Mapped[str] = mapped_column(String(200), default="")
    progress_done: Mapped[int] = mapped_column(Integer, default=0)
    progress_total: Mapped[int] = mapped_column(Integer, default=0)
    attempts: Mapped[int] = mapped_column(Integer, default=0)
    claimed_by: Mapped[str | None] = mapped_column(String(120))
    heartbeat_at: Mapped[dt.datetime | None] = mapped_column()
    error: Mapped[str | None] = mapped_column(Text)
    created_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
    finished_at: Mapped[dt.datetime | None] = mapped_column()
    parent_id: Mapped[int | None] = mapped_column(ForeignKey("job.id", ondelete="CASCADE"), index=True)
    field_ids: Mapped[list | None] = mapped_column(JSON)


class RecomputeFailure(Base):
    """A field whose latest recompute failed unexpectedly: its stored estimate is stale.

    One row per field, replaced by each failure and deleted by the next recompute that
    finishes (issue 18: one field's failure must not stop the portfolio, and its page
    must say why the estimate shown is old)."""

    __tablename__ = "recompute_failure"
    field_id: Mapped[int] = mapped_column(ForeignKey("field.id", ondelete="CASCADE"), primary_key=True)
    job_id: Mapped[int | None] = mapped_column(ForeignKey("job.id", ondelete="SET NULL"))
    error: Mapped[str] = mapped_column(Text)
    failed_at: Mapped[dt.datetime] = mapped_column(default=utcnow)
