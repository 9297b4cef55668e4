"""estimate detail compressed with LZ4 on PostgreSQL: every recompute writes about 150 KB of
JSON detail a field, and the default compression (pglz) cost the database server about as
much processor time as loading and storing the rest of the estimate (issue 17)

Revision ID: 0013z
Revises: 0012j
Create Date: 2026-12-04 19:40:00

Every revision must:
- run on both SQLite and PostgreSQL (use op.batch_alter_table for ALTERs);
- be reversible: downgrade() undoes upgrade() exactly;
- not import the application's models (copy the table shapes it needs);
- name constraints through the metadata naming convention (op.f(...)).

PostgreSQL 14 and later only, and only when the server was built with LZ4 (the Debian and
official images are); elsewhere nothing changes. Values already stored keep their
compression until rewritten; new ones (every recompute writes a new row) use LZ4. SQLite
does not compress: nothing to do there.
"""

from __future__ import annotations

from collections.abc import Sequence

from alembic import op

revision: str = "0013z"
down_revision: str | Sequence[str] | None = "0012j"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

#: (table, column) of the large JSON values.
COLUMNS = (("estimate", "detail"), ("reserves_review_field", "forecast"))


def _set_compression(method: str) -> None:
    if op.get_bind().dialect.name != "postgresql":
        return
    for table, column in COLUMNS:
        # In a block of its own so that a server without LZ4 (or before 14) raises nothing.
        op.execute(
            f"""
            DO $$
            BEGIN
                IF current_setting('server_version_num')::int >= 140000 THEN
                    EXECUTE 'ALTER TABLE {table} ALTER COLUMN {column} SET COMPRESSION {method}';
                END IF;
            EXCEPTION WHEN feature_not_supported OR invalid_parameter_value THEN
                RAISE NOTICE 'compression {method} not available: {table}.{column} unchanged';
            END
            $$
            """
        )


def upgrade() -> None:
    _set_compression("lz4")


def downgrade() -> None:
    _set_compression("default")
