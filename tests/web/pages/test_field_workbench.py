# ruff: noqa: F811 - the fixture fid is imported from tests/web/fieldbench.py
"""Working on a field from its page: set a survey aside and take it back, change the
abandonment pressure and analysis choices, each audited (old -> new) and recomputed before the
page answers; bad values are refused with the reason and change nothing; SI display."""

import re

import pytest
from sqlalchemy import func, select

from server.db.models import AuditEvent, Field, PressureSurvey, TeamSetting, Well
from server.web.templating import fmt
from tests.factories import add_volumetric_history, make_field
from tests.web.fieldbench import fid, figure, giip_card, latest, surveys_of, text_of  # noqa: F401 - fid is a fixture


def test_page_shows_the_workbench_with_key_numbers_and_no_inline_scripts(db, client, fid):
    r = client.get(f"/fields/{fid}")
    assert r.status_code == 200
    est = latest(db, fid)
    assert giip_card(r.text) == fmt(est.giip_best_bscf)
    assert re.search(r'id="eur">' + re.escape(fmt(est.eur_bscf)) + "<", r.text)
    for s in surveys_of(db, fid):
        assert f'id="survey-{s.id}" data-survey-id="{s.id}" data-status="used"' in r.text
        assert f"/fields/{fid}/surveys/{s.id}/exclusion" in r.text
    assert 'id="choices-form"' in r.text and 'id="note-form"' in r.text
    assert r.text.count(f'name="csrf_token" value="{client.csrf_token}"') >= 3
    for name in ("pz-figure", "pressure-figure", "production-figure", "history-figure"):
        assert figure(r.text, name)["data"], name
    prod = figure(r.text, "production-figure")
    assert prod["data"][0]["y"][0] == pytest.approx(20.0 * 30.4375 / 31)  # Jan 2010: MMscf/d
    # every script is a file or a JSON data block (CSP: no inline scripts)
    for tag in re.findall(r"<script[^>]*>", r.text):
        assert 'src="' in tag or 'type="application/json"' in tag, tag
    assert re.search(r'<link rel="stylesheet" href="/assets/[0-9a-f]{16}/field.css"', r.text)
    text = text_of(r.text)
    assert "Estimate history" in text and "test setup" in text  # what triggered the estimate
    assert "EUR at 1,000 psia" in text and "Abandonment pressure 1,000.0 psia" in text


def test_exclude_a_survey_changes_the_estimate_and_the_page_says_why(db, client, fid):
    before = latest(db, fid)
    target = surveys_of(db, fid)[-1]
    r = client.post(
        f"/fields/{fid}/surveys/{target.id}/exclusion",
        data={"action": "exclude", "reason": "gauge drift suspected", "csrf_token": client.csrf_token},
        follow_redirects=False,
    )
    assert r.status_code == 303 and r.headers["location"].startswith(f"/fields/{fid}?changed=")
    page = client.get(r.headers["location"]).text
    after = latest(db, fid)
    assert after.id != before.id and after.giip_best_bscf != pytest.approx(before.giip_best_bscf, abs=0.05)
    assert giip_card(page) == fmt(after.giip_best_bscf) != fmt(before.giip_best_bscf)
    row = re.search(rf'<tr class="status-excluded" id="survey-{target.id}".*?</tr>', page, re.S)
    assert row and "set aside by the engineer: gauge drift suspected" in text_of(row.group(0))
    assert "Take back" in row.group(0)
    text = text_of(page)
    assert (
        f"Saved: set aside survey of W-1 on {target.survey_date.isoformat()}: gauge drift suspected" in text
    )
    assert 'id="flash"' not in client.get(f"/fields/{fid}?changed=x1").text  # a bad link shows the page
    pz = figure(page, "pz-figure")
    aside = next(t for t in pz["data"] if t["name"] == "set aside by the engineer")
    assert aside["customdata"] == [target.id] and "gauge drift suspected" in aside["text"][0]
    with db.session() as s:
        ev = s.execute(select(AuditEvent).where(AuditEvent.entity_type == "pressure_survey")).scalar_one()
        assert (ev.actor, ev.action, ev.field_id) == ("engineer", "exclude", fid)
        assert ev.before == {"excluded": False, "exclusion_reason": None}
        assert ev.after == {"excluded": True, "exclusion_reason": "gauge drift suspected"}
    audit = page[page.index('id="field-audit"') :]
    assert f'data-audit-id="{ev.id}"' in audit and "gauge drift suspected" in audit
    history = page[page.index('id="history-table"') :]
    assert history.index(f'data-estimate-id="{after.id}"') < history.index(f'data-estimate-id="{before.id}"')
    assert "set aside survey of W-1" in text_of(history.split("</table>")[0])

    # take it back: the estimate returns to the first numbers
    r = client.post(
        f"/fields/{fid}/surveys/{target.id}/exclusion",
        data={"action": "include", "csrf_token": client.csrf_token},
    )
    assert r.status_code == 200 and "took survey of W-1" in text_of(r.text)
    again = latest(db, fid)
    assert again.giip_best_bscf == pytest.approx(before.giip_best_bscf, rel=1e-12)
    assert f'id="survey-{target.id}" data-survey-id="{target.id}" data-status="used"' in r.text


