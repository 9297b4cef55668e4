"""A live Tankbook on a real database (SQLite file or a fresh PostgreSQL database), served by
uvicorn in a thread on a loopback port: for tests of concurrent clients (issue 18)."""

from __future__ import annotations

import re
import socket
import threading
import time
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass

import httpx2 as httpx
import uvicorn

from server.app import create_app
from server.db.base import utcnow
from server.db.migrate import upgrade
from server.db.session import Database
from server.services.access import accounts, credentials
from server.services.audit import Actor
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.settings import Settings
from tests.conftest import create_pg_database, drop_pg_database, require_postgres
from tests.factories import add_volumetric_history, make_field
from tests.web.conftest import TEST_PASSWORD

USERS = ("engineer", "admin", "viewer")


@dataclass
class Live:
    base: str
    url: str  # the database's
    db: Database  # the test's own connection pool (like another process)
    field_ids: list[int]
    token: str  # an engineer's read, upload and analyse API token

    def client(self, *, headers=None, **kwargs) -> httpx.Client:
        """A client that says it comes from Tankbook's own pages (Origin); close it after use."""
        headers = {"Origin": self.base, **(headers or {})}
        return httpx.Client(base_url=self.base, timeout=120, headers=headers, **kwargs)

    def logged_in(self, username: str = "engineer") -> httpx.Client:
        """A client with a session cookie, logged in through the login form."""
        c = self.client()
        r = c.post("/login", data={"username": username, "password": TEST_PASSWORD, "next": "/"})
        assert r.status_code == 303, (r.status_code, r.text[-500:])
        return c

    def csrf(self, c: httpx.Client) -> str:
        page = c.get("/account").text
        return re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@contextmanager
def serving(url: str, key_char: str, **settings) -> Iterator[str]:
    """The app on a free local port in a thread, against the database at ``url``; yields its
    base URL and stops it afterwards."""
    port = _free_port()
    config = Settings(environment="test", secret_key=key_char * 40, database_url=url, port=port, **settings)
    server = uvicorn.Server(
        uvicorn.Config(create_app(config), host="127.0.0.1", port=port, log_level="warning")
    )
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    deadline = time.time() + 30
    while not server.started:
        if time.time() > deadline or not thread.is_alive():
            raise RuntimeError("live server did not start")
        time.sleep(0.05)
    try:
        yield f"http://127.0.0.1:{port}"
    finally:
        server.should_exit = True
        thread.join(timeout=30)


@contextmanager
def live_server(backend: str, tmp_path, *, fields: int = 3, **settings) -> Iterator[Live]:
    """Migrate a database of ``backend``, add fields and users, serve it; yield a Live."""
    if backend == "sqlite":
        url = f"sqlite:///{tmp_path / 'live.sqlite3'}"
    else:
        require_postgres()
        url = create_pg_database()
    upgrade(url)
    db = Database(url)
    ids = []
    with db.session() as s:
        for k in range(fields):
            f = make_field(s, name=f"Field {chr(65 + k)}")
            add_volumetric_history(s, f)
            ids.append(f.id)
        made = {}
        for role in USERS:
            made[role] = accounts.create_user(
                s, Actor(None, "test"), username=role, role=role, password=TEST_PASSWORD, now=utcnow()
            )
        jobs.enqueue_field_recompute(s, ids, reason="test")
    runner.drain(db)
    with db.session() as s:
        engineer = s.merge(made["engineer"])
        raw, _ = credentials.create_api_token(
            s, engineer, name="live", scopes=["read", "upload", "analyse"], now=utcnow()
        )
    try:
        with serving(url, "L", **settings) as base_url:
            yield Live(base_url, url, db, ids, raw)
    finally:
        db.dispose()
        if backend == "postgresql":
            drop_pg_database(url)
