"""CSRF, security headers, escaping of user text, and errors that show no internals."""

from __future__ import annotations

import json
import re

from fastapi.testclient import TestClient

from server.app import create_app
from server.services.access.permissions import Permission
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.settings import Settings
from server.web.auth import SESSION_COOKIE, Require
from tests.factories import add_volumetric_history, make_field
from tests.web.conftest import BASE_URL, make_user

SCRIPT = "<script>alert(1)</script>"


def _form_token(c) -> str:
    return re.search(r'name="csrf_token" value="([^"]+)"', c.get("/account").text).group(1)


def test_a_cross_site_form_post_is_rejected(db, client):
    token = _form_token(client)
    for headers in (
        {"Sec-Fetch-Site": "cross-site"},
        {"Sec-Fetch-Site": "same-site"},  # a sibling subdomain is another origin
        {"Origin": "https://evil.example"},
        {"Origin": "null"},  # sandboxed frames and some redirects
    ):
        r = client.post(
            "/account/tokens", data={"csrf_token": token, "name": "x", "scopes": "read"}, headers=headers
        )
        assert r.status_code == 403, headers
        assert "cross-site request refused" in r.text
    with db.session() as s:
        from server.db.models import ApiToken

        assert s.query(ApiToken).count() == 0


def test_a_same_site_post_needs_the_sessions_form_token(db, client, login_as):
    data = {"name": "nightly", "scopes": "read"}
    no_header = {"X-CSRF-Token": ""}
    assert client.post("/account/tokens", data=data, headers=no_header).status_code == 403
    other = login_as("viewer")  # another session's token does not do
    r = client.post("/account/tokens", data=data | {"csrf_token": other.csrf_token}, headers=no_header)
    assert r.status_code == 403 and "form has expired" in r.text
    r = client.post("/account/tokens", data=data | {"csrf_token": _form_token(client)}, headers=no_header)
    assert r.status_code == 200 and "shown only this once" in r.text
    # the API takes the token as a header; without it a cookie-authenticated call is refused
    assert (
        client.post("/api/tokens", json={"name": "a", "scopes": ["read"]}, headers=no_header).status_code
        == 403
    )
    r = client.post("/api/tokens", json={"name": "a", "scopes": ["read"]})
    assert r.status_code == 201 and r.json()["token"].startswith("tbk_")


def test_a_bearer_token_needs_no_form_token_but_must_be_valid(db, token_client, anon_client):
    with db.session() as s:
        make_field(s, name="Upland")
    rows = {"rows": [{"field": "Upland", "well": "W-1", "survey_date": "2012-01-15", "pressure_psia": 4000}]}
    script = token_client(["read", "upload"])
    assert script.post("/api/uploads/surveys/rows?dry_run=true", json=rows).status_code == 200
    for header in ("Bearer tbk_not-a-real-token", "Basic dXNlcjpwYXNz", "Bearer "):
        r = anon_client.post("/api/uploads/surveys/rows", json=rows, headers={"Authorization": header})
        assert r.status_code == 401, header


def test_revoked_and_expired_tokens_stop_working(db, app, clock, client):
    short = client.post("/api/tokens", json={"name": "short", "scopes": ["read"], "expires_days": 1}).json()
    long = client.post("/api/tokens", json={"name": "long", "scopes": ["read"]}).json()
    bearer = {t["name"]: {"Authorization": f"Bearer {t['token']}"} for t in (short, long)}
    with TestClient(app, base_url=BASE_URL) as script:
        assert script.get("/api/portfolio", headers=bearer["short"]).status_code == 200
        listed = {t["name"]: t for t in client.get("/api/tokens").json()}
        assert listed["short"]["last_used_at"] is not None and listed["long"]["last_used_at"] is None
        assert listed["short"]["prefix"] == short["token"][:12]
        assert script.get("/api/portfolio", headers=bearer["long"]).status_code == 200
        assert client.delete(f"/api/tokens/{long['id']}").status_code == 204
        assert script.get("/api/portfolio", headers=bearer["long"]).status_code == 401
        clock.advance(days=1)
        assert script.get("/api/portfolio", headers=bearer["short"]).status_code == 401
    with db.session() as s:
        from server.db.models import ApiToken

        hashes = [t.token_hash for t in s.query(ApiToken)]
    assert short["token"] not in hashes and all(len(h) == 64 for h in hashes)


