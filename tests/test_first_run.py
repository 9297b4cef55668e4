"""A new clone's first hour (issue 16): `make run` serves on another port when asked, prints the
administrator's one-time password last and framed, and the README's configuration table is whole."""

from __future__ import annotations

import os
import re
import selectors
import socket
import subprocess
import sys
import time
from pathlib import Path

from sqlalchemy import select

from server.db.migrate import upgrade
from server.db.models import User
from server.db.session import Database
from server.services.access.passwords import verify_password
from server.settings import Settings

ROOT = Path(__file__).resolve().parents[1]


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _serve_command(*make_args: str) -> str:
    out = subprocess.run(
        ["make", "-n", "run", *make_args], cwd=ROOT, capture_output=True, text=True, check=True
    ).stdout
    return next(line for line in out.splitlines() if " serve" in line)


def test_make_run_takes_a_port_and_a_host():
    assert _serve_command().endswith("tankbook serve --first-admin")  # the settings' defaults
    assert _serve_command("PORT=8001").endswith("serve --first-admin --port 8001")
    assert _serve_command("PORT=8001", "HOST=0.0.0.0").endswith("--host 0.0.0.0 --port 8001")


END_OF_FRAME = r"\|  +\.venv/bin/tankbook set-password admin +\|\n\+-+\+"


def _read_until(proc, pattern: str, timeout_s: float) -> str:
    """The process's output up to the first match of ``pattern`` (fails after the timeout).

    Reads the pipe's file descriptor directly: a buffered ``readline`` after ``select`` can leave
    lines in Python's buffer that ``select`` never reports again."""
    seen = ""
    fd = proc.stdout.fileno()
    sel = selectors.DefaultSelector()
    sel.register(fd, selectors.EVENT_READ)
    deadline = time.monotonic() + timeout_s
    while not re.search(pattern, seen):
        left = deadline - time.monotonic()
        assert left > 0, f"no {pattern!r} in the output:\n{seen}"
        if sel.select(timeout=left):
            chunk = os.read(fd, 65536)
            assert chunk, f"the server stopped:\n{seen}"
            seen += chunk.decode("utf-8", "replace")
    sel.close()
    return seen


def test_serve_prints_the_one_time_password_last_and_framed(tmp_path):
    url = f"sqlite:///{tmp_path / 'first.sqlite3'}"
    upgrade(url)
    port = _free_port()
    env = {**os.environ, "TANKBOOK_DATABASE_URL": url, "TANKBOOK_ENVIRONMENT": "local"}
    proc = subprocess.Popen(
        [sys.executable, "-m", "server.cli", "serve", "--first-admin", "--port", str(port)],
        cwd=ROOT,
        env=env,
        stdout=subprocess.PIPE,
        stderr=subprocess.STDOUT,
        text=True,
    )
    try:
        out = _read_until(proc, END_OF_FRAME, 180)
    finally:
        proc.terminate()
        proc.wait(timeout=20)
        proc.stdout.close()
    # the server's start-up lines come first, the frame last
    assert out.index(f"Uvicorn running on http://127.0.0.1:{port}") < out.index("one-time password")
    # the frame alone: what a chunk read brought after it (a blank line, a log line) is not part of it
    frame = out[out.index("+-") : re.search(END_OF_FRAME, out).end()].splitlines()
    assert frame[0] == frame[-1] and {len(line) for line in frame} == {len(frame[0])}
    password = re.search(r"\|\s+([a-z0-9]{5}(?:-[a-z0-9]{5})+)\s+\|", out).group(1)
    db = Database(url)
    with db.session() as s:
        admin = s.execute(select(User).where(User.username == "admin")).scalar_one()
        assert admin.must_change_password and verify_password(admin.password_hash, password)
    db.dispose()


def _configuration_table(readme: str) -> list[str]:
    """The rows of the README's configuration table: every line from its header to its end."""
    section = readme.split("## Configuration", 1)[1]
    lines = section.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("| variable"))
    rows = []
    for line in lines[start + 2 :]:
        if not line.startswith("|"):
            break
        rows.append(line)
    return rows


def test_readme_configuration_table_is_whole_and_names_every_setting():
    readme = (ROOT / "README.md").read_text()
    rows = _configuration_table(readme)
    after = readme.split("## Configuration", 1)[1].split(rows[-1], 1)[1].split("\n## ", 1)[0]
    assert "| `TANKBOOK_" not in after, "a row of the table is cut off from it (a blank line?)"
    names = " ".join(re.findall(r"`(TANKBOOK_[A-Z_*]+|…_[A-Z_]+)`", " ".join(rows)))
    patterns = names.split()
    for field in Settings.model_fields:
        env = f"TANKBOOK_{field.upper()}"
        covered = any(
            p == env
            or (p.endswith("*") and env.startswith(p[:-1]))
            or (p.startswith("…_") and env.endswith(p[1:]))
            for p in patterns
        )
        assert covered, f"{env} is missing from the README's configuration table"
