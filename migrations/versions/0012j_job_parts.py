"""job parts: a portfolio recompute is split into parts (a few fields each) that any worker
can claim; each part points at its portfolio job and lists its fields

Revision ID: 0012j
Revises: 0012s
Create Date: 2026-12-03 18:10:00

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

revision: str = "0012j"
down_revision: str | Sequence[str] | None = "0012s"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    with op.batch_alter_table("job", schema=None) as batch_op:
        batch_op.add_column(sa.Column("parent_id", sa.Integer(), nullable=True))
        batch_op.add_column(sa.Column("field_ids", sa.JSON(), nullable=True))
        batch_op.create_foreign_key(
            batch_op.f("fk_job_parent_id_job"), "job", ["parent_id"], ["id"], ondelete="CASCADE"
        )
        batch_op.create_index(batch_op.f("ix_job_parent_id"), ["parent_id"], unique=False)


def downgrade() -> None:
    with op.batch_alter_table("job", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_job_parent_id"))
        batch_op.drop_constraint(batch_op.f("fk_job_parent_id_job"), type_="foreignkey")
        batch_op.drop_column("field_ids")
        batch_op.drop_column("parent_id")
