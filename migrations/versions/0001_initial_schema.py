"""initial schema

Revision ID: 0001
Revises:
Create Date: 2026-12-02 00:45:46.465493

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

revision: str = "0001"
down_revision: str | Sequence[str] | None = None
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:

    op.create_table(
        "asset",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=120), nullable=False),
        sa.Column("basin", sa.String(length=120), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_asset")),
        sa.UniqueConstraint("name", name=op.f("uq_asset_name")),
    )
    op.create_table(
        "user_account",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("username", sa.String(length=80), nullable=False),
        sa.Column("display_name", sa.String(length=120), nullable=False),
        sa.Column("password_hash", sa.String(length=255), nullable=True),
        sa.Column("role", sa.String(length=20), nullable=False),
        sa.Column("is_active", sa.Boolean(), nullable=False),
        sa.Column("failed_logins", sa.Integer(), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("password_changed_at", sa.DateTime(timezone=True), nullable=True),
        sa.CheckConstraint(
            "role IN ('viewer', 'engineer', 'approver', 'admin')", name=op.f("ck_user_account_role_known")
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_user_account")),
        sa.UniqueConstraint("username", name=op.f("uq_user_account_username")),
    )
    op.create_table(
        "api_token",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("user_id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=120), nullable=False),
        sa.Column("token_hash", sa.String(length=64), nullable=False),
        sa.Column("scopes", sa.JSON(), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("last_used_at", sa.DateTime(timezone=True), nullable=True),
        sa.Column("revoked_at", sa.DateTime(timezone=True), nullable=True),
        sa.ForeignKeyConstraint(
            ["user_id"],
            ["user_account.id"],
            name=op.f("fk_api_token_user_id_user_account"),
            ondelete="CASCADE",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_api_token")),
        sa.UniqueConstraint("token_hash", name=op.f("uq_api_token_token_hash")),
    )
    with op.batch_alter_table("api_token", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_api_token_user_id"), ["user_id"], unique=False)

    op.create_table(
        "auth_session",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("token_hash", sa.String(length=64), nullable=False),
        sa.Column("user_id", sa.Integer(), nullable=False),
        sa.Column("csrf_token", sa.String(length=64), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("last_seen_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("revoked_at", sa.DateTime(timezone=True), nullable=True),
        sa.ForeignKeyConstraint(
            ["user_id"],
            ["user_account.id"],
            name=op.f("fk_auth_session_user_id_user_account"),
            ondelete="CASCADE",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_auth_session")),
        sa.UniqueConstraint("token_hash", name=op.f("uq_auth_session_token_hash")),
    )
    with op.batch_alter_table("auth_session", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_auth_session_user_id"), ["user_id"], unique=False)

    op.create_table(
        "field",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("asset_id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=120), nullable=False),
        sa.Column("datum_depth_ft", sa.Float(), nullable=False),
        sa.Column("reservoir_temperature_degF", sa.Float(), nullable=False),
        sa.Column("initial_pressure_psia", sa.Float(), nullable=False),
        sa.Column("abandonment_pressure_psia", sa.Float(), nullable=False),
        sa.Column("description", sa.Text(), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            '"reservoir_temperature_degF" > 32 AND "reservoir_temperature_degF" < 700',
            name=op.f("ck_field_temperature_range"),
        ),
        sa.CheckConstraint(
            "abandonment_pressure_psia > 0 AND abandonment_pressure_psia < initial_pressure_psia",
            name=op.f("ck_field_abandonment_below_initial"),
        ),
        sa.CheckConstraint("datum_depth_ft >= 0", name=op.f("ck_field_datum_depth_nonneg")),
        sa.CheckConstraint("initial_pressure_psia > 0", name=op.f("ck_field_initial_pressure_pos")),
        sa.ForeignKeyConstraint(
            ["asset_id"], ["asset.id"], name=op.f("fk_field_asset_id_asset"), ondelete="RESTRICT"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_field")),
        sa.UniqueConstraint("name", name=op.f("uq_field_name")),
    )
    with op.batch_alter_table("field", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_field_asset_id"), ["asset_id"], unique=False)

    op.create_table(
        "upload",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("kind", sa.String(length=30), nullable=False),
        sa.Column("filename", sa.String(length=255), nullable=False),
        sa.Column("sha256", sa.String(length=64), nullable=False),
        sa.Column("size_bytes", sa.Integer(), nullable=False),
        sa.Column("rows_total", sa.Integer(), nullable=False),
        sa.Column("rows_inserted", sa.Integer(), nullable=False),
        sa.Column("rows_unchanged", sa.Integer(), nullable=False),
        sa.Column("rows_replaced", sa.Integer(), nullable=False),
        sa.Column("uploaded_by_id", sa.Integer(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("summary", sa.JSON(), nullable=False),
        sa.ForeignKeyConstraint(
            ["uploaded_by_id"],
            ["user_account.id"],
            name=op.f("fk_upload_uploaded_by_id_user_account"),
            ondelete="SET NULL",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_upload")),
    )
    with op.batch_alter_table("upload", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_upload_sha256"), ["sha256"], unique=False)

    op.create_table(
        "audit_event",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("user_id", sa.Integer(), nullable=True),
        sa.Column("actor", sa.String(length=120), nullable=False),
        sa.Column("action", sa.String(length=60), nullable=False),
        sa.Column("entity_type", sa.String(length=60), nullable=False),
        sa.Column("entity_id", sa.Integer(), nullable=True),
        sa.Column("field_id", sa.Integer(), nullable=True),
        sa.Column("before", sa.JSON(), nullable=True),
        sa.Column("after", sa.JSON(), nullable=True),
        sa.Column("summary", sa.Text(), nullable=False),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_audit_event_field_id_field"), ondelete="SET NULL"
        ),
        sa.ForeignKeyConstraint(
            ["user_id"],
            ["user_account.id"],
            name=op.f("fk_audit_event_user_id_user_account"),
            ondelete="SET NULL",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_audit_event")),
    )
    with op.batch_alter_table("audit_event", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_audit_event_at"), ["at"], unique=False)
        batch_op.create_index(batch_op.f("ix_audit_event_field_id"), ["field_id"], unique=False)

    op.create_table(
        "estimate",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("method", sa.String(length=40), nullable=False),
        sa.Column("status", sa.String(length=10), nullable=False),
        sa.Column("message", sa.Text(), nullable=False),
        sa.Column("giip_low_bscf", sa.Float(), nullable=True),
        sa.Column("giip_best_bscf", sa.Float(), nullable=True),
        sa.Column("giip_high_bscf", sa.Float(), nullable=True),
        sa.Column("eur_bscf", sa.Float(), nullable=True),
        sa.Column("recovery_factor_frac", sa.Float(), nullable=True),
        sa.Column("cumulative_gas_bscf", sa.Float(), nullable=False),
        sa.Column("remaining_bscf", sa.Float(), nullable=True),
        sa.Column("flags", sa.JSON(), nullable=False),
        sa.Column("detail", sa.JSON(), nullable=False),
        sa.Column("inputs_fingerprint", sa.String(length=64), nullable=False),
        sa.Column("engine_version", sa.String(length=20), nullable=False),
        sa.Column("computed_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint("status IN ('ok', 'refused', 'error')", name=op.f("ck_estimate_status_known")),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_estimate_field_id_field"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_estimate")),
    )
    with op.batch_alter_table("estimate", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_estimate_field_id"), ["field_id"], unique=False)
        batch_op.create_index(
            batch_op.f("ix_estimate_inputs_fingerprint"), ["inputs_fingerprint"], unique=False
        )

    op.create_table(
        "field_analysis_settings",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("z_method", sa.String(length=40), nullable=False),
        sa.Column("use_lab_table", sa.Boolean(), nullable=False),
        sa.Column("datum_correction", sa.Boolean(), nullable=False),
        sa.Column("condensate_correction", sa.Boolean(), nullable=False),
        sa.Column("overpressure_mode", sa.String(length=20), nullable=False),
        sa.Column("effective_compressibility_per_psi", sa.Float(), nullable=True),
        sa.Column("aquifer_model", sa.String(length=40), nullable=False),
        sa.Column("anchor_initial", sa.Boolean(), nullable=False),
        sa.Column("options", sa.JSON(), nullable=False),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            "effective_compressibility_per_psi IS NULL OR (effective_compressibility_per_psi >= 0 AND effective_compressibility_per_psi < 1e-3)",
            name=op.f("ck_field_analysis_settings_ce_range"),
        ),
        sa.ForeignKeyConstraint(
            ["field_id"],
            ["field.id"],
            name=op.f("fk_field_analysis_settings_field_id_field"),
            ondelete="CASCADE",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_field_analysis_settings")),
        sa.UniqueConstraint("field_id", name=op.f("uq_field_analysis_settings_field_id")),
    )
    op.create_table(
        "field_note",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("author_id", sa.Integer(), nullable=True),
        sa.Column("body", sa.Text(), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.ForeignKeyConstraint(
            ["author_id"],
            ["user_account.id"],
            name=op.f("fk_field_note_author_id_user_account"),
            ondelete="SET NULL",
        ),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_field_note_field_id_field"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_field_note")),
    )
    with op.batch_alter_table("field_note", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_field_note_field_id"), ["field_id"], unique=False)

    op.create_table(
        "fluid",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("gas_gravity", sa.Float(), nullable=False),
        sa.Column("y_co2_frac", sa.Float(), nullable=False),
        sa.Column("y_h2s_frac", sa.Float(), nullable=False),
        sa.Column("y_n2_frac", sa.Float(), nullable=False),
        sa.Column("condensate_api", sa.Float(), nullable=True),
        sa.CheckConstraint(
            "condensate_api IS NULL OR (condensate_api > 10 AND condensate_api < 100)",
            name=op.f("ck_fluid_api_range"),
        ),
        sa.CheckConstraint("gas_gravity > 0.55 AND gas_gravity < 1.8", name=op.f("ck_fluid_gravity_range")),
        sa.CheckConstraint(
            "y_co2_frac >= 0 AND y_h2s_frac >= 0 AND y_n2_frac >= 0 AND y_co2_frac + y_h2s_frac + y_n2_frac < 1",
            name=op.f("ck_fluid_inerts_range"),
        ),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_fluid_field_id_field"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_fluid")),
        sa.UniqueConstraint("field_id", name=op.f("uq_fluid_field_id")),
    )
    op.create_table(
        "job",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("kind", sa.String(length=30), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=True),
        sa.Column("status", sa.String(length=10), nullable=False),
        sa.Column("reason", sa.String(length=200), nullable=False),
        sa.Column("progress_done", sa.Integer(), nullable=False),
        sa.Column("progress_total", sa.Integer(), nullable=False),
        sa.Column("attempts", sa.Integer(), nullable=False),
        sa.Column("claimed_by", sa.String(length=120), nullable=True),
        sa.Column("heartbeat_at", sa.DateTime(timezone=True), nullable=True),
        sa.Column("error", sa.Text(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("finished_at", sa.DateTime(timezone=True), nullable=True),
        sa.CheckConstraint(
            "status IN ('queued', 'running', 'done', 'failed')", name=op.f("ck_job_status_known")
        ),
        sa.CheckConstraint("progress_done >= 0 AND progress_total >= 0", name=op.f("ck_job_progress_nonneg")),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_job_field_id_field"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_job")),
    )
    with op.batch_alter_table("job", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_job_field_id"), ["field_id"], unique=False)
        batch_op.create_index(batch_op.f("ix_job_status"), ["status"], unique=False)

    op.create_table(
        "volumetric_estimate",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("estimate_date", sa.Date(), nullable=False),
        sa.Column("author", sa.String(length=120), nullable=False),
        sa.Column("giip_low_bscf", sa.Float(), nullable=False),
        sa.Column("giip_best_bscf", sa.Float(), nullable=False),
        sa.Column("giip_high_bscf", sa.Float(), nullable=False),
        sa.Column("method", sa.String(length=20), nullable=False),
        sa.Column("inputs", sa.JSON(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            "giip_low_bscf > 0 AND giip_low_bscf <= giip_best_bscf AND giip_best_bscf <= giip_high_bscf",
            name=op.f("ck_volumetric_estimate_ordered"),
        ),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_volumetric_estimate_field_id_field"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_volumetric_estimate")),
    )
    with op.batch_alter_table("volumetric_estimate", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_volumetric_estimate_field_id"), ["field_id"], unique=False)

    op.create_table(
        "well",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=120), nullable=False),
        sa.Column("compartment", sa.String(length=60), nullable=True),
        sa.Column("gauge_reference_depth_ft", sa.Float(), nullable=True),
        sa.CheckConstraint(
            "gauge_reference_depth_ft IS NULL OR gauge_reference_depth_ft >= 0",
            name=op.f("ck_well_gauge_depth_nonneg"),
        ),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_well_field_id_field"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_well")),
        sa.UniqueConstraint("field_id", "name", name=op.f("uq_well_field_id")),
    )
    with op.batch_alter_table("well", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_well_field_id"), ["field_id"], unique=False)

    op.create_table(
        "fluid_lab_point",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("fluid_id", sa.Integer(), nullable=False),
        sa.Column("pressure_psia", sa.Float(), nullable=False),
        sa.Column("z_factor", sa.Float(), nullable=True),
        sa.Column("bg_rcf_per_scf", sa.Float(), nullable=True),
        sa.CheckConstraint(
            "bg_rcf_per_scf IS NULL OR bg_rcf_per_scf > 0", name=op.f("ck_fluid_lab_point_bg_pos")
        ),
        sa.CheckConstraint("pressure_psia > 0", name=op.f("ck_fluid_lab_point_pressure_pos")),
        sa.CheckConstraint(
            "z_factor IS NOT NULL OR bg_rcf_per_scf IS NOT NULL", name=op.f("ck_fluid_lab_point_z_or_bg")
        ),
        sa.CheckConstraint(
            "z_factor IS NULL OR (z_factor > 0.1 AND z_factor < 3)", name=op.f("ck_fluid_lab_point_z_range")
        ),
        sa.ForeignKeyConstraint(
            ["fluid_id"], ["fluid.id"], name=op.f("fk_fluid_lab_point_fluid_id_fluid"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_fluid_lab_point")),
        sa.UniqueConstraint("fluid_id", "pressure_psia", name=op.f("uq_fluid_lab_point_fluid_id")),
    )
    with op.batch_alter_table("fluid_lab_point", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_fluid_lab_point_fluid_id"), ["fluid_id"], unique=False)

    op.create_table(
        "pressure_survey",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("well_id", sa.Integer(), nullable=False),
        sa.Column("survey_date", sa.Date(), nullable=False),
        sa.Column("pressure_psia", sa.Float(), nullable=False),
        sa.Column("gauge_depth_ft", sa.Float(), nullable=False),
        sa.Column("kind", sa.String(length=20), nullable=False),
        sa.Column("quality", sa.String(length=10), nullable=False),
        sa.Column("excluded", sa.Boolean(), nullable=False),
        sa.Column("exclusion_reason", sa.Text(), nullable=True),
        sa.Column("upload_id", sa.Integer(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            "kind IN ('static', 'buildup', 'formation_test')", name=op.f("ck_pressure_survey_kind_known")
        ),
        sa.CheckConstraint(
            "quality IN ('good', 'fair', 'poor')", name=op.f("ck_pressure_survey_quality_known")
        ),
        sa.CheckConstraint(
            "excluded = false OR exclusion_reason IS NOT NULL",
            name=op.f("ck_pressure_survey_exclusion_has_reason"),
        ),
        sa.CheckConstraint("gauge_depth_ft >= 0", name=op.f("ck_pressure_survey_gauge_depth_nonneg")),
        sa.CheckConstraint(
            "pressure_psia > 0 AND pressure_psia < 30000", name=op.f("ck_pressure_survey_pressure_range")
        ),
        sa.ForeignKeyConstraint(
            ["upload_id"],
            ["upload.id"],
            name=op.f("fk_pressure_survey_upload_id_upload"),
            ondelete="SET NULL",
        ),
        sa.ForeignKeyConstraint(
            ["well_id"], ["well.id"], name=op.f("fk_pressure_survey_well_id_well"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_pressure_survey")),
        sa.UniqueConstraint("well_id", "survey_date", name=op.f("uq_pressure_survey_well_id")),
    )
    with op.batch_alter_table("pressure_survey", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_pressure_survey_well_id"), ["well_id"], unique=False)

    op.create_table(
        "production_month",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("well_id", sa.Integer(), nullable=False),
        sa.Column("month", sa.Date(), nullable=False),
        sa.Column("gas_mscf", sa.Float(), nullable=False),
        sa.Column("condensate_stb", sa.Float(), nullable=False),
        sa.Column("water_stb", sa.Float(), nullable=False),
        sa.Column("upload_id", sa.Integer(), nullable=True),
        sa.CheckConstraint("condensate_stb >= 0", name=op.f("ck_production_month_condensate_nonneg")),
        sa.CheckConstraint("gas_mscf >= 0", name=op.f("ck_production_month_gas_nonneg")),
        sa.CheckConstraint("water_stb >= 0", name=op.f("ck_production_month_water_nonneg")),
        sa.ForeignKeyConstraint(
            ["upload_id"],
            ["upload.id"],
            name=op.f("fk_production_month_upload_id_upload"),
            ondelete="SET NULL",
        ),
        sa.ForeignKeyConstraint(
            ["well_id"], ["well.id"], name=op.f("fk_production_month_well_id_well"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_production_month")),
        sa.UniqueConstraint("well_id", "month", name=op.f("uq_production_month_well_id")),
    )
    with op.batch_alter_table("production_month", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_production_month_well_id"), ["well_id"], unique=False)


def downgrade() -> None:

    with op.batch_alter_table("production_month", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_production_month_well_id"))

    op.drop_table("production_month")
    with op.batch_alter_table("pressure_survey", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_pressure_survey_well_id"))

    op.drop_table("pressure_survey")
    with op.batch_alter_table("fluid_lab_point", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_fluid_lab_point_fluid_id"))

    op.drop_table("fluid_lab_point")
    with op.batch_alter_table("well", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_well_field_id"))

    op.drop_table("well")
    with op.batch_alter_table("volumetric_estimate", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_volumetric_estimate_field_id"))

    op.drop_table("volumetric_estimate")
    with op.batch_alter_table("job", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_job_status"))
        batch_op.drop_index(batch_op.f("ix_job_field_id"))

    op.drop_table("job")
    op.drop_table("fluid")
    with op.batch_alter_table("field_note", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_field_note_field_id"))

    op.drop_table("field_note")
    op.drop_table("field_analysis_settings")
    with op.batch_alter_table("estimate", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_estimate_inputs_fingerprint"))
        batch_op.drop_index(batch_op.f("ix_estimate_field_id"))

    op.drop_table("estimate")
    with op.batch_alter_table("audit_event", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_audit_event_field_id"))
        batch_op.drop_index(batch_op.f("ix_audit_event_at"))

    op.drop_table("audit_event")
    with op.batch_alter_table("upload", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_upload_sha256"))

    op.drop_table("upload")
    with op.batch_alter_table("field", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_field_asset_id"))

    op.drop_table("field")
    with op.batch_alter_table("auth_session", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_auth_session_user_id"))

    op.drop_table("auth_session")
    with op.batch_alter_table("api_token", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_api_token_user_id"))

    op.drop_table("api_token")
    op.drop_table("user_account")
    op.drop_table("asset")
