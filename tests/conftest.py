"""Shared fixtures: real SQLite and PostgreSQL databases, migrated once per session,
with every test inside a transaction that is rolled back afterwards.

Backends: both by default. Set TANKBOOK_TEST_PG_URL to point at another PostgreSQL
server (it must allow CREATE DATABASE). Locally a missing PostgreSQL skips its tests
with a message; with CI=true a skipped PostgreSQL or browser test is a failure.
"""

from __future__ import annotations

import os
import uuid
from pathlib import Path

import pytest
import sqlalchemy as sa

from server.db.migrate import upgrade
from server.db.session import Database, make_engine

IN_CI = os.environ.get("CI", "").lower() in ("1", "true", "yes")
PG_ADMIN_URL = os.environ.get("TANKBOOK_TEST_PG_URL", "postgresql+psycopg://postgres@127.0.0.1:5432/test")
MUST_NOT_SKIP = ("postgres", "browser")


def pg_reachable() -> str | None:
    """None if PostgreSQL answers, else the reason it does not."""
    try:
        eng = sa.create_engine(PG_ADMIN_URL, connect_args={"connect_timeout": 3})
        with eng.connect() as c:
            c.execute(sa.text("SELECT 1"))
        eng.dispose()
        return None
    except Exception as exc:  # any failure means "not available"
        return f"{type(exc).__name__}: {str(exc).splitlines()[0]}"


def require_postgres() -> None:
    reason = pg_reachable()
    if reason:
        msg = f"PostgreSQL at {PG_ADMIN_URL} is not reachable ({reason})"
        if IN_CI:
            pytest.fail(msg + " — PostgreSQL tests must run in CI")
        pytest.skip(msg)


def _pg_url_for(name: str) -> str:
    return sa.engine.make_url(PG_ADMIN_URL).set(database=name).render_as_string(hide_password=False)


def create_pg_database() -> str:
    """A new, empty PostgreSQL database; returns its URL."""
    name = f"tb_test_{uuid.uuid4().hex[:12]}"
    admin = sa.create_engine(PG_ADMIN_URL, isolation_level="AUTOCOMMIT")
    with admin.connect() as c:
        c.execute(sa.text(f'CREATE DATABASE "{name}"'))
    admin.dispose()
    return _pg_url_for(name)


def drop_pg_database(url: str) -> None:
    name = sa.engine.make_url(url).database
    admin = sa.create_engine(PG_ADMIN_URL, isolation_level="AUTOCOMMIT")
    with admin.connect() as c:
        c.execute(sa.text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
    admin.dispose()


@pytest.fixture
def fresh_database_url(request, tmp_path):
    """An empty database of the requested backend (unmigrated), removed afterwards."""
    backend = request.param
    if backend == "sqlite":
        yield f"sqlite:///{tmp_path / 'fresh.sqlite3'}"
        return
    require_postgres()
    url = create_pg_database()
    try:
        yield url
    finally:
        drop_pg_database(url)


@pytest.fixture(scope="session")
def _migrated(tmp_path_factory):
    urls: dict[str, str] = {}
    created: list[str] = []

    def get(backend: str) -> str:
        if backend not in urls:
            if backend == "sqlite":
                urls[backend] = f"sqlite:///{tmp_path_factory.mktemp('db') / 'test.sqlite3'}"
            else:
                require_postgres()
                urls[backend] = create_pg_database()
                created.append(urls[backend])
            upgrade(urls[backend])
        return urls[backend]

    yield get
    for url in created:
        drop_pg_database(url)


@pytest.fixture(scope="session")
def _engines(_migrated):
    engines: dict[str, sa.Engine] = {}

    def get(backend: str) -> sa.Engine:
        if backend not in engines:
            engines[backend] = make_engine(_migrated(backend))
        return engines[backend]

    yield get
    for e in engines.values():
        e.dispose()


def pytest_generate_tests(metafunc):
    if "db" in metafunc.fixturenames:
        metafunc.parametrize(
            "db",
            [
                pytest.param("sqlite", id="sqlite"),
                pytest.param("postgresql", id="postgresql", marks=pytest.mark.postgres),
            ],
            indirect=True,
        )
    if "fresh_database_url" in metafunc.fixturenames:
        metafunc.parametrize(
            "fresh_database_url",
            [
                pytest.param("sqlite", id="sqlite"),
                pytest.param("postgresql", id="postgresql", marks=pytest.mark.postgres),
            ],
            indirect=True,
        )


@pytest.fixture
def db(request, _engines):
    """A Database whose sessions commit into savepoints of a transaction rolled back
    after the test, on the migrated schema of the chosen backend."""
    engine = _engines(request.param)
    connection = engine.connect()
    outer = connection.begin()
    try:
        yield Database(bind=connection)
    finally:
        outer.rollback()
        connection.close()


@pytest.fixture
def session(db):
    with db.session() as s:
        yield s


@pytest.hookimpl(hookwrapper=True)
def pytest_runtest_makereport(item, call):
    outcome = yield
    report = outcome.get_result()
    if IN_CI and report.skipped and any(item.get_closest_marker(m) for m in MUST_NOT_SKIP):
        report.outcome = "failed"
        report.longrepr = f"skipped in CI, which is not allowed for {MUST_NOT_SKIP}: {report.longrepr}"


ROOT = Path(__file__).resolve().parent.parent
