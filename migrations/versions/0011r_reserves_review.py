"""reserves review: the review, its field snapshots (copies of the booked estimate),
bookings and reconciliation lines (issue 14)

Revision ID: 0011r
Revises: 0009s
Create Date: 2026-12-03 08:59:47.712204

Every revision must:
- run on both SQLite and PostgreSQL (use op.batch_alter_table for ALTERs);
- be reversible: downgrade() undoes upgrade() exactly;
- not import the application's models (copy the table shapes it needs);
- name constraints through the metadata naming convention (op.f(...)).
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0011r"
down_revision: str | Sequence[str] | None = "0009s"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    op.create_table(
        "reserves_review",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=120), nullable=False),
        sa.Column("effective_date", sa.Date(), nullable=False),
        sa.Column("status", sa.String(length=12), nullable=False),
        sa.Column("revision", sa.Integer(), nullable=False),
        sa.Column("reopened_from_id", sa.Integer(), nullable=True),
        sa.Column("reopen_reason", sa.Text(), nullable=False),
        sa.Column("created_by_id", sa.Integer(), nullable=True),
        sa.Column("created_by_name", sa.String(length=120), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("submitted_by_id", sa.Integer(), nullable=True),
        sa.Column("submitted_by_name", sa.String(length=120), nullable=False),
        sa.Column("submitted_at", sa.DateTime(timezone=True), nullable=True),
        sa.Column("approved_by_id", sa.Integer(), nullable=True),
        sa.Column("approved_by_name", sa.String(length=120), nullable=False),
        sa.Column("approved_at", sa.DateTime(timezone=True), nullable=True),
        sa.Column("approval_comment", sa.Text(), nullable=False),
        sa.CheckConstraint(
            "status IN ('draft', 'submitted', 'approved')", name=op.f("ck_reserves_review_status_known")
        ),
        sa.CheckConstraint("revision >= 1", name=op.f("ck_reserves_review_revision_pos")),
        sa.ForeignKeyConstraint(
            ["created_by_id"],
            ["user_account.id"],
            name=op.f("fk_reserves_review_created_by_id_user_account"),
            ondelete="SET NULL",
        ),
        sa.ForeignKeyConstraint(
            ["reopened_from_id"],
            ["reserves_review.id"],
            name=op.f("fk_reserves_review_reopened_from_id_reserves_review"),
            ondelete="RESTRICT",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_reserves_review")),
        sa.UniqueConstraint("name", "revision", name="name_revision"),
    )
    op.create_table(
        "reserves_reconciliation_line",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("review_id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("field_name", sa.String(length=120), nullable=False),
        sa.Column("asset_name", sa.String(length=120), nullable=False),
        sa.Column("category", sa.String(length=2), nullable=False),
        sa.Column("presence", sa.String(length=10), nullable=False),
        sa.Column("opening_bscf", sa.Float(), nullable=False),
        sa.Column("production_bscf", sa.Float(), nullable=False),
        sa.Column("revisions_bscf", sa.Float(), nullable=False),
        sa.Column("extensions_discoveries_bscf", sa.Float(), nullable=False),
        sa.Column("improved_recovery_bscf", sa.Float(), nullable=False),
        sa.Column("acquisitions_bscf", sa.Float(), nullable=False),
        sa.Column("disposals_bscf", sa.Float(), nullable=False),
        sa.Column("closing_bscf", sa.Float(), nullable=False),
        sa.Column("assigned", sa.Boolean(), nullable=False),
        sa.Column("assigned_by_name", sa.String(length=120), nullable=False),
        sa.CheckConstraint(
            "category IN ('1P', '2P', '3P')", name=op.f("ck_reserves_reconciliation_line_category_known")
        ),
        sa.ForeignKeyConstraint(
            ["review_id"],
            ["reserves_review.id"],
            name=op.f("fk_reserves_reconciliation_line_review_id_reserves_review"),
            ondelete="CASCADE",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_reserves_reconciliation_line")),
        sa.UniqueConstraint("review_id", "field_id", "category", name="review_field_category"),
    )
    with op.batch_alter_table("reserves_reconciliation_line", schema=None) as batch_op:
        batch_op.create_index(
            batch_op.f("ix_reserves_reconciliation_line_review_id"), ["review_id"], unique=False
        )

    op.create_table(
        "reserves_review_field",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("review_id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("field_name", sa.String(length=120), nullable=False),
        sa.Column("asset_id", sa.Integer(), nullable=False),
        sa.Column("asset_name", sa.String(length=120), nullable=False),
        sa.Column("estimate_id", sa.Integer(), nullable=True),
        sa.Column("estimate_status", sa.String(length=10), nullable=False),
        sa.Column("estimate_computed_at", sa.DateTime(timezone=True), nullable=True),
        sa.Column("inputs_fingerprint", sa.String(length=64), nullable=False),
        sa.Column("engine_version", sa.String(length=20), nullable=False),
        sa.Column("basis_model", sa.String(length=40), nullable=False),
        sa.Column("basis_title", sa.String(length=200), nullable=False),
        sa.Column("basis_source", sa.String(length=20), nullable=False),
        sa.Column("giip_low_bscf", sa.Float(), nullable=True),
        sa.Column("giip_best_bscf", sa.Float(), nullable=True),
        sa.Column("giip_high_bscf", sa.Float(), nullable=True),
        sa.Column("eur_low_bscf", sa.Float(), nullable=True),
        sa.Column("eur_best_bscf", sa.Float(), nullable=True),
        sa.Column("eur_high_bscf", sa.Float(), nullable=True),
        sa.Column("volume_source", sa.String(length=10), nullable=False),
        sa.Column("forecast", sa.JSON(), nullable=True),
        sa.Column("produced_gas_bscf", sa.Float(), nullable=False),
        sa.Column("produced_condensate_stb", sa.Float(), nullable=False),
        sa.Column("production_last_month", sa.Date(), nullable=True),
        sa.Column("flags", sa.JSON(), nullable=False),
        sa.Column("has_alert", sa.Boolean(), nullable=False),
        sa.Column("snapshot_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            "volume_source IN ('forecast', 'basis', 'none')",
            name=op.f("ck_reserves_review_field_volume_source_known"),
        ),
        sa.ForeignKeyConstraint(
            ["review_id"],
            ["reserves_review.id"],
            name=op.f("fk_reserves_review_field_review_id_reserves_review"),
            ondelete="CASCADE",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_reserves_review_field")),
        sa.UniqueConstraint("review_id", "field_id", name="review_field"),
    )
    with op.batch_alter_table("reserves_review_field", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_reserves_review_field_review_id"), ["review_id"], unique=False)

    op.create_table(
        "reserves_booking",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("review_field_id", sa.Integer(), nullable=False),
        sa.Column("resource_class", sa.String(length=12), nullable=False),
        sa.Column("status", sa.String(length=30), nullable=False),
        sa.Column("computed_low_bscf", sa.Float(), nullable=True),
        sa.Column("computed_best_bscf", sa.Float(), nullable=True),
        sa.Column("computed_high_bscf", sa.Float(), nullable=True),
        sa.Column("condensate_gas_ratio_stb_per_mmscf", sa.Float(), nullable=True),
        sa.Column("override_low_bscf", sa.Float(), nullable=True),
        sa.Column("override_best_bscf", sa.Float(), nullable=True),
        sa.Column("override_high_bscf", sa.Float(), nullable=True),
        sa.Column("override_reason", sa.Text(), nullable=False),
        sa.Column("justification", sa.Text(), nullable=False),
        sa.Column("updated_by_id", sa.Integer(), nullable=True),
        sa.Column("updated_by_name", sa.String(length=120), nullable=False),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=True),
        sa.CheckConstraint(
            "(override_low_bscf IS NULL AND override_best_bscf IS NULL AND override_high_bscf IS NULL) OR override_reason <> ''",
            name=op.f("ck_reserves_booking_override_has_reason"),
        ),
        sa.CheckConstraint(
            "(resource_class = 'reserves' AND status IN ('developed_producing', 'developed_non_producing', 'undeveloped')) OR (resource_class = 'contingent' AND status IN ('development_pending', 'development_on_hold', 'development_unclarified', 'development_not_viable'))",
            name=op.f("ck_reserves_booking_status_of_class"),
        ),
        sa.CheckConstraint(
            "resource_class IN ('reserves', 'contingent')", name=op.f("ck_reserves_booking_class_known")
        ),
        sa.ForeignKeyConstraint(
            ["review_field_id"],
            ["reserves_review_field.id"],
            name=op.f("fk_reserves_booking_review_field_id_reserves_review_field"),
            ondelete="CASCADE",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_reserves_booking")),
        sa.UniqueConstraint("review_field_id", name=op.f("uq_reserves_booking_review_field_id")),
    )


def downgrade() -> None:
    op.drop_table("reserves_booking")
    with op.batch_alter_table("reserves_review_field", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_reserves_review_field_review_id"))

    op.drop_table("reserves_review_field")
    with op.batch_alter_table("reserves_reconciliation_line", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_reserves_reconciliation_line_review_id"))

    op.drop_table("reserves_reconciliation_line")
    op.drop_table("reserves_review")
