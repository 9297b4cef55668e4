"""field plan: the back-pressure equation's form, pressure squared (the default, as before) or
pseudo-pressure (issue 13)

Revision ID: 0012p
Revises: 0010f
Create Date: 2026-12-03 18:20:00

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

revision: str = "0012p"
down_revision: str | Sequence[str] | None = "0010f"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

KNOWN = "deliverability_form IN ('pressure_squared', 'pseudo_pressure')"


def upgrade() -> None:
    with op.batch_alter_table("field_plan", schema=None) as batch_op:
        batch_op.add_column(
            sa.Column(
                "deliverability_form", sa.String(length=20), nullable=False, server_default="pressure_squared"
            )
        )
        batch_op.create_check_constraint(batch_op.f("ck_field_plan_deliverability_form_known"), KNOWN)


def downgrade() -> None:
    # Plans in the pseudo-pressure form fall back to the pressure-squared form (the only one
    # the older schema knows); their forecasts change at the next recompute.
    with op.batch_alter_table("field_plan", schema=None) as batch_op:
        batch_op.drop_constraint(batch_op.f("ck_field_plan_deliverability_form_known"), type_="check")
        batch_op.drop_column("deliverability_form")
