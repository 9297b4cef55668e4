"""the sales-gas factor frozen in each reserves review snapshot (share of separator gas delivered
for sale after fuel, flare and shrinkage) and where it came from (the team default or the
field's own); NULL in snapshots frozen before it existed

Revision ID: 0012s
Revises: 0012p
Create Date: 2026-12-03 18:25:00

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

revision: str = "0012s"
down_revision: str | Sequence[str] | None = "0012p"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    with op.batch_alter_table("reserves_review_field", schema=None) as batch_op:
        batch_op.add_column(sa.Column("sales_gas_frac", sa.Float(), nullable=True))
        batch_op.add_column(
            sa.Column("sales_gas_frac_source", sa.String(length=10), server_default="", nullable=False)
        )
        batch_op.create_check_constraint(
            op.f("ck_reserves_review_field_sales_gas_frac_range"),
            "sales_gas_frac IS NULL OR (sales_gas_frac > 0 AND sales_gas_frac <= 1)",
        )


def downgrade() -> None:
    with op.batch_alter_table("reserves_review_field", schema=None) as batch_op:
        batch_op.drop_constraint(op.f("ck_reserves_review_field_sales_gas_frac_range"), type_="check")
        batch_op.drop_column("sales_gas_frac_source")
        batch_op.drop_column("sales_gas_frac")
