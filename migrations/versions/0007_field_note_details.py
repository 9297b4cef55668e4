"""field notes: author's name, optional survey/estimate reference, body length limit

Revision ID: 0007
Revises: 0006
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

revision: str = "0007"
down_revision: str | Sequence[str] | None = "0006"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

NOTE_MAX_CHARS = 4000  # as server/db/models/portfolio.py


def upgrade() -> None:
    with op.batch_alter_table("field_note", schema=None) as batch_op:
        batch_op.add_column(
            sa.Column("author_username", sa.String(length=120), server_default="", nullable=False)
        )
        batch_op.add_column(sa.Column("survey_id", sa.Integer(), nullable=True))
        batch_op.add_column(sa.Column("estimate_id", sa.Integer(), nullable=True))
        batch_op.create_foreign_key(
            batch_op.f("fk_field_note_survey_id_pressure_survey"),
            "pressure_survey",
            ["survey_id"],
            ["id"],
            ondelete="SET NULL",
        )
        batch_op.create_foreign_key(
            batch_op.f("fk_field_note_estimate_id_estimate"),
            "estimate",
            ["estimate_id"],
            ["id"],
            ondelete="SET NULL",
        )
        batch_op.create_check_constraint(
            batch_op.f("ck_field_note_body_length"),
            f"length(body) >= 1 AND length(body) <= {NOTE_MAX_CHARS}",
        )


def downgrade() -> None:
    with op.batch_alter_table("field_note", schema=None) as batch_op:
        batch_op.drop_constraint(batch_op.f("ck_field_note_body_length"), type_="check")
        batch_op.drop_constraint(batch_op.f("fk_field_note_estimate_id_estimate"), type_="foreignkey")
        batch_op.drop_constraint(batch_op.f("fk_field_note_survey_id_pressure_survey"), type_="foreignkey")
        batch_op.drop_column("estimate_id")
        batch_op.drop_column("survey_id")
        batch_op.drop_column("author_username")
