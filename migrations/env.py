"""Alembic environment: same migrations on SQLite and PostgreSQL (batch mode)."""

from __future__ import annotations

from alembic import context
from sqlalchemy import text

import server.db.models  # noqa: F401  (registers every table)
from server.db.base import Base
from server.db.session import make_engine

config = context.config
target_metadata = Base.metadata

# 7283 is an arbitrary constant: one advisory lock for all Tankbook schema upgrades.
_PG_MIGRATION_LOCK = 7283


def _url() -> str:
    url = config.attributes.get("database_url") or config.get_main_option("sqlalchemy.url")
    if not url:
        from server.settings import Settings

        url = Settings().database_url
    return url


def run_migrations_offline() -> None:
    context.configure(
        url=_url(),
        target_metadata=target_metadata,
        literal_binds=True,
        render_as_batch=True,
        compare_type=True,
    )
    with context.begin_transaction():
        context.run_migrations()


def run_migrations_online() -> None:
    connection = config.attributes.get("connection")
    if connection is not None:
        _run(connection)
        return
    engine = make_engine(_url())
    try:
        with engine.connect() as connection:
            if connection.dialect.name == "postgresql":
                # Several processes upgrading a fresh database at once would race.
                connection.execute(text("SELECT pg_advisory_lock(:k)"), {"k": _PG_MIGRATION_LOCK})
                connection.commit()
            try:
                _run(connection)
            finally:
                if connection.dialect.name == "postgresql":
                    connection.execute(text("SELECT pg_advisory_unlock(:k)"), {"k": _PG_MIGRATION_LOCK})
                    connection.commit()
    finally:
        engine.dispose()


def _run(connection) -> None:
    context.configure(
        connection=connection,
        target_metadata=target_metadata,
        render_as_batch=True,
        compare_type=True,
    )
    with context.begin_transaction():
        context.run_migrations()


if context.is_offline_mode():
    run_migrations_offline()
else:
    run_migrations_online()
