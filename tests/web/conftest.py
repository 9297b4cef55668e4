"""An app wired to the test database (rolled back per test) and logged-in clients for it.

``client`` is an engineer's browser session (reads, uploads, analysis choices); ``anon_client``
has no session; ``login_as(role, assets=...)`` makes a session for any role; ``token_client``
authenticates with an API token. Sessions are started through the same service the login page
uses (``credentials.start_session``), which skips Argon2 per test; ``test_auth.py`` logs in
through the real form.
"""

from __future__ import annotations

import datetime as dt
from functools import lru_cache

import pytest
from fastapi.testclient import TestClient

from server.app import create_app
from server.db.base import utcnow
from server.db.models import User, UserAsset
from server.services.access import credentials
from server.services.access.passwords import hash_password
from server.settings import Settings
from server.web.auth import SESSION_COOKIE

BASE_URL = "http://127.0.0.1:8000"
TEST_PASSWORD = "quartz-lantern-harbour-57"  # passes the policy; used only by tests


@lru_cache(maxsize=1)
def test_password_hash() -> str:
    return hash_password(TEST_PASSWORD)


class Clock:
    """A clock the test moves by hand (``app.state.clock``)."""

    def __init__(self, start: dt.datetime | None = None):
        self.t = start or utcnow()

    def __call__(self) -> dt.datetime:
        return self.t

    def advance(self, **kwargs) -> None:
        self.t += dt.timedelta(**kwargs)


def make_user(db, role: str = "engineer", username: str | None = None, asset_ids=None) -> int:
    """A user with TEST_PASSWORD; ``asset_ids`` limits them to those assets."""
    with db.session() as s:
        user = User(
            username=username or f"{role}-user",
            display_name=f"Test {role}",
            role=role,
            is_active=True,
            failed_logins=0,
            password_hash=test_password_hash(),
            all_assets=asset_ids is None,
        )
        s.add(user)
        s.flush()
        for a in asset_ids or ():
            s.add(UserAsset(user_id=user.id, asset_id=a))
        return user.id


@pytest.fixture
def settings():
    return Settings(environment="test", secret_key="t" * 40, database_url="sqlite://", job_runner="inline")


@pytest.fixture
def clock():
    return Clock()


@pytest.fixture
def app(db, settings, clock):
    app = create_app(settings, database=db)
    app.state.clock = clock
    return app


def session_client(app, db, user_id: int) -> TestClient:
    """A client carrying a fresh session of the user, sending its form token as X-CSRF-Token
    (as a script in the page would)."""
    with db.session() as s:
        raw, auth = credentials.start_session(s, s.get(User, user_id), now=app.state.clock())
        csrf = auth.csrf_token
    c = TestClient(app, base_url=BASE_URL, headers={"X-CSRF-Token": csrf})
    c.cookies.set(SESSION_COOKIE, raw, domain="127.0.0.1")
    c.csrf_token = csrf
    c.user_id = user_id
    return c


@pytest.fixture
def login_as(app, db):
    """``login_as(role, assets=None, username=None)`` -> a logged-in TestClient."""
    made: list[TestClient] = []

    def make(role: str, assets=None, username: str | None = None) -> TestClient:
        uid = make_user(db, role, username or f"{role}-{len(made)}", assets)
        c = session_client(app, db, uid)
        c.__enter__()
        made.append(c)
        return c

    yield make
    for c in made:
        c.__exit__(None, None, None)


@pytest.fixture
def client(login_as):
    """An engineer's logged-in browser session."""
    return login_as("engineer", username="engineer")


@pytest.fixture
def viewer_client(login_as):
    return login_as("viewer", username="viewer")


@pytest.fixture
def admin_client(login_as):
    return login_as("admin", username="admin-test")


@pytest.fixture
def anon_client(app):
    with TestClient(app, base_url=BASE_URL) as c:
        yield c


@pytest.fixture
def token_client(app, db):
    """``token_client(scopes, role="engineer")`` -> a client that sends an API token."""
    made: list[TestClient] = []

    def make(scopes=("read",), role: str = "engineer", assets=None) -> TestClient:
        uid = make_user(db, role, f"script-{role}-{len(made)}", assets)
        with db.session() as s:
            raw, _ = credentials.create_api_token(
                s, s.get(User, uid), name="test", scopes=list(scopes), now=app.state.clock()
            )
        c = TestClient(app, base_url=BASE_URL, headers={"Authorization": f"Bearer {raw}"})
        c.__enter__()
        c.token = raw
        made.append(c)
        return c

    yield make
    for c in made:
        c.__exit__(None, None, None)
