"""Logging in and out through the real form: cookies, fixation, stolen tokens, timeouts,
password changes, disabling, one-time passwords and throttling (with an injected clock)."""

from __future__ import annotations

import re

from fastapi.testclient import TestClient
from sqlalchemy import select

from server.db.models import AuthSession, User
from server.services.access import accounts
from server.services.audit import Actor
from server.web.auth import SESSION_COOKIE
from tests.web.conftest import BASE_URL, TEST_PASSWORD, make_user

SAME_ORIGIN = {"Origin": BASE_URL}


def carrying(app, raw: str) -> TestClient:
    """A browser that sends the given session cookie."""
    c = TestClient(app, base_url=BASE_URL)
    c.cookies.set(SESSION_COOKIE, raw, domain="127.0.0.1")
    return c


def login(c: TestClient, username: str, password: str = TEST_PASSWORD, **extra):
    data = {"username": username, "password": password, **extra}
    return c.post("/login", data=data, headers=SAME_ORIGIN, follow_redirects=False)


def test_login_sets_a_protected_cookie_and_logout_ends_the_session(db, anon_client):
    make_user(db, "viewer", "vera")
    assert anon_client.get("/", follow_redirects=False).headers["location"] == "/login?next=/"
    r = login(anon_client, "Vera", next="/fields/1")  # user names are not case-sensitive
    assert r.status_code == 303 and r.headers["location"] == "/fields/1"
    cookie = r.headers["set-cookie"]
    assert cookie.startswith(f"{SESSION_COOKIE}=")
    assert "HttpOnly" in cookie and "SameSite=lax" in cookie and "Secure" not in cookie
    raw = anon_client.cookies[SESSION_COOKIE]
    with db.session() as s:
        stored = s.execute(select(AuthSession.token_hash)).scalars().all()
    assert raw not in stored and len(stored) == 1 and len(stored[0]) == 64  # only a hash is kept
    page = anon_client.get("/")
    assert page.status_code == 200 and "Log out" in page.text
    token = re.search(r'name="csrf_token" value="([^"]+)"', page.text).group(1)
    r = anon_client.post("/logout", data={"csrf_token": token}, follow_redirects=False)
    assert r.status_code == 303 and r.headers["location"] == "/login"
    assert anon_client.get("/", follow_redirects=False).status_code == 303


def test_a_stolen_session_token_stops_working_after_logout(db, app, anon_client):
    make_user(db, "engineer", "erin")
    login(anon_client, "erin")
    stolen = anon_client.cookies[SESSION_COOKIE]
    with carrying(app, stolen) as thief:
        assert thief.get("/api/portfolio").status_code == 200
        token = re.search(r'name="csrf_token" value="([^"]+)"', anon_client.get("/").text).group(1)
        anon_client.post("/logout", data={"csrf_token": token})
        r = thief.get("/api/portfolio")
        assert r.status_code == 401 and r.headers["www-authenticate"] == "Bearer"
        assert thief.get("/", follow_redirects=False).headers["location"].startswith("/login")


def test_session_fixation_is_impossible(db, app):
    make_user(db, "engineer", "erin")
    planted = "attacker-chosen-value-" + "x" * 20
    with carrying(app, planted) as victim:
        assert victim.get("/api/portfolio").status_code == 401  # an unknown token is not adopted
        login(victim, "erin")
        issued = victim.cookies[SESSION_COOKIE]
        assert issued != planted
    with carrying(app, planted) as attacker:
        assert attacker.get("/api/portfolio").status_code == 401
    # An attacker who plants a real session of their own loses it when the victim logs in.
    make_user(db, "viewer", "mallory")
    with TestClient(app, base_url=BASE_URL) as attacker:
        login(attacker, "mallory")
        own = attacker.cookies[SESSION_COOKIE]
        with carrying(app, own) as victim:
            login(victim, "erin")
            assert victim.cookies[SESSION_COOKIE] != own
            assert victim.get("/api/me").json()["username"] == "erin"
        assert attacker.get("/api/me").status_code == 401  # the planted session was revoked


