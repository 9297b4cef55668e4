"""a user's own choice of display units (null: the team's default)

Revision ID: 0006
Revises: 0005
Create Date: 2026-12-02 07:30:00

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

revision: str = "0006"
down_revision: str | Sequence[str] | None = "0005"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    with op.batch_alter_table("user_account") as batch:
        batch.add_column(sa.Column("unit_system", sa.String(length=10), nullable=True))
        batch.create_check_constraint(
            op.f("ck_user_account_unit_system_known"),
            "unit_system IS NULL OR unit_system IN ('oilfield', 'si')",
        )


def downgrade() -> None:
    with op.batch_alter_table("user_account") as batch:
        batch.drop_constraint(op.f("ck_user_account_unit_system_known"), type_="check")
        batch.drop_column("unit_system")