def test_exclusion_needs_a_reason_and_changes_nothing_without_one(db, client, fid):
    target = surveys_of(db, fid)[2]
    n_est = latest(db, fid).id
    r = client.post(
        f"/fields/{fid}/surveys/{target.id}/exclusion",
        data={"action": "exclude", "reason": "   ", "csrf_token": client.csrf_token},
    )
    assert r.status_code == 422
    problem = re.search(r'id="survey-problem">(.*?)</div>', r.text, re.S).group(1)
    assert f"Survey {target.id}" in problem and "give a reason for setting this survey aside" in problem
    # the keyboard lands on the field to correct
    assert re.search(rf'id="reason-{target.id}"[^>]*aria-invalid="true"[^>]*autofocus', r.text)
    assert not surveys_of(db, fid)[2].excluded and latest(db, fid).id == n_est
    with db.session() as s:
        assert s.execute(select(func.count(AuditEvent.id))).scalar_one() == 0
    # a survey of another field is not found through this field
    with db.session() as s:
        other = make_field(s, name="Other Ground")
        add_volumetric_history(s, other)
        foreign = s.execute(
            select(PressureSurvey.id).join(Well).where(Well.field_id == other.id).limit(1)
        ).scalar_one()
    r = client.post(f"/fields/{fid}/surveys/{foreign}/exclusion", data={"action": "exclude", "reason": "x"})
    assert r.status_code == 404


def _choices(**over):
    form = {
        "abandonment_pressure": "1000.0",
        "z_method": "dak",
        "overpressure_mode": "off",
        "basis_model": "automatic",
        "basis_reason": "",
        "ce": "",
        "datum_correction": "true",
        "condensate_correction": "true",
        "use_lab_table": "true",
    }
    return {k: v for k, v in (form | over).items() if v is not None}


def test_abandonment_pressure_change_moves_eur_and_is_audited(db, client, fid):
    before = latest(db, fid)
    r = client.post(
        f"/fields/{fid}/choices", data=_choices(abandonment_pressure="1500"), follow_redirects=False
    )
    assert r.status_code == 303 and r.headers["location"].endswith("#choices")
    page = client.get(r.headers["location"]).text
    after = latest(db, fid)
    assert after.eur_bscf < before.eur_bscf  # less gas is produced before a higher abandonment pressure
    assert after.giip_best_bscf == pytest.approx(before.giip_best_bscf, rel=1e-12)
    text = text_of(page)
    assert "EUR at 1,500 psia" in text and re.search(r'id="eur">' + re.escape(fmt(after.eur_bscf)), page)
    assert "Saved: analysis choices: abandonment pressure [psia] 1000 → 1500" in text
    with db.session() as s:
        ev = s.execute(select(AuditEvent).where(AuditEvent.entity_type == "field_settings")).scalar_one()
        assert ev.before == {"abandonment_pressure_psia": 1000.0} and ev.after == {
            "abandonment_pressure_psia": 1500.0
        }
        assert s.get(Field, fid).abandonment_pressure_psia == 1500.0
    # the same form again changes nothing (no audit event, no new estimate)
    r = client.post(f"/fields/{fid}/choices", data=_choices(abandonment_pressure="1500.0"))
    assert r.status_code == 200 and latest(db, fid).id == after.id


@pytest.mark.parametrize(
    ("value", "message"),
    [
        (
            "14",
            "abandonment pressure must lie above the atmosphere (14.7 psia) and below the initial pressure",
        ),
        ("5000", "below the initial pressure (5,000.0 psia)"),
        ("lots", "abandonment pressure: must be a number, got 'lots'"),
        ("", "abandonment pressure: enter a number"),
    ],
)
def test_bad_abandonment_pressure_is_refused_with_the_reason(db, client, fid, value, message):
    n_est = latest(db, fid).id
    r = client.post(
        f"/fields/{fid}/choices", data=_choices(abandonment_pressure=value, z_method="hall_yarborough")
    )
    assert r.status_code == 422
    box = text_of(re.search(r'id="choices-problem">(.*?)</div>', r.text, re.S).group(1))
    assert "Nothing was changed" in box and message in box
    with db.session() as s:
        f = s.get(Field, fid)
        assert f.abandonment_pressure_psia == 1000.0 and f.settings.z_method == "dak"
    assert latest(db, fid).id == n_est


