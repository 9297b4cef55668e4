"""The settings page and the settings API: administrators edit the team settings with the
session's form token; the values take effect on pages and uploads; tokens cannot change them."""

from __future__ import annotations

from fastapi import Request
from sqlalchemy import select

from server.db.models import AuditEvent, TeamSetting
from server.web.auth import Public
from server.web.display import units_for_request
from tests.factories import field_with_estimate

THRESHOLD = "threshold.survey_gap_days"


def _team_events(db):
    with db.session() as s:
        stmt = select(AuditEvent).where(AuditEvent.entity_type == "team_settings").order_by(AuditEvent.id)
        return s.execute(stmt).scalars().all()


def test_the_page_shows_every_setting_with_its_source(admin_client):
    page = admin_client.get("/admin/settings")
    assert page.status_code == 200
    form = page.text[page.text.index('id="team-settings-form"') :]
    assert f'name="csrf_token" value="{admin_client.csrf_token}"' in form
    for name in (
        "display_units",
        "atmosphere_psia",
        "standard_conditions",
        THRESHOLD,
        "threshold.min_surveys",
    ):
        assert f'name="{name}"' in form
    assert "Choose before the first upload" in form  # no gas volumes yet
    assert "TANKBOOK_DATABASE_URL" in page.text  # the deployment table is still shown


def test_saving_changes_audits_and_recomputes(db, admin_client):
    fid = field_with_estimate(db)
    r = admin_client.post("/admin/settings", data={THRESHOLD: "60", "display_units": "oilfield"})
    assert r.status_code == 200
    assert "Saved: threshold.survey_gap_days." in r.text and "being recomputed" in r.text
    (event,) = _team_events(db)
    assert event.before == {THRESHOLD: 3 * 365.25} and event.after == {THRESHOLD: 60.0}
    assert event.actor == "admin-test"
    est = admin_client.get(f"/api/fields/{fid}/estimate").json()  # the inline runner ran the job
    assert "data_gaps" in {f["code"] for f in est["flags"]}
    # the standard conditions are now fixed, with the reason shown
    page = admin_client.get("/admin/settings").text
    assert 'id="basis-lock"' in page and "production months" in page


def test_bad_values_are_refused_with_messages(db, admin_client):
    r = admin_client.post("/admin/settings", data={THRESHOLD: "5", "atmosphere_psia": "abc"})
    assert r.status_code == 422
    box = r.text[r.text.index('id="settings-error"') :]
    assert "Nothing was saved" in box and THRESHOLD in box and "atmosphere_psia" in box
    assert 'value="abc"' in r.text  # what was typed is kept for correcting
    with db.session() as s:
        assert s.execute(select(TeamSetting).where(TeamSetting.key == THRESHOLD)).first() is None


def test_the_form_needs_the_sessions_form_token(admin_client):
    r = admin_client.post("/admin/settings", data={THRESHOLD: "60"}, headers={"X-CSRF-Token": "forged"})
    assert r.status_code == 403


def test_the_team_default_unit_system_and_atmosphere_take_effect(db, app, admin_client, client):
    field_with_estimate(db)

    @app.get("/units-probe", dependencies=[Public])  # what every template gets as ``du``
    def probe(request: Request):
        du = units_for_request(request)
        return {"system": du.system, "gas": du.label("gas_bscf")}

    assert client.get("/units-probe").json() == {"system": "oilfield", "gas": "Bscf (60 °F, 14.696 psia)"}
    admin_client.put("/api/settings", json={"display_units": "si", "atmosphere_psia": 14.2})
    assert client.get("/units-probe").json() == {"system": "si", "gas": "10⁶ m³ (15 °C, 101.325 kPa)"}
    assert 'value="14.2"' in client.get("/upload").text
    row = {"field": "Upland", "well": "W-2", "survey_date": "2017-01-15", "pressure_psig": 1500}
    r = client.post("/api/uploads/surveys/rows?dry_run=true", json={"rows": [row]})
    assert r.status_code == 200, r.text
    assert r.json()["preview"]["changes"][0]["after"]["pressure_psia"] == 1514.2


def test_the_api_reads_and_changes_settings(db, admin_client):
    got = admin_client.get("/api/settings").json()
    assert got["standard_conditions"] == "oilfield" and got["sources"]["standard_conditions"] == "pinned"
    assert got["flag_thresholds"]["outlier_sigma"] == 4.0 and got["standard_conditions_locked"] is None
    r = admin_client.put(
        "/api/settings", json={"flag_thresholds": {"outlier_sigma": 5}, "standard_conditions": "iso"}
    )
    assert r.status_code == 200, r.text
    body = r.json()
    assert set(body["changed"]) == {"threshold.outlier_sigma", "standard_conditions"}
    assert body["recompute_job_id"] is not None and body["standard_conditions_label"] == "15 °C, 101.325 kPa"
    assert body["sources"]["standard_conditions"] == "team"
    (event,) = _team_events(db)
    assert event.after == {"threshold.outlier_sigma": 5.0, "standard_conditions": "iso"}
    # out of range or unknown: 422 from the schema, nothing changed
    assert (
        admin_client.put("/api/settings", json={"flag_thresholds": {"outlier_sigma": 0.5}}).status_code == 422
    )
    assert admin_client.put("/api/settings", json={"colour": "blue"}).status_code == 422
    assert len(_team_events(db)) == 1


def test_the_api_refuses_to_change_the_basis_once_volumes_are_stored(db, admin_client):
    field_with_estimate(db)
    r = admin_client.put("/api/settings", json={"standard_conditions": "iso"})
    assert r.status_code == 409 and "cannot change" in r.json()["detail"]
    assert admin_client.get("/api/settings").json()["standard_conditions_locked"].startswith("the database")


def test_no_api_token_may_read_or_change_settings(token_client):
    admin_token = token_client(["read", "upload", "analyse"], role="admin")
    assert admin_token.get("/api/settings").status_code == 403
    assert admin_token.put("/api/settings", json={"display_units": "si"}).status_code == 403
