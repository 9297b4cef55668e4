"""Backup and restore as docs/deployment.md describes them: a backup restored into a fresh
database gives the same portfolio (every table, row for row, and the same portfolio read model).

SQLite: the online backup API (``sqlite3.Connection.backup``), safe while the app runs.
PostgreSQL: ``pg_dump --format=custom`` and ``pg_restore`` into a new, empty database.
"""

from __future__ import annotations

import sqlite3
import subprocess

import pytest
import sqlalchemy as sa

from server.db.base import Base, utcnow
from server.db.migrate import upgrade
from server.db.session import Database
from server.services.access import accounts
from server.services.audit import Actor
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.services.portfolio.rows import portfolio_rows
from tests.conftest import create_pg_database, drop_pg_database
from tests.factories import add_volumetric_history, make_field


def _build_portfolio(url: str) -> None:
    upgrade(url)
    db = Database(url)
    with db.session() as s:
        ids = []
        for name, giip, asset in (("Upland", 100.0, "North"), ("Lowmere", 60.0, "South")):
            f = make_field(s, name=name, asset=asset)
            add_volumetric_history(s, f, giip_bscf=giip)
            ids.append(f.id)
        jobs.enqueue_field_recompute(s, ids, reason="test")
        accounts.create_user(
            s,
            Actor(None, "test"),
            username="erin",
            role="engineer",
            password="ochre-kettle-meadow-31",
            now=utcnow(),
        )
    runner.drain(db)
    db.dispose()


def _contents(url: str) -> dict:
    engine = sa.create_engine(url)
    try:
        with engine.connect() as c:
            tables = {
                t.name: c.execute(sa.select(t).order_by(*t.primary_key.columns)).all()
                for t in Base.metadata.sorted_tables
            }
            tables["alembic_version"] = c.execute(sa.text("SELECT version_num FROM alembic_version")).all()
    finally:
        engine.dispose()
    db = Database(url)
    with db.session() as s:
        rows = portfolio_rows(s)
    db.dispose()
    return {"tables": tables, "portfolio": rows}


def _check_same(before: dict, after: dict) -> None:
    assert len(before["tables"]["pressure_survey"]) > 20 and len(before["tables"]["estimate"]) == 2
    assert before["tables"] == after["tables"]
    assert before["portfolio"] == after["portfolio"]
    assert {r.name for r in after["portfolio"]} == {"Upland", "Lowmere"}
    assert all(r.estimate.status == "ok" for r in after["portfolio"])


def test_sqlite_online_backup_restores_the_portfolio(tmp_path):
    src = tmp_path / "tankbook.sqlite3"
    url = f"sqlite:///{src}"
    _build_portfolio(url)
    before = _contents(url)
    backup = tmp_path / "backup.sqlite3"
    with sqlite3.connect(src) as live, sqlite3.connect(backup) as copy:
        live.backup(copy)  # the online backup API: consistent even while the app writes
    restored = tmp_path / "restored.sqlite3"
    with sqlite3.connect(backup) as b, sqlite3.connect(restored) as r:
        b.backup(r)
    _check_same(before, _contents(f"sqlite:///{restored}"))


def _libpq(url: str) -> str:
    return sa.engine.make_url(url).set(drivername="postgresql").render_as_string(hide_password=False)


@pytest.mark.postgres
def test_postgresql_dump_restores_the_portfolio(tmp_path):
    from tests.conftest import require_postgres

    require_postgres()
    src = create_pg_database()
    dst = create_pg_database()
    try:
        _build_portfolio(src)
        before = _contents(src)
        dump = tmp_path / "tankbook.dump"
        subprocess.run(["pg_dump", "--format=custom", f"--file={dump}", _libpq(src)], check=True)
        subprocess.run(
            ["pg_restore", "--no-owner", "--exit-on-error", f"--dbname={_libpq(dst)}", str(dump)], check=True
        )
        _check_same(before, _contents(dst))
    finally:
        drop_pg_database(src)
        drop_pg_database(dst)