def test_corrections_z_method_and_overpressure_are_audited_together(db, client, fid):
    r = client.post(
        f"/fields/{fid}/choices",
        data=_choices(overpressure_mode="given", ce=""),
    )
    assert r.status_code == 422 and "give ce when the overpressure mode is 'given'" in text_of(r.text)
    r = client.post(
        f"/fields/{fid}/choices",
        data=_choices(
            z_method="hall_yarborough",
            datum_correction=None,
            overpressure_mode="given",
            ce="6e-6",
            anchor_initial="true",
        ),
    )
    assert r.status_code == 200
    with db.session() as s:
        ev = s.execute(select(AuditEvent).where(AuditEvent.entity_type == "field_settings")).scalar_one()
        assert ev.after == {
            "z_method": "hall_yarborough",
            "datum_correction": False,
            "anchor_initial": True,
            "overpressure_mode": "given",
            "effective_compressibility_per_psi": 6e-6,
        }
        assert ev.before["z_method"] == "dak" and ev.before["effective_compressibility_per_psi"] is None
    est = latest(db, fid)
    assert est.detail["pz"]["overpressure_mode"] == "given" and est.detail["pz"]["ce_per_psi"] == 6e-6
    assert "Hall-Yarborough" in est.detail["prepared"]["z_source"]
    assert 'id="uncorrected-comparison"' in r.text  # the plain line is kept beside the corrected one


def test_si_display_on_the_whole_page_and_abandonment_entered_in_kpa(db, client, fid):
    with db.session() as s:
        s.add(TeamSetting(key="display_units", value="si"))
    page = client.get(f"/fields/{fid}").text
    text = text_of(page)
    est = latest(db, fid)
    # the diagnosis quotes the engine's own statements (stored in oilfield units); the rest is SI
    main = page[page.index("<main") : page.index("</main>")]  # the header's unit switch names both
    start, end = main.index('<section aria-labelledby="diag-h"'), main.index('id="estimate-method"')
    ours = text_of(main[:start] + main[end:])
    assert "10⁶ m³ (15 °C, 101.325 kPa)" in ours and "kPa" in ours
    for unit in ("psia", "Bscf", "°F", " ft ", "stb"):
        assert unit not in ours, unit
    assert "Initial pressure 34,474 kPa" in text  # 5000 psia x 6.894757 kPa/psi
    assert "Datum 3,048.0 m" in text  # 10,000 ft x 0.3048
    m3 = 0.3048**3 * (288.15 / ((60 - 32) / 1.8 + 273.15)) * (14.696 * 6.894757 / 101.325)
    assert giip_card(page) == f"{est.giip_best_bscf * 1e9 * m3 / 1e6:,.1f}"
    pz = figure(page, "pz-figure")
    assert pz["layout"]["yaxis"]["title"]["text"] == "p/z (kPa)"
    assert figure(page, "pressure-figure")["layout"]["yaxis"]["title"]["text"].endswith("(kPa)")
    assert 'value="6894.8"' in page  # the form shows the abandonment pressure in kPa
    # resubmitting the shown value changes nothing; 10,342.1 kPa is 1,500.0 psia
    assert (
        client.post(f"/fields/{fid}/choices", data=_choices(abandonment_pressure="6894.8")).status_code == 200
    )
    with db.session() as s:
        assert s.get(Field, fid).abandonment_pressure_psia == 1000.0
    r = client.post(f"/fields/{fid}/choices", data=_choices(abandonment_pressure="10342.1"))
    assert r.status_code == 200
    with db.session() as s:
        assert s.get(Field, fid).abandonment_pressure_psia == pytest.approx(1500.0, abs=0.01)
    r = client.post(f"/fields/{fid}/choices", data=_choices(abandonment_pressure="50000"))
    assert r.status_code == 422 and "below the initial pressure (34,474 kPa)" in text_of(r.text)


def test_viewer_sees_no_forms_and_may_not_change_anything(db, viewer_client, fid):
    page = viewer_client.get(f"/fields/{fid}").text
    assert 'id="choices-form"' not in page and 'id="note-form"' not in page and "Set aside" not in page
    assert 'id="choices-read"' in page and "Abandonment pressure 1,000.0 psia" in text_of(page)
    target = surveys_of(db, fid)[0]
    token = viewer_client.csrf_token
    for url, data in (
        (f"/fields/{fid}/surveys/{target.id}/exclusion", {"action": "exclude", "reason": "no"}),
        (f"/fields/{fid}/choices", _choices(abandonment_pressure="1500")),
        (f"/fields/{fid}/notes", {"body": "hello"}),
    ):
        r = viewer_client.post(url, data=data | {"csrf_token": token})
        assert r.status_code == 403 and "needs permission" in r.text, url
    assert not surveys_of(db, fid)[0].excluded


def test_a_form_without_the_session_token_is_refused(db, app, client, fid):
    from fastapi.testclient import TestClient

    from tests.web.conftest import BASE_URL

    bare = TestClient(app, base_url=BASE_URL, cookies=client.cookies)
    target = surveys_of(db, fid)[0]
    r = bare.post(f"/fields/{fid}/surveys/{target.id}/exclusion", data={"action": "exclude", "reason": "x"})
    assert r.status_code == 403 and not surveys_of(db, fid)[0].excluded


def test_a_users_own_unit_choice_applies_to_the_field_page(db, client, fid):
    from server.db.models import User

    with db.session() as s:
        s.get(User, client.user_id).unit_system = "si"
    page = client.get(f"/fields/{fid}").text
    assert "Initial pressure 34,474 kPa" in text_of(page)
    assert figure(page, "history-figure")["layout"]["yaxis"]["title"]["text"].endswith(
        "(15 °C, 101.325 kPa))"
    )
