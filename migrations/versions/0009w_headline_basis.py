"""the headline's basis (issue 12): the analysis choice basis_model + basis_reason replaces
aquifer_model (a choice that did nothing); the stored estimate names its basis and keeps the
straight p/z line's GIIP beside it

Revision ID: 0009w
Revises: 0009f
Create Date: 2026-12-03 08:00:00

Every revision must:
- run on both SQLite and PostgreSQL (use op.batch_alter_table for ALTERs);
- be reversible: downgrade() undoes upgrade() exactly;
- not import the application's models (copy the table shapes it needs);
- name constraints through the metadata naming convention (op.f(...)).

Data: every field's basis starts "automatic" (the old aquifer choice changed no number, so
no stored choice is carried into the headline). Estimates stored before this revision were
the straight line, so their line_giip_* columns are their giip_* columns; their basis
columns stay empty (pages then show the line). Downgrade sets aquifer_model back to "none".
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0009w"
down_revision: str | Sequence[str] | None = "0009f"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

_LINE = ("low", "best", "high")


def upgrade() -> None:
    with op.batch_alter_table("field_analysis_settings", schema=None) as batch_op:
        batch_op.add_column(
            sa.Column("basis_model", sa.String(length=40), server_default="automatic", nullable=False)
        )
        batch_op.add_column(sa.Column("basis_reason", sa.Text(), server_default="", nullable=False))
        batch_op.drop_column("aquifer_model")
    with op.batch_alter_table("estimate", schema=None) as batch_op:
        batch_op.add_column(sa.Column("basis_model", sa.String(length=40), nullable=True))
        batch_op.add_column(sa.Column("basis_title", sa.String(length=200), nullable=True))
        batch_op.add_column(sa.Column("basis_source", sa.String(length=20), nullable=True))
        for part in _LINE:
            batch_op.add_column(sa.Column(f"line_giip_{part}_bscf", sa.Float(), nullable=True))
    op.execute(
        "UPDATE estimate SET line_giip_low_bscf = giip_low_bscf, line_giip_best_bscf = giip_best_bscf, "
        "line_giip_high_bscf = giip_high_bscf WHERE status = 'ok'"
    )


def downgrade() -> None:
    with op.batch_alter_table("estimate", schema=None) as batch_op:
        for part in reversed(_LINE):
            batch_op.drop_column(f"line_giip_{part}_bscf")
        batch_op.drop_column("basis_source")
        batch_op.drop_column("basis_title")
        batch_op.drop_column("basis_model")
    with op.batch_alter_table("field_analysis_settings", schema=None) as batch_op:
        batch_op.add_column(
            sa.Column("aquifer_model", sa.String(length=40), server_default="none", nullable=False)
        )
    with op.batch_alter_table("field_analysis_settings", schema=None) as batch_op:
        batch_op.alter_column("aquifer_model", server_default=None)
        batch_op.drop_column("basis_reason")
        batch_op.drop_column("basis_model")
