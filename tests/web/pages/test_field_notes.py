# ruff: noqa: F811 - the fixture fid is imported from tests/web/fieldbench.py
"""Notes by the team on the field page (plain text, escaped, audited; authors delete their own)
and the JSON twins of the field page's work under /api/fields/{id}/..."""

import re

import pytest
from sqlalchemy import select

from server.db.models import AuditEvent, FieldNote, PressureSurvey
from server.db.models.portfolio import NOTE_MAX_CHARS
from tests.web.fieldbench import fid, latest, surveys_of, text_of  # noqa: F401 - fid is a fixture


def test_note_is_stored_escaped_audited_and_deletable_by_its_author(db, client, login_as, fid):
    body = "Late p/z bends upward <script>alert(1)</script> & W-1 watered out?"
    sid = surveys_of(db, fid)[3].id
    r = client.post(
        f"/fields/{fid}/notes", data={"body": body, "survey_id": str(sid)}, follow_redirects=False
    )
    assert r.status_code == 303
    page = client.get(r.headers["location"]).text
    with db.session() as s:
        note = s.execute(select(FieldNote)).scalar_one()
        assert (note.body, note.author_username, note.field_id, note.survey_id) == (
            body,
            "engineer",
            fid,
            sid,
        )
        nid = note.id
        ev = s.execute(select(AuditEvent).where(AuditEvent.entity_type == "field_note")).scalar_one()
        assert (ev.action, ev.entity_id, ev.field_id) == ("create", nid, fid)
    item = re.search(rf'<li id="note-{nid}" class="note">(.*?)</li>', page, re.S).group(1)
    assert "&lt;script&gt;alert(1)&lt;/script&gt; &amp; W-1" in item and "<script>alert" not in page
    assert "engineer" in item and "Delete" in item and 'id="flash"' in page
    assert f'about survey <a href="#survey-{sid}">' in item
    # another engineer sees it but cannot delete it
    other = login_as("engineer", username="second-engineer")
    assert "Delete" not in re.search(
        rf'<li id="note-{nid}".*?</li>', other.get(f"/fields/{fid}").text, re.S
    ).group(0)
    assert other.post(f"/fields/{fid}/notes/{nid}/delete").status_code == 403
    r = client.post(f"/fields/{fid}/notes/{nid}/delete", follow_redirects=False)
    assert r.status_code == 303
    with db.session() as s:
        assert s.execute(select(FieldNote)).scalar_one_or_none() is None
        assert s.execute(select(AuditEvent.action).where(AuditEvent.entity_id == nid)).scalars().all() == [
            "create",
            "delete",
        ]
    assert 'id="no-notes"' in client.get(f"/fields/{fid}").text


@pytest.mark.parametrize(
    ("body", "message"),
    [
        ("  \n ", "write something first: the note is empty"),
        ("x" * (NOTE_MAX_CHARS + 1), "at most 4,000 characters, got 4,001"),
    ],
)
def test_empty_or_long_note_is_refused_with_the_reason(db, client, fid, body, message):
    r = client.post(f"/fields/{fid}/notes", data={"body": body})
    assert r.status_code == 422 and message in text_of(
        re.search(r'id="note-problem">(.*?)</div>', r.text, re.S).group(1)
    )
    with db.session() as s:
        assert s.execute(select(FieldNote)).first() is None


