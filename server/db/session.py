"""Engine and session factories; nothing connects until first use."""

from __future__ import annotations

import json
from collections.abc import Iterator
from contextlib import contextmanager

import orjson
from sqlalchemy import Connection, Engine, create_engine, event
from sqlalchemy.orm import Session, sessionmaker

WRITE_OPTION = "tankbook_write"  # execution option: this transaction will write
_JSON_OPTIONS = orjson.OPT_NON_STR_KEYS | orjson.OPT_SERIALIZE_NUMPY


def json_dumps(value) -> str:
    """JSON text for a JSON column: compact, numbers as ``json.dumps`` writes them (shortest
    round trip), NaN and infinity as null (PostgreSQL's json type refuses them anyway). About
    ten times faster than ``json.dumps`` on an estimate's 150 KB detail, which every
    recompute writes (issue 17). What orjson cannot write (an integer beyond 64 bits) is the
    standard library's text after one space, which :func:`json_loads` reads back exactly."""
    try:
        return orjson.dumps(value, default=_plain, option=_JSON_OPTIONS).decode()
    except orjson.JSONEncodeError:
        return " " + json.dumps(value)


def json_loads(value):
    """A JSON column's value. SQLite hands back a stored JSON number as a number. Text that
    orjson did not write (the fallback's leading space, or the standard library's ``": "``
    separators of values stored before issue 17) is read by the standard library, which keeps
    an integer beyond 64 bits exact where orjson would read a float."""
    if isinstance(value, int | float):
        return value
    text = value if isinstance(value, str) else bytes(value).decode()
    if text[:1] == " " or '": ' in text:
        return json.loads(text)
    return orjson.loads(text)


def _plain(value):
    if hasattr(value, "item"):  # a NumPy scalar
        return value.item()
    raise TypeError(f"Object of type {type(value).__name__} is not JSON serializable")


def make_engine(
    url: str,
    *,
    pool_size: int | None = None,
    max_overflow: int | None = None,
    pool_timeout_seconds: float | None = None,
    **kwargs,
) -> Engine:
    """Create an engine; SQLite gets foreign keys, WAL and a busy timeout on every connection,
    and ``BEGIN IMMEDIATE`` for transactions that will write (see :class:`Database`).

    ``pool_size``/``max_overflow`` size the connection pool (not for in-memory SQLite)."""
    kwargs.setdefault("json_serializer", json_dumps)
    kwargs.setdefault("json_deserializer", json_loads)
    memory = url.startswith("sqlite") and (":memory:" in url or url.rstrip("/") in ("sqlite:", "sqlite://"))
    if not memory:
        if pool_size is not None:
            kwargs.setdefault("pool_size", pool_size)
        if max_overflow is not None:
            kwargs.setdefault("max_overflow", max_overflow)
        if pool_timeout_seconds is not None:
            kwargs.setdefault("pool_timeout", pool_timeout_seconds)
    if url.startswith("sqlite"):
        kwargs.setdefault("connect_args", {"check_same_thread": False, "timeout": 30})
        engine = create_engine(url, **kwargs)

        @event.listens_for(engine, "connect")
        def _sqlite_pragmas(dbapi_connection, _record):
            # Let SQLAlchemy, not pysqlite, emit BEGIN (SQLAlchemy docs, "Serializable
            # isolation / Savepoints / Transactional DDL"): savepoints work, and a transaction
            # that will write can begin as one.
            dbapi_connection.isolation_level = None
            cur = dbapi_connection.cursor()
            cur.execute("PRAGMA foreign_keys=ON")
            if not memory:
                cur.execute("PRAGMA journal_mode=WAL")
            cur.execute("PRAGMA busy_timeout=30000")
            cur.close()

        @event.listens_for(engine, "begin")
        def _sqlite_begin(conn):
            # A deferred transaction that reads and then writes fails at once ("database is
            # locked") when another connection committed in between; BEGIN IMMEDIATE takes
            # the write lock first and waits for it (busy timeout). Readers stay deferred.
            write = conn.get_execution_options().get(WRITE_OPTION, False)
            conn.exec_driver_sql("BEGIN IMMEDIATE" if write else "BEGIN")

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
        pool_size: int | None = None,
        max_overflow: int | None = None,
        pool_timeout_seconds: float | None = None,
    ):
        """Give a URL, an engine, or (tests) a connection whose outer transaction is
        rolled back later: sessions then commit to savepoints inside it."""
        if bind is not None:
            engine = bind.engine
            self.sessionmaker = sessionmaker(
                bind=bind, expire_on_commit=False, join_transaction_mode="create_savepoint"
            )
            self.write_sessionmaker = self.sessionmaker
        else:
            if engine is None:
                if url is None:
                    raise ValueError("Database needs a URL, an engine or a connection")
                engine = make_engine(
                    url,
                    pool_size=pool_size,
                    max_overflow=max_overflow,
                    pool_timeout_seconds=pool_timeout_seconds,
                )
            self.sessionmaker = sessionmaker(bind=engine, expire_on_commit=False)
            self.write_sessionmaker = sessionmaker(
                bind=engine.execution_options(**{WRITE_OPTION: True}), expire_on_commit=False
            )
        self.engine = engine

    @property
    def is_postgresql(self) -> bool:
        return self.engine.dialect.name == "postgresql"

    @contextmanager
    def session(self, *, write: bool = False) -> Iterator[Session]:
        """A session that commits on success and rolls back on error.

        ``write=True``: its transactions will write, so on SQLite they begin with
        ``BEGIN IMMEDIATE`` (they wait for the write lock up front instead of failing
        when another connection commits between their read and their write)."""
        with (self.write_sessionmaker if write else self.sessionmaker)() as session:
            try:
                yield session
                session.commit()
            except BaseException:
                session.rollback()
                raise

    def dispose(self) -> None:
        self.engine.dispose()
