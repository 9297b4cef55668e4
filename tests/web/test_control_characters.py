# ruff: noqa: F811 - the fixture fid is imported from tests/web/fieldbench.py
"""A NUL (or another control character) in any text a request carries is a 422 naming where,
before anything reads it (issue 18, point 5). On PostgreSQL each of these was a 500 (psycopg's
DataError: text cannot hold NUL), on SQLite the NUL was stored. Runs on both databases."""

import re

import pytest
from sqlalchemy import func, select

from server.db.models import ApiToken, AuditEvent, FieldNote, PressureSurvey, Well
from tests.web.fieldbench import fid  # noqa: F401 - fid is a fixture

NUL = "\x00"


def _refused(r, where: str):
    assert r.status_code == 422, (r.status_code, r.text[-400:])
    assert "control character U+0000" in r.text or "control character U+00" in r.text
    assert where in r.text


def _count(db, model):
    with db.session() as s:
        return s.execute(select(func.count()).select_from(model)).scalar_one()


def test_login_user_name_with_nul_is_refused_before_authentication(db, anon_client):
    r = anon_client.post(
        "/login",
        data={"username": f"engineer{NUL}", "password": "x" * 12},
        headers={"Origin": "http://127.0.0.1:8000"},
    )
    _refused(r, "username")


@pytest.mark.parametrize(
    "path", ["/api/audit?actor=a%00b", "/api/audit?entity_type=%00", "/admin/audit?actor=%00"]
)
def test_audit_filters_with_nul_are_refused(admin_client, path):
    _refused(admin_client.get(path), "actor" if "actor" in path else "entity_type")


def test_note_body_reason_and_token_name_with_nul_change_nothing(db, client, fid):
    notes, tokens, events = _count(db, FieldNote), _count(db, ApiToken), _count(db, AuditEvent)
    _refused(client.post(f"/fields/{fid}/notes", data={"body": f"gauge{NUL}drift"}), "body")
    _refused(client.post(f"/api/fields/{fid}/notes", json={"body": f"gauge{NUL}drift"}), "body")
    _refused(client.post("/account/tokens", data={"name": f"nightly{NUL}", "scopes": ["read"]}), "name")
    _refused(client.post("/api/tokens", json={"name": f"nightly{NUL}", "scopes": ["read"]}), "name")
    with db.session() as s:
        sid = s.execute(
            select(PressureSurvey.id).join(Well).where(Well.field_id == fid).limit(1)
        ).scalar_one()
    r = client.post(
        f"/fields/{fid}/surveys/{sid}/exclusion", data={"action": "exclude", "reason": f"bad{NUL}"}
    )
    _refused(r, "reason")
    r = client.put(
        f"/api/fields/{fid}/surveys/{sid}/exclusion", json={"excluded": True, "reason": f"bad{NUL}"}
    )
    _refused(r, "reason")
    assert (_count(db, FieldNote), _count(db, ApiToken), _count(db, AuditEvent)) == (notes, tokens, events)


def test_other_control_characters_too_but_tab_and_line_breaks_are_text(db, client, fid):
    for ch in ("\x01", "\x1b", "\x7f", "\x85"):
        r = client.post(f"/api/fields/{fid}/notes", json={"body": f"a{ch}b"})
        assert r.status_code == 422 and f"U+{ord(ch):04X}" in r.text, (ch, r.status_code)
    r = client.post(f"/api/fields/{fid}/notes", json={"body": "line one\n\tline two\r\n"})
    assert r.status_code in (200, 201), r.text


def _multipart(filename: bytes, content: bytes) -> tuple[bytes, str]:
    """A multipart body written byte by byte (a client library would percent-encode the name)."""
    boundary = "tbboundary7285"
    body = (
        f"--{boundary}\r\n".encode()
        + b'Content-Disposition: form-data; name="file"; filename="'
        + filename
        + b'"\r\n'
        + b"Content-Type: text/csv\r\n\r\n"
        + content
        + f"\r\n--{boundary}--\r\n".encode()
    )
    return body, f"multipart/form-data; boundary={boundary}"


def test_upload_filename_with_nul_is_refused(db, client):
    body, ctype = _multipart(b"surveys\x00.csv", b"field,well\n")
    r = client.post("/api/uploads/surveys?dry_run=true", content=body, headers={"Content-Type": ctype})
    _refused(r, "file")


def test_a_json_key_with_a_control_character_is_refused(db, client):
    r = client.post("/api/uploads/surveys/rows?dry_run=true", json={"rows": [{f"well{NUL}": "A"}]})
    _refused(r, "rows")


def test_every_get_route_refuses_a_query_value_with_nul(app, admin_client, fid):
    """Every GET route of the app (ids filled in), with an extra query parameter holding NUL."""
    from server.web.auth import route_permissions

    paths = []
    for methods, path, _route, permission in route_permissions(app):
        if "GET" not in methods or permission in ("mount", None) or path.startswith("/assets"):
            continue
        paths.append(re.sub(r"\{[a-z_]+(:path)?\}", lambda m: str(fid) if "id" in m.group() else "x", path))
    assert len(paths) > 20
    for path in paths:
        r = admin_client.get(path, params={"probe": f"a{NUL}"})
        assert r.status_code == 422, (path, r.status_code)
