"""Every route declares a permission; each role gets what its permissions say; a user limited to
some assets neither reads nor changes other assets' fields."""

from __future__ import annotations

import pytest
from fastapi import APIRouter, FastAPI
from fastapi.routing import APIRoute
from sqlalchemy import func, select

from server.db.models import PressureSurvey
from server.services.access.permissions import ROLE_PERMISSIONS, Permission
from server.web.auth import Public, route_permissions
from tests.factories import make_field

# Routes anyone may reach: logging in, static assets (content-hashed, with the chart library), the
# health probe, the favicon.
PUBLIC = {
    ("GET", "/login"),
    ("POST", "/login"),
    ("GET", "/api/health"),
    ("GET", "/favicon.ico"),
    ("GET", "/assets/{digest}/{name:path}"),
}
PUBLIC_MOUNTS = {"/static"}


def undeclared_routes(app: FastAPI) -> list[str]:
    """What is wrong with the app's routes (included routers and mounts flattened)."""
    problems = []
    for methods, path, route, declared in route_permissions(app):
        keys = {(m, path) for m in methods - {"HEAD"}}
        if declared == "mount":
            if path not in PUBLIC_MOUNTS:
                problems.append(f"mount {path} serves requests without a permission")
        elif not isinstance(route, APIRoute):
            problems.append(f"{sorted(methods)} {path}: not an API route, so it cannot declare a permission")
        elif declared is None:
            problems.append(f"{sorted(methods)} {path} declares no permission")
        elif declared == "public" and not keys <= PUBLIC:
            problems.append(f"{sorted(methods)} {path} is public but not on the public list")
    return problems


def test_every_route_declares_a_permission(app):
    assert undeclared_routes(app) == []
    found = {(m, p) for ms, p, _, _ in route_permissions(app) for m in ms}
    assert found >= PUBLIC  # the list names real routes


def test_the_walker_catches_an_undeclared_route(app):
    """The check above can fail: a route added without a permission is reported."""

    @app.get("/forgotten")
    def forgotten():
        return {}

    @app.post("/sneaky", dependencies=[Public])
    def sneaky():
        return {}

    extra = APIRouter(prefix="/extra")

    @extra.get("/page")
    def included():
        return {}

    app.include_router(extra)
    problems = undeclared_routes(app)
    assert any("/forgotten declares no permission" in p for p in problems)
    assert any("/extra/page declares no permission" in p for p in problems)
    assert any("/sneaky is public but not on the public list" in p for p in problems)


def test_roles_are_cumulative():
    order = ["viewer", "engineer", "approver", "admin"]
    for low, high in zip(order, order[1:], strict=False):
        assert ROLE_PERMISSIONS[low] < ROLE_PERMISSIONS[high]
    assert Permission.SIGN_OFF in ROLE_PERMISSIONS["approver"] - ROLE_PERMISSIONS["engineer"]
    assert Permission.MANAGE_USERS in ROLE_PERMISSIONS["admin"] - ROLE_PERMISSIONS["approver"]