def test_wrong_password_and_unknown_user_look_alike(db, anon_client):
    make_user(db, "viewer", "vera")
    a = login(anon_client, "vera", "not-the-password-at-all")
    b = login(anon_client, "nobody-here", "not-the-password-at-all")
    assert a.status_code == b.status_code == 401
    assert "Wrong user name or password." in a.text and "Wrong user name or password." in b.text
    assert SESSION_COOKIE not in anon_client.cookies


def test_login_form_must_come_from_this_site(db, anon_client):
    make_user(db, "viewer", "vera")
    data = {"username": "vera", "password": TEST_PASSWORD}
    assert anon_client.post("/login", data=data).status_code == 403  # no Origin: cannot tell
    r = anon_client.post(
        "/login", data=data, headers={"Origin": "https://evil.example", "Sec-Fetch-Site": "cross-site"}
    )
    assert r.status_code == 403
    ok = anon_client.post(
        "/login", data=data, headers={"Sec-Fetch-Site": "same-origin"}, follow_redirects=False
    )
    assert ok.status_code == 303


def test_login_redirects_only_to_local_paths(db, anon_client):
    make_user(db, "viewer", "vera")
    for target in ("//evil.example/x", "https://evil.example/", "/\\evil.example"):
        assert login(anon_client, "vera", next=target).headers["location"] == "/"
    page = anon_client.get("/login?next=//evil.example", follow_redirects=False)
    assert page.status_code == 303 and page.headers["location"] == "/"  # already logged in


def test_idle_and_absolute_timeouts(db, app, clock, anon_client):
    make_user(db, "viewer", "vera")
    login(anon_client, "vera")
    clock.advance(minutes=119)
    assert anon_client.get("/api/me").status_code == 200  # activity keeps it alive
    clock.advance(minutes=119)
    assert anon_client.get("/api/me").status_code == 200
    clock.advance(minutes=121)  # idle longer than session_idle_minutes = 120
    assert anon_client.get("/api/me").status_code == 401
    login(anon_client, "vera")
    seen = []
    for _ in range(12):  # active every hour, but 12 h after login it ends anyway
        clock.advance(minutes=60)
        seen.append(anon_client.get("/api/me").status_code)
    assert seen == [200] * 11 + [401]


def test_password_change_ends_other_sessions(db, app, anon_client, settings):
    uid = make_user(db, "engineer", "erin")
    login(anon_client, "erin")
    with TestClient(app, base_url=BASE_URL) as laptop:
        login(laptop, "erin")
        page = anon_client.get("/account")
        token = re.search(r'name="csrf_token" value="([^"]+)"', page.text).group(1)
        form = {"csrf_token": token, "current_password": TEST_PASSWORD}
        weak = anon_client.post(
            "/account/password",
            data=form | {"new_password": "Password2024!", "repeat_password": "Password2024!"},
        )
        assert weak.status_code == 422 and "most commonly used" in weak.text
        short = anon_client.post(
            "/account/password", data=form | {"new_password": "tiny-pw", "repeat_password": "tiny-pw"}
        )
        assert short.status_code == 422 and "at least 12 characters" in short.text
        new = "ochre-kettle-meadow-31"
        before = anon_client.cookies[SESSION_COOKIE]
        r = anon_client.post(
            "/account/password",
            data=form | {"new_password": new, "repeat_password": new},
            follow_redirects=False,
        )
        assert r.status_code == 303
        assert anon_client.cookies[SESSION_COOKIE] != before  # this browser got a new session
        assert anon_client.get("/api/me").status_code == 200
        assert laptop.get("/api/me").status_code == 401  # the other one was logged out
    with db.session() as s:
        assert accounts.verify_password(s.get(User, uid).password_hash, new)


def test_disabling_a_user_ends_sessions_and_tokens(db, app, login_as, token_client):
    admin = login_as("admin")
    worker = login_as("engineer", username="leaving")
    script = token_client(["read"])
    script_user = script.get("/api/me").json()["username"]
    with db.session() as s:
        for name in ("leaving", script_user):
            u = s.execute(select(User).where(User.username == name)).scalar_one()
            r = admin.post(f"/admin/users/{u.id}", data={"csrf_token": admin.csrf_token, "role": "engineer"})
            assert r.status_code == 200 or r.status_code == 303
    assert worker.get("/api/me").status_code == 401
    assert script.get("/api/me").status_code == 401


