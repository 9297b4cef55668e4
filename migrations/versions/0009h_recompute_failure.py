"""recompute_failure: a field whose latest recompute failed (its estimate is stale, and why)

Revision ID: 0009h
Revises: 0008
Create Date: 2026-12-03 08:00:00

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

revision: str = "0009h"
down_revision: str | Sequence[str] | None = "0009w"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    op.create_table(
        "recompute_failure",
        sa.Column("field_id", sa.Integer(), nullable=False),
        sa.Column("job_id", sa.Integer(), nullable=True),
        sa.Column("error", sa.Text(), nullable=False),
        sa.Column("failed_at", sa.DateTime(timezone=True), nullable=False),
        sa.ForeignKeyConstraint(
            ["field_id"], ["field.id"], name=op.f("fk_recompute_failure_field_id_field"), ondelete="CASCADE"
        ),
        sa.ForeignKeyConstraint(
            ["job_id"], ["job.id"], name=op.f("fk_recompute_failure_job_id_job"), ondelete="SET NULL"
        ),
        sa.PrimaryKeyConstraint("field_id", name=op.f("pk_recompute_failure")),
    )


def downgrade() -> None:
    op.drop_table("recompute_failure")