ROWS = {"rows": [{"field": "Matrix", "well": "W-1", "survey_date": "2012-01-15", "pressure_psia": 4000}]}
# web/pages/field_data.py, web/api/field_data.py
DATA_PAGES = ("wells", "surveys", "production", "fluid", "volumetric")
# (method, path, body) -> the outcome for anonymous, viewer, engineer, approver, admin.
# "ok": 2xx, "login": a page redirects to the login page, 401: the API refuses, 403: not allowed.
MATRIX = [
    (("GET", "/", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/fields/{fid}", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/portfolio.csv", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/portfolio.xlsx", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/portfolio-profiles.csv", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/portfolio-profiles.xlsx", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/upload", None), ("login", 403, "ok", "ok", "ok")),
    (("GET", "/account", None), ("login", "ok", "ok", "ok", "ok")),
    (("POST", "/account/units", None), ("login", "redirect", "redirect", "redirect", "redirect")),
    (("PUT", "/api/me/units", {"unit_system": None}), (401, "ok", "ok", "ok", "ok")),
    (("GET", "/admin/users", None), ("login", 403, 403, 403, "ok")),
    (("GET", "/admin/audit", None), ("login", 403, 403, 403, "ok")),
    (("GET", "/admin/settings", None), ("login", 403, 403, 403, "ok")),
    (("POST", "/admin/settings", None), ("login", 403, 403, 403, "ok")),
    (("GET", "/api/portfolio", None), (401, "ok", "ok", "ok", "ok")),
    (("GET", "/api/portfolio/totals", None), (401, "ok", "ok", "ok", "ok")),
    (("GET", "/api/fields/{fid}", None), (401, "ok", "ok", "ok", "ok")),
    (("GET", "/api/fields/{fid}/audit", None), (401, "ok", "ok", "ok", "ok")),
    *((("GET", f"/fields/{{fid}}/{d}", None), ("login", "ok", "ok", "ok", "ok")) for d in DATA_PAGES),
    *((("GET", f"/api/fields/{{fid}}/{d}", None), (401, "ok", "ok", "ok", "ok")) for d in DATA_PAGES),
    # the field page's work: an empty form passes the permission check and is refused (422)
    (("POST", "/fields/{fid}/choices", None), ("login", 403, 422, 422, 422)),
    (("POST", "/fields/{fid}/plan", None), ("login", 403, 422, 422, 422)),
    (("GET", "/api/fields/{fid}/plan", None), (401, "ok", "ok", "ok", "ok")),
    (("PUT", "/api/fields/{fid}/plan", {"uptime_frac": 0.9}), (401, 403, "ok", "ok", "ok")),
    (("GET", "/api/fields/{fid}/forecast", None), (401, "ok", "ok", "ok", "ok")),
    (("POST", "/fields/{fid}/notes", None), ("login", 403, 422, 422, 422)),
    (("POST", "/fields/{fid}/surveys/1/exclusion", None), ("login", 403, 422, 422, 422)),
    (("POST", "/fields/{fid}/fluid", None), ("login", 403, 422, 422, 422)),
    (("PATCH", "/api/fields/{fid}/fluid", {"condensate_api": None}), (401, 403, "ok", "ok", "ok")),
    (("GET", "/api/fields/{fid}/choices", None), (401, "ok", "ok", "ok", "ok")),
    (("PATCH", "/api/fields/{fid}/choices", {"anchor_initial": False}), (401, 403, "ok", "ok", "ok")),
    (("PUT", "/api/fields/{fid}/surveys/1/exclusion", {"excluded": False}), (401, 403, 404, 404, 404)),
    (("GET", "/api/fields/{fid}/history", None), (401, "ok", "ok", "ok", "ok")),
    (("GET", "/api/fields/{fid}/notes", None), (401, "ok", "ok", "ok", "ok")),
    (("POST", "/api/fields/{fid}/notes", {"body": "matrix"}), (401, 403, "ok", "ok", "ok")),
    (("DELETE", "/api/fields/{fid}/notes/999", None), (401, 403, 404, 404, 404)),
    (("POST", "/api/uploads/surveys/rows?dry_run=true", ROWS), (401, 403, "ok", "ok", "ok")),
    (("GET", "/upload/templates/surveys.csv", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/jobs", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/api/jobs", None), (401, "ok", "ok", "ok", "ok")),
    (("POST", "/api/jobs/recompute-portfolio", None), (401, 403, "ok", "ok", "ok")),
    (("GET", "/api/users", None), (401, 403, 403, 403, "ok")),
    (("GET", "/api/audit", None), (401, 403, 403, 403, "ok")),
    (("GET", "/api/settings", None), (401, 403, 403, 403, "ok")),
    (("PUT", "/api/settings", {"display_units": "si"}), (401, 403, 403, 403, "ok")),
    (("GET", "/api/tokens", None), (401, "ok", "ok", "ok", "ok")),
    # the reserves review (web/api/reserves.py): engineers prepare, approvers approve, admins set
    (("GET", "/api/reserves/reviews", None), (401, "ok", "ok", "ok", "ok")),
    (("GET", "/reserves", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/reserves/999", None), ("login", 404, 404, 404, 404)),
    (("GET", "/reserves/999/movements", None), ("login", 404, 404, 404, 404)),
    (("GET", "/api/reserves/reviews/999/movements", None), (401, 404, 404, 404, 404)),
    (("GET", "/reserves/999/report.pdf", None), ("login", 404, 404, 404, 404)),
    (("GET", "/reserves/999/report.xlsx", None), ("login", 404, 404, 404, 404)),
    (("POST", "/reserves/999/submit", None), ("login", 403, 404, 404, 404)),
    (("POST", "/reserves/999/approve", None), ("login", 403, 403, 404, 404)),
    (("POST", "/api/reserves/reviews", {"name": ""}), (401, 403, 422, 422, 422)),
    (("GET", "/api/reserves/reviews/999", None), (401, 404, 404, 404, 404)),
    (("GET", "/api/reserves/reviews/999/report.pdf", None), (401, 404, 404, 404, 404)),
    (("GET", "/api/reserves/reviews/999/report.xlsx", None), (401, 404, 404, 404, 404)),
    (("GET", "/api/reserves/reviews/999/fields/{fid}", None), (401, 404, 404, 404, 404)),
    (("POST", "/api/reserves/reviews/999/fields/{fid}/refresh", None), (401, 403, 404, 404, 404)),
    (("PATCH", "/api/reserves/reviews/999/fields/{fid}/booking", {}), (401, 403, 404, 404, 404)),
    (("PUT", "/api/reserves/reviews/999/fields/{fid}/reconciliation/2P", {}), (401, 403, 404, 404, 404)),
    (("POST", "/api/reserves/reviews/999/submit", None), (401, 403, 404, 404, 404)),
    (("POST", "/api/reserves/reviews/999/return", {"reason": "r"}), (401, 403, 404, 404, 404)),
    (("POST", "/api/reserves/reviews/999/approve", {}), (401, 403, 403, 404, 404)),
    (("POST", "/api/reserves/reviews/999/reopen", {"reason": "r"}), (401, 403, 403, 404, 404)),
    (("GET", "/api/reserves/settings", None), (401, "ok", "ok", "ok", "ok")),
    (("PUT", "/api/reserves/settings", {}), (401, 403, 403, 403, "ok")),
    (("GET", "/openapi.json", None), ("login", "ok", "ok", "ok", "ok")),
    (("GET", "/api/health", None), ("ok", "ok", "ok", "ok", "ok")),
    (("GET", "/login", None), ("ok", "redirect", "redirect", "redirect", "redirect")),
]
ROLES = ("anonymous", "viewer", "engineer", "approver", "admin")


def _outcome(r) -> str | int:
    if r.status_code == 303:
        return "login" if r.headers["location"].startswith("/login") else "redirect"
    return "ok" if 200 <= r.status_code < 300 else r.status_code


def test_role_matrix(db, anon_client, login_as):
    with db.session() as s:
        fid = make_field(s, name="Matrix").id
    clients = {"anonymous": anon_client} | {r: login_as(r) for r in ROLES[1:]}
    got, want = {}, {}
    for (method, path, body), outcomes in MATRIX:
        url = path.format(fid=fid)
        for role, expected in zip(ROLES, outcomes, strict=True):
            r = clients[role].request(method, url, json=body, follow_redirects=False)
            got[(role, method, path)] = _outcome(r)
            want[(role, method, path)] = expected
    assert got == want


def test_token_scopes_limit_what_a_script_may_do(db, token_client):
    with db.session() as s:
        make_field(s, name="Matrix")
    url = "/api/uploads/surveys/rows?dry_run=true"
    reader = token_client(["read"])
    assert reader.get("/api/portfolio").status_code == 200
    r = reader.post(url, json=ROWS)
    assert r.status_code == 403 and "scopes" in r.json()["detail"]
    uploader = token_client(["read", "upload"])
    assert uploader.post(url, json=ROWS).status_code == 200  # no form token needed with a bearer token
    # a token never does more than its user's role allows
    assert token_client(["read", "upload"], role="viewer").post(url, json=ROWS).status_code == 403
    # tokens cannot manage tokens or users, even an administrator's
    admin_token = token_client(["read", "upload", "analyse"], role="admin")
    assert admin_token.get("/api/tokens").status_code == 403
    assert admin_token.get("/api/users").status_code == 403
    assert admin_token.get("/api/settings").status_code == 403
    assert admin_token.get("/api/audit").status_code == 200


@pytest.fixture
def two_assets(db):
    with db.session() as s:
        mine = make_field(s, name="Mine", asset="North")
        theirs = make_field(s, name="Theirs", asset="South")
        return {"mine": mine.id, "theirs": theirs.id, "north": mine.asset_id, "south": theirs.asset_id}


def test_user_limited_to_an_asset_sees_only_its_fields(two_assets, login_as, token_client):
    c = login_as("engineer", assets=[two_assets["north"]])
    page = c.get("/")
    assert "Mine" in page.text and "Theirs" not in page.text
    assert [r["name"] for r in c.get("/api/portfolio").json()] == ["Mine"]
    assert c.get(f"/fields/{two_assets['mine']}").status_code == 200
    for url in (
        f"/fields/{two_assets['theirs']}",
        f"/api/fields/{two_assets['theirs']}",
        f"/api/fields/{two_assets['theirs']}/estimate",
        f"/api/fields/{two_assets['theirs']}/audit",
    ):
        r = c.get(url)
        assert r.status_code == 404, url
        assert "Theirs" not in r.text
    # an API token of the same user is limited the same way
    t = token_client(["read"], assets=[two_assets["north"]])
    assert t.get(f"/api/fields/{two_assets['theirs']}").status_code == 404
    # a user with all assets sees both
    assert len(login_as("viewer").get("/api/portfolio").json()) == 2


def test_user_limited_to_an_asset_cannot_change_another_assets_field(db, two_assets, login_as):
    c = login_as("engineer", assets=[two_assets["north"]])
    rows = {"rows": [{"field": "Theirs", "well": "W-1", "survey_date": "2012-01-15", "pressure_psia": 4000}]}
    r = c.post("/api/uploads/surveys/rows", json=rows)
    assert r.status_code == 422
    problem = r.json()["report"]["problems"][0]
    assert (problem["row"], problem["column"]) == (2, "field")
    assert "not in your assets" in problem["message"]
    with db.session() as s:
        assert s.execute(select(func.count(PressureSurvey.id))).scalar_one() == 0
    rows["rows"][0]["field"] = "Mine"
    assert c.post("/api/uploads/surveys/rows", json=rows).json()["status"] == "committed"
