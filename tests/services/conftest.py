"""A real migrated database per test (for tests that need several connections or processes)."""

import os
import signal
import subprocess
import sys
from pathlib import Path

import pytest

from server.db.migrate import upgrade
from server.db.session import Database
from tests.conftest import create_pg_database, drop_pg_database, require_postgres
from tests.factories import make_field

N = 10


@pytest.fixture(params=["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)])
def real_db(request, tmp_path):
    """A migrated database of the given backend with field Upland and wells W-0..W-10."""
    if request.param == "sqlite":
        url = f"sqlite:///{tmp_path / 'concurrent.sqlite3'}"
    else:
        require_postgres()
        url = create_pg_database()
    upgrade(url)
    db = Database(url)
    with db.session() as s:
        make_field(s, name="Upland", wells=[f"W-{i}" for i in range(N + 1)])
    try:
        yield db, url
    finally:
        db.dispose()
        if request.param == "postgresql":
            drop_pg_database(url)


ROOT = Path(__file__).resolve().parents[2]


def kill_when(script: str, args: list[str], signal_line: str) -> str:
    """Run ``python -c script args`` until it prints a line starting with ``signal_line``,
    then SIGKILL it (a process dying at a controlled point); return that line."""
    cmd = [sys.executable, "-c", script, *args]
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    with subprocess.Popen(
        cmd, cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env
    ) as child:
        try:
            line = child.stdout.readline()
            assert line.startswith(signal_line), (
                line,
                child.stderr.read() if child.poll() is not None else "",
            )
            child.send_signal(signal.SIGKILL)
            child.wait(timeout=30)
        finally:
            if child.poll() is None:
                child.kill()
    assert child.returncode == -signal.SIGKILL
    return line