def test_api_twins_exclude_choices_history_and_notes(db, client, viewer_client, fid):
    before = latest(db, fid)
    target = surveys_of(db, fid)[-1]
    url = f"/api/fields/{fid}/surveys/{target.id}/exclusion"
    r = client.put(url, json={"excluded": True})
    assert r.status_code == 409 and "give a reason" in r.json()["detail"]
    r = client.put(url, json={"excluded": True, "reason": "tool failure"})
    assert r.status_code == 200
    out = r.json()
    assert out["changed"] == ["excluded", "exclusion_reason"] and out["job_id"] is not None
    assert out["estimate"]["giip_best_bscf"] != pytest.approx(before.giip_best_bscf, abs=0.05)
    assert out["estimate"]["id"] == latest(db, fid).id
    assert client.put(url, json={"excluded": True, "reason": "tool failure"}).json()["changed"] == []
    assert (
        client.put(f"/api/fields/{fid}/surveys/999999/exclusion", json={"excluded": False}).status_code == 404
    )

    r = client.patch(f"/api/fields/{fid}/choices", json={"abandonment_pressure_psia": 10.0})
    assert r.status_code == 409 and "must lie above the atmosphere (14.696 psia)" in r.json()["detail"]
    r = client.patch(
        f"/api/fields/{fid}/choices", json={"abandonment_pressure_psia": 1500.0, "z_method": "dak"}
    )
    assert r.status_code == 200 and r.json()["changed"] == ["abandonment_pressure_psia"]
    assert r.json()["estimate"]["eur_bscf"] < out["estimate"]["eur_bscf"]
    assert client.get(f"/api/fields/{fid}/choices").json()["abandonment_pressure_psia"] == 1500.0
    assert client.patch(f"/api/fields/{fid}/choices", json={"z_method": "nope"}).status_code == 409
    assert client.patch(f"/api/fields/{fid}/choices", json={"colour": "red"}).status_code == 422

    history = client.get(f"/api/fields/{fid}/history").json()
    assert [h["estimate_id"] for h in history] == sorted(h["estimate_id"] for h in history) and len(
        history
    ) == 3
    assert history[0]["trigger"] == "test setup" and "tool failure" in history[1]["trigger"]
    assert history[2]["trigger"] == "abandonment_pressure_psia changed by engineer"

    r = client.post(
        f"/api/fields/{fid}/notes", json={"body": "set aside: tool failure", "survey_id": target.id}
    )
    assert r.status_code == 201 and r.json()["survey_id"] == target.id and r.json()["author"] == "engineer"
    nid = r.json()["id"]
    assert client.post(f"/api/fields/{fid}/notes", json={"body": "x", "survey_id": 999999}).status_code == 409
    assert viewer_client.post(f"/api/fields/{fid}/notes", json={"body": "hi"}).status_code == 403
    assert viewer_client.put(url, json={"excluded": False}).status_code == 403
    assert viewer_client.patch(f"/api/fields/{fid}/choices", json={"anchor_initial": True}).status_code == 403
    assert [n["id"] for n in viewer_client.get(f"/api/fields/{fid}/notes").json()] == [nid]
    assert viewer_client.delete(f"/api/fields/{fid}/notes/{nid}").status_code == 403

    full = viewer_client.get(f"/api/fields/{fid}").json()
    assert full["summary"]["estimate"]["id"] == history[-1]["estimate_id"]  # the old keys are still there
    assert full["choices"]["abandonment_pressure_psia"] == 1500.0 and len(full["history"]) == 3
    assert [n["body"] for n in full["notes"]] == ["set aside: tool failure"]
    prod = full["production"]
    assert prod["month"][0] == "2010-01-01" and prod["gas_mscf"][0] == pytest.approx(20000.0 * 30.4375)
    excluded = [s for s in full["surveys"] if s["excluded"]]
    assert [(s["id"], s["exclusion_reason"]) for s in excluded] == [(target.id, "tool failure")]
    assert client.delete(f"/api/fields/{fid}/notes/{nid}").status_code == 204
    assert client.get(f"/api/fields/{fid}/notes").json() == []
    with db.session() as s:
        assert s.get(PressureSurvey, target.id).excluded


def test_token_with_the_analyse_scope_works_without_a_form_token(db, token_client, fid):
    target = surveys_of(db, fid)[0]
    url = f"/api/fields/{fid}/surveys/{target.id}/exclusion"
    assert token_client(["read"]).put(url, json={"excluded": True, "reason": "x"}).status_code == 403
    r = token_client(["read", "analyse"]).put(
        url, json={"excluded": True, "reason": "nightly QC: gauge drift"}
    )
    assert r.status_code == 200 and r.json()["changed"]


def test_engineer_of_another_asset_cannot_touch_the_field(db, login_as, fid):
    from server.db.models import Asset

    with db.session() as s:
        elsewhere = Asset(name="Elsewhere", basin="Far")
        s.add(elsewhere)
        s.flush()
        aid = elsewhere.id
    c = login_as("engineer", assets=[aid])
    target = surveys_of(db, fid)[0]
    assert c.get(f"/fields/{fid}").status_code == 404
    r = c.post(f"/fields/{fid}/surveys/{target.id}/exclusion", data={"action": "exclude", "reason": "x"})
    assert r.status_code == 404 and "Harrow" not in r.text
    assert c.patch(f"/api/fields/{fid}/choices", json={"anchor_initial": True}).status_code == 404
    assert c.post(f"/api/fields/{fid}/notes", json={"body": "x"}).status_code == 404
    assert not surveys_of(db, fid)[0].excluded
