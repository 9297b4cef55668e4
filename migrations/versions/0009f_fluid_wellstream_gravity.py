"""fluid: the well-stream (reservoir) gas gravity in its own column; the separator gas
gravity may then be empty (at least one of the two is given)

Revision ID: 0009f
Revises: 0008
Create Date: 2026-12-03 07:48:18

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

revision: str = "0009f"
down_revision: str | Sequence[str] | None = "0008"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

OLD_GRAVITY_RANGE = "gas_gravity > 0.55 AND gas_gravity < 1.8"
NEW_GRAVITY_RANGE = "gas_gravity IS NULL OR (gas_gravity > 0.55 AND gas_gravity < 1.8)"
WELLSTREAM_RANGE = "wellstream_gravity IS NULL OR (wellstream_gravity > 0.55 AND wellstream_gravity < 1.8)"
A_GRAVITY = "gas_gravity IS NOT NULL OR wellstream_gravity IS NOT NULL"


def upgrade() -> None:
    with op.batch_alter_table("fluid", schema=None) as batch_op:
        batch_op.add_column(sa.Column("wellstream_gravity", sa.Float(), nullable=True))
        batch_op.alter_column("gas_gravity", existing_type=sa.Float(), nullable=True)
        batch_op.drop_constraint(batch_op.f("ck_fluid_gravity_range"), type_="check")
        batch_op.create_check_constraint(batch_op.f("ck_fluid_gravity_range"), NEW_GRAVITY_RANGE)
        batch_op.create_check_constraint(batch_op.f("ck_fluid_wellstream_gravity_range"), WELLSTREAM_RANGE)
        batch_op.create_check_constraint(batch_op.f("ck_fluid_a_gravity"), A_GRAVITY)


def downgrade() -> None:
    # The old schema has no place for a well-stream gravity and needs a separator gravity: a
    # fluid described only by its well-stream gravity cannot be kept without changing its
    # meaning (the old engine would recombine it again), so the downgrade refuses.
    bind = op.get_bind()
    n = bind.execute(sa.text("SELECT count(*) FROM fluid WHERE gas_gravity IS NULL")).scalar_one()
    if n:
        raise RuntimeError(
            f"{n} fluid description(s) have only a well-stream gravity; give them a separator gas "
            "gravity (or delete them) before downgrading below revision 0009f"
        )
    with op.batch_alter_table("fluid", schema=None) as batch_op:
        batch_op.drop_constraint(batch_op.f("ck_fluid_a_gravity"), type_="check")
        batch_op.drop_constraint(batch_op.f("ck_fluid_wellstream_gravity_range"), type_="check")
        batch_op.drop_constraint(batch_op.f("ck_fluid_gravity_range"), type_="check")
        batch_op.create_check_constraint(batch_op.f("ck_fluid_gravity_range"), OLD_GRAVITY_RANGE)
        batch_op.alter_column("gas_gravity", existing_type=sa.Float(), nullable=False)
        batch_op.drop_column("wellstream_gravity")
