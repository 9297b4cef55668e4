"""Engine and session factories; nothing connects until first use."""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager

from sqlalchemy import Connection, Engine, create_engine, event
from sqlalchemy.orm import Session, sessionmaker


def make_engine(url: str, **kwargs) -> Engine:
    """Create an engine; SQLite gets foreign keys, WAL and a busy timeout on every connection."""
    if url.startswith("sqlite"):
        kwargs.setdefault("connect_args", {"check_same_thread": False, "timeout": 30})
        engine = create_engine(url, **kwargs)

        @event.listens_for(engine, "connect")
        def _sqlite_pragmas(dbapi_connection, _record):
            # Let SQLAlchemy, not pysqlite, emit BEGIN: savepoints then work
            # (SQLAlchemy docs, "Serializable isolation / Savepoints / Transactional DDL").
            dbapi_connection.isolation_level = None
            cur = dbapi_connection.cursor()
            cur.execute("PRAGMA foreign_keys=ON")
            if ":memory:" not in url:
                cur.execute("PRAGMA journal_mode=WAL")
            cur.execute("PRAGMA busy_timeout=30000")
            cur.close()

        @event.listens_for(engine, "begin")
        def _sqlite_begin(conn):
            conn.exec_driver_sql("BEGIN")

        return engine
    kwargs.setdefault("pool_pre_ping", True)
    return create_engine(url, **kwargs)


class Database:
    """An engine and its session factory, created by the app factory or the CLI."""

    def __init__(
        self,
        url: str | None = None,
        *,
        engine: Engine | None = None,
        bind: Connection | None = None,
    ):
        """Give a URL, an engine, or (tests) a connection whose outer transaction is
        rolled back later: sessions then commit to savepoints inside it."""
        if bind is not None:
            engine = bind.engine
            self.sessionmaker = sessionmaker(
                bind=bind, expire_on_commit=False, join_transaction_mode="create_savepoint"
            )
        else:
            if engine is None:
                if url is None:
                    raise ValueError("Database needs a URL, an engine or a connection")
                engine = make_engine(url)
            self.sessionmaker = sessionmaker(bind=engine, expire_on_commit=False)
        self.engine = engine

    @property
    def is_postgresql(self) -> bool:
        return self.engine.dialect.name == "postgresql"

    @contextmanager
    def session(self) -> Iterator[Session]:
        """A session that commits on success and rolls back on error."""
        with self.sessionmaker() as session:
            try:
                yield session
                session.commit()
            except BaseException:
                session.rollback()
                raise

    def dispose(self) -> None:
        self.engine.dispose()