def test_headers_on_pages_and_api(client, anon_client):
    for r in (client.get("/"), client.get("/api/portfolio"), anon_client.get("/login")):
        h = r.headers
        csp = h["content-security-policy"]
        assert "script-src 'self';" in csp and "frame-ancestors 'none'" in csp
        assert h["x-content-type-options"] == "nosniff"
        assert h["referrer-policy"] == "same-origin"
        assert h["x-frame-options"] == "DENY"
        assert h["cache-control"] == "no-store"
        assert "strict-transport-security" not in h
    assert anon_client.get("/static/app.css").headers["cache-control"] == "no-cache"
    plotly = re.search(r'src="(/assets/[0-9a-f]+/vendor/plotly\.min\.js)"', client.get("/").text).group(1)
    assert "immutable" in anon_client.get(plotly).headers["cache-control"]


def test_behind_tls_adds_hsts_and_secure_cookies(db, app):
    make_user(db, "viewer", "vera")
    settings = Settings(environment="test", secret_key="t" * 40, database_url="sqlite://", behind_tls=True)
    tls_app = create_app(settings, database=db)
    with TestClient(tls_app, base_url="https://127.0.0.1:8000") as c:
        r = c.post(
            "/login",
            data={"username": "vera", "password": "quartz-lantern-harbour-57"},
            headers={"Origin": "https://127.0.0.1:8000"},
            follow_redirects=False,
        )
        assert r.status_code == 303
        assert "Secure" in r.headers["set-cookie"] and "HttpOnly" in r.headers["set-cookie"]
        assert r.headers["strict-transport-security"].startswith("max-age=31536000")


def test_a_field_named_like_a_script_renders_as_text(db, client, admin_client):
    with db.session() as s:
        f = make_field(s, name=SCRIPT, asset=f"Asset {SCRIPT}")
        f.description = SCRIPT
        add_volumetric_history(s, f)
        jobs.enqueue_field_recompute(s, [f.id], reason="test")
        fid = f.id
    runner.drain(db)
    for url in ("/", f"/fields/{fid}"):
        html = client.get(url).text
        assert SCRIPT not in html
        assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
        for tag in re.findall(r"<script[^>]*>", html):  # only our own script tags
            assert "src=" in tag or 'type="application/json"' in tag
    block = re.search(
        r'<script type="application/json" id="pz-figure">(.*?)</script>',
        client.get(f"/fields/{fid}").text,
        re.S,
    )
    assert "<" not in block.group(1)  # chart data cannot close its script block
    json.loads(block.group(1))
    r = client.get(f"/api/fields/{fid}")
    assert r.headers["content-type"] == "application/json"
    assert r.json()["summary"]["name"] == SCRIPT  # data, returned as given, never as HTML
    # user names and display names are escaped on the admin pages too
    make_user(db, "viewer", "odd-name")
    from server.db.models import User

    with db.session() as s:
        s.query(User).filter_by(username="odd-name").one().display_name = SCRIPT
    assert SCRIPT not in admin_client.get("/admin/users").text


def test_errors_show_no_internals(db, settings):
    app = create_app(settings, database=db)

    @app.get("/boom", dependencies=[Require(Permission.READ)])
    def boom():
        raise RuntimeError("secret internal detail in /srv/tankbook/db.py")

    @app.get("/api/boom", dependencies=[Require(Permission.READ)])
    def api_boom():
        raise RuntimeError("secret internal detail")

    uid = make_user(db, "viewer", "vera")
    from tests.web.conftest import session_client

    c = session_client(app, db, uid)
    with TestClient(app, base_url=BASE_URL, raise_server_exceptions=False) as c2:
        c2.cookies.set(SESSION_COOKIE, c.cookies[SESSION_COOKIE], domain="127.0.0.1")
        page = c2.get("/boom")
        assert page.status_code == 500 and "something went wrong" in page.text
        api = c2.get("/api/boom")
        assert api.status_code == 500 and api.json() == {
            "detail": "something went wrong on the server; the error was logged"
        }
        for r in (page, api):
            assert (
                "secret internal" not in r.text and "Traceback" not in r.text and "RuntimeError" not in r.text
            )


def test_401_and_403_pages(anon_client, viewer_client):
    r = anon_client.get("/upload?kind=surveys", follow_redirects=False)
    assert r.status_code == 303 and r.headers["location"] == "/login?next=/upload%3Fkind%3Dsurveys"
    r = anon_client.get("/api/portfolio")
    assert r.status_code == 401 and r.json()["detail"].startswith("log in first")
    r = viewer_client.get("/upload")
    assert r.status_code == 403 and "Not allowed" in r.text and "does not allow this" in r.text
    assert r.headers["content-type"].startswith("text/html")
    assert viewer_client.get("/api/users").json()["detail"].startswith("the role 'viewer' does not allow")