def test_one_time_password_must_be_replaced_first(db, app, anon_client):
    with db.session() as s:
        password = accounts.ensure_first_admin(s, now=app.state.clock())
        assert accounts.ensure_first_admin(s, now=app.state.clock()) is None  # only on an empty database
    r = login(anon_client, "admin", password)
    assert r.headers["location"] == "/account#password"
    assert anon_client.get("/", follow_redirects=False).headers["location"] == "/account#password"
    assert anon_client.get("/api/portfolio").status_code == 403
    page = anon_client.get("/account")
    assert "one-time password" in page.text
    token = re.search(r'name="csrf_token" value="([^"]+)"', page.text).group(1)
    new = "granite-harbour-violet-88"
    anon_client.post(
        "/account/password",
        data={"csrf_token": token, "current_password": password, "new_password": new, "repeat_password": new},
    )
    assert anon_client.get("/admin/users").status_code == 200
    assert login(anon_client, "admin", password).status_code == 401  # the one-time password is gone


def _free_failures(app, account: int, address: int = 20) -> None:
    """Fewer free failures than the defaults (5 and 20), so the test needs fewer slow hashes."""
    app.state.settings = app.state.settings.model_copy(
        update={"login_free_failures_per_account": account, "login_free_failures_per_address": address}
    )


def test_login_brute_force_is_slowed(db, app, clock, anon_client):
    """After the free failures (3 here), waits of 2 s, 4 s, 8 s ...; the clock is injected."""
    _free_failures(app, account=3)
    make_user(db, "viewer", "vera")
    for _ in range(3):
        assert login(anon_client, "vera", "guess-guess-guess").status_code == 401
    r = login(anon_client, "vera")  # even the right password waits
    assert r.status_code == 429 and r.headers["retry-after"] == "2" and "Try again in 2 seconds" in r.text
    clock.advance(seconds=2)
    assert login(anon_client, "vera", "guess-guess-guess").status_code == 401  # sixth failure
    r = login(anon_client, "vera")
    assert r.status_code == 429 and r.headers["retry-after"] == "4"
    clock.advance(seconds=4)
    assert login(anon_client, "vera").status_code == 303  # success forgives the account
    # The counts are in the database: a new app (a restart, another process) sees them.
    for _ in range(3):
        login(anon_client, "vera", "guess-guess-guess")
    from server.app import create_app

    restarted = create_app(app.state.settings, database=db)
    restarted.state.clock = clock
    with TestClient(restarted, base_url=BASE_URL) as other:
        assert login(other, "vera").status_code == 429


def test_guessing_across_accounts_is_slowed_per_address(db, app, anon_client):
    _free_failures(app, account=5, address=4)
    make_user(db, "viewer", "vera")
    for i in range(4):  # a different name each time, from one address
        assert login(anon_client, f"someone{i}", "guess-guess-guess").status_code == 401
    assert login(anon_client, "vera").status_code == 429


def test_create_user_refuses_weak_passwords_and_bad_names(db):
    import pytest

    from server.services.access.passwords import PasswordPolicyError

    with db.session() as s:
        with pytest.raises(PasswordPolicyError, match="commonly used"):
            accounts.create_user(s, Actor(None, "t"), username="pat", role="viewer", password="iloveyou2024!")
        with pytest.raises(PasswordPolicyError, match="user name"):
            accounts.create_user(
                s, Actor(None, "t"), username="patricia", role="viewer", password="patricia-1234567"
            )
        with pytest.raises(accounts.AccountError, match="user name"):
            accounts.create_user(s, Actor(None, "t"), username="Bad Name!", role="viewer")
        with pytest.raises(ValueError, match="unknown role"):
            accounts.create_user(s, Actor(None, "t"), username="pat", role="superuser")


def test_guessing_the_current_password_on_the_account_page_is_slowed(db, app, client):
    _free_failures(app, account=2)
    form = {"csrf_token": client.csrf_token, "new_password": "ochre-kettle-meadow-31"}
    form["repeat_password"] = form["new_password"]
    for _ in range(2):
        r = client.post("/account/password", data=form | {"current_password": "a-wrong-guess-here"})
        assert r.status_code == 422 and "current password is wrong" in r.text
    r = client.post("/account/password", data=form | {"current_password": TEST_PASSWORD})
    assert r.status_code == 422 and "Too many wrong passwords" in r.text
