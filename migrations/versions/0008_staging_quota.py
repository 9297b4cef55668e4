"""staged uploads: what a row holds (a committable file or a rejected file's problem report),
and an index on the owner for the per-user staging quota

Revision ID: 0008
Revises: 0007
Create Date: 2026-12-02 21:00:00

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

revision: str = "0008"
down_revision: str | Sequence[str] | None = "0007"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    with op.batch_alter_table("staged_upload", schema=None) as batch_op:
        batch_op.add_column(sa.Column("content", sa.String(length=10), server_default="file", nullable=False))
        batch_op.create_index(batch_op.f("ix_staged_upload_created_by_id"), ["created_by_id"], unique=False)


def downgrade() -> None:
    with op.batch_alter_table("staged_upload", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_staged_upload_created_by_id"))
        batch_op.drop_column("content")
