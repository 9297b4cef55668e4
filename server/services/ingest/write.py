"""Writing a checked plan: bulk inserts (COPY on PostgreSQL), replacements with their
history in ``audit_event``. Always inside the caller's transaction."""

from __future__ import annotations

from sqlalchemy import Table, insert
from sqlalchemy.orm import Session

from .. import audit
from ..audit import Actor
from .plan import Change, plain


def bulk_insert(session: Session, table: Table, rows: list[dict]) -> None:
    """Insert many rows at once; PostgreSQL's COPY for speed, executemany elsewhere."""
    if not rows:
        return
    session.flush()
    conn = session.connection()
    if conn.dialect.name != "postgresql":
        session.execute(insert(table), rows)
        return
    from psycopg import sql

    cols = list(rows[0])
    stmt = sql.SQL("COPY {} ({}) FROM STDIN").format(
        sql.Identifier(table.name), sql.SQL(", ").join(map(sql.Identifier, cols))
    )
    raw = conn.connection.dbapi_connection
    with raw.cursor() as cur, cur.copy(stmt) as copy:
        for r in rows:
            copy.write_row([r[c] for c in cols])  # psycopg adapts each value (C-accelerated)


def replace_row(
    session: Session,
    change: Change,
    *,
    upload_id: int,
    actor: Actor,
    field_id: int | None,
    columns: tuple[str, ...] | None = None,
) -> None:
    """Overwrite a stored row with the file's values, keeping the old ones in the audit trail."""
    current = change.current
    names = columns or tuple(change.before)
    after = {}
    for k in names:
        setattr(current, k, change.values[k])
        after[k] = plain(change.values[k])
    if hasattr(current, "upload_id"):
        current.upload_id = upload_id
    audit.record(
        session,
        actor,
        "replace",
        current.__tablename__,
        current.id,
        field_id=field_id,
        before=change.before,
        after=after,
        summary=f"upload {upload_id}, row {change.row}: {change.label}",
    )
