"""the forecast's inputs: multi-rate well tests, the field plan (one row per field) and planned
wells; the forecast summary on each estimate (EUR per case at the commercial limit, end date,
stop reason)

Revision ID: 0010f
Revises: 0011r
Create Date: 2026-12-03 08:20:00

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

revision: str = "0010f"
down_revision: str | Sequence[str] | None = "0011r"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    op.create_table(
        "field_plan",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("plateau_rate_mscf_per_day", sa.Float(), nullable=True),
        sa.Column("uptime_frac", sa.Float(), nullable=False),
        sa.Column("min_flowing_bhp_psia", sa.Float(), nullable=True),
        sa.Column("compression_start_date", sa.Date(), nullable=True),
        sa.Column("compression_min_flowing_bhp_psia", sa.Float(), nullable=True),
        sa.Column("economic_limit_mscf_per_day", sa.Float(), nullable=False),
        sa.Column("licence_end_date", sa.Date(), nullable=True),
        sa.Column("deliverability_exponent", sa.Float(), nullable=False),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            "(compression_start_date IS NULL) = (compression_min_flowing_bhp_psia IS NULL)",
            name=op.f("ck_field_plan_compression_complete"),
        ),
        sa.CheckConstraint(
            "compression_min_flowing_bhp_psia IS NULL OR compression_min_flowing_bhp_psia > 0",
            name=op.f("ck_field_plan_compression_pos"),
        ),
        sa.CheckConstraint(
            "compression_min_flowing_bhp_psia IS NULL OR min_flowing_bhp_psia IS NULL OR compression_min_flowing_bhp_psia < min_flowing_bhp_psia",
            name=op.f("ck_field_plan_compression_lowers"),
        ),
        sa.CheckConstraint(
            "deliverability_exponent >= 0.5 AND deliverability_exponent <= 1",
            name=op.f("ck_field_plan_exponent_range"),
        ),
        sa.CheckConstraint(
            "economic_limit_mscf_per_day >= 0", name=op.f("ck_field_plan_economic_limit_nonneg")
        ),
        sa.CheckConstraint(
            "min_flowing_bhp_psia IS NULL OR (min_flowing_bhp_psia > 0 AND min_flowing_bhp_psia < 30000)",
            name=op.f("ck_field_plan_min_flowing_range"),
        ),
        sa.CheckConstraint(
            "plateau_rate_mscf_per_day IS NULL OR plateau_rate_mscf_per_day > 0",
            name=op.f("ck_field_plan_plateau_pos"),
        ),
        sa.CheckConstraint("uptime_frac > 0 AND uptime_frac <= 1", name=op.f("ck_field_plan_uptime_range")),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_field_plan_field_id_field"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_field_plan")),
        sa.UniqueConstraint("field_id", name=op.f("uq_field_plan_field_id")),
    )
    op.create_table(
        "planned_well",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=120), nullable=False),
        sa.Column("start_date", sa.Date(), nullable=False),
        sa.Column("compartment", sa.String(length=60), nullable=True),
        sa.Column("c_mscf_per_day_psi2n", sa.Float(), nullable=False),
        sa.Column("n", sa.Float(), nullable=False),
        sa.Column("upload_id", sa.Integer(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint("c_mscf_per_day_psi2n > 0", name=op.f("ck_planned_well_c_pos")),
        sa.CheckConstraint("n >= 0.5 AND n <= 1", name=op.f("ck_planned_well_n_range")),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_planned_well_field_id_field"), ondelete="CASCADE"
        ),
        sa.ForeignKeyConstraint(
            ["upload_id"], ["upload.id"], name=op.f("fk_planned_well_upload_id_upload"), ondelete="SET NULL"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_planned_well")),
        sa.UniqueConstraint("field_id", "name", name=op.f("uq_planned_well_field_id")),
    )
    with op.batch_alter_table("planned_well", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_planned_well_field_id"), ["field_id"], unique=False)

    op.create_table(
        "well_test",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("well_id", sa.Integer(), nullable=False),
        sa.Column("test_date", sa.Date(), nullable=False),
        sa.Column("rate_mscf_per_day", sa.Float(), nullable=False),
        sa.Column("flowing_bhp_psia", sa.Float(), nullable=False),
        sa.Column("static_pressure_psia", sa.Float(), nullable=False),
        sa.Column("upload_id", sa.Integer(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            "flowing_bhp_psia > 0 AND flowing_bhp_psia < static_pressure_psia",
            name=op.f("ck_well_test_flowing_below_static"),
        ),
        sa.CheckConstraint("rate_mscf_per_day > 0", name=op.f("ck_well_test_rate_pos")),
        sa.CheckConstraint(
            "static_pressure_psia > 0 AND static_pressure_psia < 30000",
            name=op.f("ck_well_test_static_pressure_range"),
        ),
        sa.ForeignKeyConstraint(
            ["upload_id"], ["upload.id"], name=op.f("fk_well_test_upload_id_upload"), ondelete="SET NULL"
        ),
        sa.ForeignKeyConstraint(
            ["well_id"], ["well.id"], name=op.f("fk_well_test_well_id_well"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_well_test")),
        sa.UniqueConstraint("well_id", "test_date", "rate_mscf_per_day", name=op.f("uq_well_test_well_id")),
    )
    with op.batch_alter_table("well_test", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_well_test_well_id"), ["well_id"], unique=False)

    with op.batch_alter_table("estimate", schema=None) as batch_op:
        batch_op.add_column(sa.Column("forecast_eur_low_bscf", sa.Float(), nullable=True))
        batch_op.add_column(sa.Column("forecast_eur_best_bscf", sa.Float(), nullable=True))
        batch_op.add_column(sa.Column("forecast_eur_high_bscf", sa.Float(), nullable=True))
        batch_op.add_column(sa.Column("forecast_end_date", sa.Date(), nullable=True))
        batch_op.add_column(sa.Column("forecast_stop_reason", sa.String(length=40), nullable=True))
        batch_op.add_column(sa.Column("forecast_yearly", sa.JSON(), nullable=True))


def downgrade() -> None:
    with op.batch_alter_table("estimate", schema=None) as batch_op:
        batch_op.drop_column("forecast_yearly")
        batch_op.drop_column("forecast_stop_reason")
        batch_op.drop_column("forecast_end_date")
        batch_op.drop_column("forecast_eur_high_bscf")
        batch_op.drop_column("forecast_eur_best_bscf")
        batch_op.drop_column("forecast_eur_low_bscf")

    with op.batch_alter_table("well_test", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_well_test_well_id"))

    op.drop_table("well_test")
    with op.batch_alter_table("planned_well", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_planned_well_field_id"))

    op.drop_table("planned_well")
    op.drop_table("field_plan")
