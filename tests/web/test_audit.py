"""The audit trail: uploads by the real user, replaced values before and after, user and token
changes, the administrators' page and the field page's history section."""

from __future__ import annotations

import datetime as dt

from sqlalchemy import select

from server.db.models import AuditEvent, User
from server.services import audit
from tests.factories import field_with_estimate

ROW = {"field": "Upland", "well": "W-2", "survey_date": "2017-01-15", "pressure_psia": 1500}


def _seed(db) -> int:
    return field_with_estimate(db)


def _events(db, **where):
    with db.session() as s:
        stmt = select(AuditEvent).order_by(AuditEvent.id)
        for k, v in where.items():
            stmt = stmt.where(getattr(AuditEvent, k) == v)
        return s.execute(stmt).scalars().all()


def test_upload_is_recorded_with_the_acting_user(db, client):
    fid = _seed(db)
    assert client.post("/api/uploads/surveys/rows", json={"rows": [ROW]}).json()["status"] == "committed"
    (event,) = _events(db, action="upload")
    assert event.actor == "engineer" and event.user_id == client.user_id
    assert event.field_id == fid and event.after["added"] == 1 and event.after["kind"] == "surveys"
    # a correction replaces the value and keeps the old one
    changed = {"rows": [ROW | {"pressure_psia": 1510}]}
    assert client.post("/api/uploads/surveys/rows?replace=true", json=changed).json()["status"] == "committed"
    (replaced,) = _events(db, action="replace")
    assert replaced.actor == "engineer" and replaced.field_id == fid
    assert replaced.before["pressure_psia"] == 1500 and replaced.after["pressure_psia"] == 1510


def test_field_page_shows_its_history(db, client, viewer_client):
    fid = _seed(db)
    client.post("/api/uploads/surveys/rows", json={"rows": [ROW]})
    for c in (client, viewer_client):  # everyone who can read the field sees its history
        page = c.get(f"/fields/{fid}").text
        section = page[page.index('id="field-audit"') :]
        assert "History of changes" in section and "engineer" in section and "upload" in section
    twin = viewer_client.get(f"/api/fields/{fid}/audit").json()
    assert twin[0]["action"] == "upload" and twin[0]["actor"] == "engineer"


def test_user_and_token_changes_are_recorded_without_secrets(db, admin_client, client):
    admin_client.post(
        "/admin/users",
        data={
            "csrf_token": admin_client.csrf_token,
            "username": "newbie",
            "role": "viewer",
            "all_assets": "true",
        },
    )
    with db.session() as s:
        uid = s.execute(select(User.id).where(User.username == "newbie")).scalar_one()
    admin_client.post(
        f"/admin/users/{uid}",
        data={
            "csrf_token": admin_client.csrf_token,
            "role": "engineer",
            "is_active": "true",
            "all_assets": "true",
        },
    )
    events = _events(db, entity_type="user", entity_id=uid)
    assert [e.action for e in events] == ["create", "password", "update"]
    assert all(e.actor == "admin-test" for e in events)
    assert events[0].after["role"] == "viewer"
    assert events[2].before == {"role": "viewer"} and events[2].after == {"role": "engineer"}
    assert events[1].after == {"password": "reset to a one-time password", "api_tokens_revoked": 0}
    with db.session() as s:
        digest = s.get(User, uid).password_hash
    for e in _events(db):
        assert digest not in str(e.before) + str(e.after)
    made = client.post("/api/tokens", json={"name": "loader", "scopes": ["read", "upload"]}).json()
    client.delete(f"/api/tokens/{made['id']}")
    tokens = _events(db, entity_type="api_token")
    assert [(e.action, e.actor) for e in tokens] == [("create", "engineer"), ("revoke", "engineer")]
    assert made["token"] not in str([(e.before, e.after) for e in tokens])


def test_administrators_see_and_filter_the_whole_trail(db, admin_client, client, viewer_client):
    _seed(db)
    client.post("/api/uploads/surveys/rows", json={"rows": [ROW]})
    client.post("/api/tokens", json={"name": "loader", "scopes": ["read"]})
    page = admin_client.get("/admin/audit")
    assert page.status_code == 200 and "upload" in page.text and "api_token" in page.text
    filtered = admin_client.get("/admin/audit?entity_type=api_token&actor=engineer&field_id=").text
    assert "loader" in filtered and "upload 1" not in filtered
    api = admin_client.get("/api/audit", params={"entity_type": "upload"}).json()
    assert [e["action"] for e in api] == ["upload"]
    assert viewer_client.get("/admin/audit").status_code == 403


def test_record_stores_json_ready_values(session):
    e = audit.record(
        session,
        audit.Actor(None, "system"),
        "update",
        "field",
        1,
        before={"when": dt.date(2020, 1, 2)},
        after={"when": dt.datetime(2020, 1, 2, 3, 4, tzinfo=dt.UTC), "tags": {"b", "a"}},
        summary="x",
    )
    session.flush()
    assert e.before == {"when": "2020-01-02"}
    assert e.after == {"when": "2020-01-02T03:04:00+00:00", "tags": ["a", "b"]}
    assert audit.changed({"a": 1, "b": 2}, {"a": 1, "b": 3}) == ({"b": 2}, {"b": 3})
