"""estimate: the large ``detail`` JSON becomes the last column (SQLite only)

Revision ID: 0009s
Revises: 0009h
Create Date: 2026-12-03 08:45:00

SQLite stores a row's columns in order and a 100 kB ``detail`` spills into a chain of
overflow pages; reading any column after it walks that chain. The portfolio's summary of
2,000 current estimates (it reads ``inputs_fingerprint``, ``engine_version`` and
``computed_at``, which came after ``detail``) read about 160 MB a page view, 7-10 times the
time of the same rows without those columns (issue 17). The table is rebuilt with ``detail``
last; PostgreSQL keeps large values out of line (TOAST), so column order does not matter
there and nothing changes. Columns added later go after ``detail`` again: the portfolio must
not read them on SQLite, or a later revision moves ``detail`` last once more.

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

revision: str = "0009s"
down_revision: str | Sequence[str] | None = "0009h"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def _reorder(order_of) -> None:
    bind = op.get_bind()
    if bind.dialect.name != "sqlite":
        return
    names = [c["name"] for c in sa.inspect(bind).get_columns("estimate")]
    order = order_of(names)
    if order == names:
        return
    # With foreign keys on (every connection turns them on, and a transaction cannot turn
    # them off), dropping the old table sets field_note.estimate_id to NULL: keep the links.
    links = bind.execute(
        sa.text("SELECT id, estimate_id FROM field_note WHERE estimate_id IS NOT NULL")
    ).all()
    with op.batch_alter_table("estimate", recreate="always", partial_reordering=[tuple(order)]):
        pass
    for note_id, estimate_id in links:
        bind.execute(
            sa.text("UPDATE field_note SET estimate_id = :e WHERE id = :n"), {"e": estimate_id, "n": note_id}
        )


def _detail_last(names: list[str]) -> list[str]:
    return [n for n in names if n != "detail"] + ["detail"]


def _detail_after_flags(names: list[str]) -> list[str]:
    rest = [n for n in names if n != "detail"]
    i = rest.index("flags") + 1
    return rest[:i] + ["detail"] + rest[i:]


def upgrade() -> None:
    _reorder(_detail_last)


def downgrade() -> None:
    _reorder(_detail_after_flags)
