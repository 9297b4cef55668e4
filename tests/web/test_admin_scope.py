"""Administrators within limits (issue 18, point 14): nobody changes their own role, status or
asset access; an administrator limited to some assets manages only the users within them,
gives access only to them, and reads only their audit events (/api/audit and /admin/audit).

Before: posting all_assets=true to one's own entry answered 303 and took effect, and the
audit trail had no asset filter. Runs on both databases."""

import pytest
from sqlalchemy import select

from server.db.models import Asset, User, UserAsset
from server.services.audit import Actor, record
from tests.factories import make_field
from tests.web.conftest import make_user


@pytest.fixture
def world(db):
    with db.session() as s:
        north = make_field(s, name="Northgate", asset="North Asset")
        south = make_field(s, name="Southgate", asset="South Asset")
        ids = {
            "north": north.asset_id,
            "south": south.asset_id,
            "north_field": north.id,
            "south_field": south.id,
        }
        record(
            s,
            Actor(None, "system"),
            "update",
            "field",
            north.id,
            field_id=north.id,
            summary="north-only event",
        )
        record(
            s,
            Actor(None, "system"),
            "update",
            "field",
            south.id,
            field_id=south.id,
            summary="south-only event",
        )
    ids["in_north"] = make_user(db, "engineer", "in-north", [ids["north"]])
    ids["in_south"] = make_user(db, "engineer", "in-south", [ids["south"]])
    ids["everywhere"] = make_user(db, "engineer", "everywhere")
    return ids


def _user(db, uid):
    with db.session() as s:
        u = s.get(User, uid)
        assets = set(s.execute(select(UserAsset.asset_id).where(UserAsset.user_id == uid)).scalars())
        return u.role, u.is_active, u.all_assets, assets


def _form(role="engineer", *, all_assets=False, assets=(), active=True):
    data = {"role": role, "display_name": "x", "asset_ids": [str(a) for a in assets]}
    if all_assets:
        data["all_assets"] = "true"
    if active:
        data["is_active"] = "true"
    return data


def test_a_limited_admin_cannot_lift_their_own_limit(db, login_as, world):
    admin = login_as("admin", assets=[world["north"]], username="north-admin")
    before = _user(db, admin.user_id)
    r = admin.post(
        f"/admin/users/{admin.user_id}", data=_form("admin", all_assets=True), follow_redirects=False
    )
    assert r.status_code == 403 and "nobody changes their own" in r.text
    r = admin.post(
        f"/admin/users/{admin.user_id}",
        data=_form("admin", assets=[world["north"], world["south"]]),
        follow_redirects=False,
    )
    assert r.status_code == 403
    assert _user(db, admin.user_id) == before
    # the name is theirs to change
    r = admin.post(
        f"/admin/users/{admin.user_id}", data=_form("admin", assets=[world["north"]]), follow_redirects=False
    )
    assert r.status_code == 303


def test_nobody_changes_their_own_role_or_status(db, admin_client):
    before = _user(db, admin_client.user_id)
    for data in (_form("engineer", all_assets=True), _form("admin", all_assets=True, active=False)):
        r = admin_client.post(f"/admin/users/{admin_client.user_id}", data=data, follow_redirects=False)
        assert r.status_code == 403
    assert _user(db, admin_client.user_id) == before


def test_a_limited_admin_manages_only_users_within_their_assets(db, login_as, world):
    admin = login_as("admin", assets=[world["north"]], username="north-admin")
    for other in ("in_south", "everywhere"):
        before = _user(db, world[other])
        assert admin.get(f"/admin/users/{world[other]}").status_code == 404
        r = admin.post(
            f"/admin/users/{world[other]}", data=_form(assets=[world["north"]]), follow_redirects=False
        )
        assert r.status_code == 404
        assert admin.post(f"/admin/users/{world[other]}/reset-password").status_code == 404
        assert _user(db, world[other]) == before
    # within: may change, but give only their own assets
    r = admin.post(f"/admin/users/{world['in_north']}", data=_form(all_assets=True), follow_redirects=False)
    assert r.status_code == 403
    r = admin.post(
        f"/admin/users/{world['in_north']}", data=_form(assets=[world["south"]]), follow_redirects=False
    )
    assert r.status_code == 403
    r = admin.post(
        f"/admin/users/{world['in_north']}",
        data=_form("viewer", assets=[world["north"]]),
        follow_redirects=False,
    )
    assert r.status_code == 303 and _user(db, world["in_north"])[0] == "viewer"
    # creating: only within their assets
    r = admin.post("/admin/users", data={"username": "new-all", "role": "viewer", "all_assets": "true"})
    assert r.status_code == 403
    r = admin.post(
        "/admin/users", data={"username": "new-south", "role": "viewer", "asset_ids": [world["south"]]}
    )
    assert r.status_code == 403
    r = admin.post(
        "/admin/users", data={"username": "new-north", "role": "viewer", "asset_ids": [world["north"]]}
    )
    assert r.status_code == 200
    # the lists show only theirs
    names = {u["username"] for u in admin.get("/api/users").json()}
    assert {"in-north", "new-north", "north-admin"} <= names and not names & {"in-south", "everywhere"}
    table = admin.get("/admin/users").text.split('id="user-table"', 1)[1]
    assert "in-north" in table and "in-south" not in table and ">everywhere<" not in table
    with db.session() as s:
        assert s.execute(select(User.id).where(User.username.in_(["new-all", "new-south"]))).first() is None
        assert s.execute(select(Asset.id)).first() is not None


def test_a_limited_admin_reads_only_their_assets_audit_events(db, login_as, admin_client, world):
    admin = login_as("admin", assets=[world["north"]], username="north-admin")
    summaries = {e["summary"] for e in admin.get("/api/audit").json()}
    assert "north-only event" in summaries and "south-only event" not in summaries
    assert admin.get(f"/api/audit?field_id={world['south_field']}").json() == []
    page = admin.get("/admin/audit").text
    assert "north-only event" in page and "south-only event" not in page
    everything = {e["summary"] for e in admin_client.get("/api/audit").json()}
    assert {"north-only event", "south-only event"} <= everything
