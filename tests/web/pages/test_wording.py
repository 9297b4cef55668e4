"""What pages say matches what the app does (issue 16, "words and consistency"): the password
form's rule is the setting, statuses read the same on screen and in the export, counts are
pluralised properly, and each gas volume says which gas it is."""

from __future__ import annotations

import csv
import io
import json
import re

import pytest
from sqlalchemy import select

from server.app import create_app
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.settings import Settings
from tests.factories import add_volumetric_history, field_with_estimate, make_field
from tests.web.conftest import make_user, session_client


def _minlengths(html: str) -> set[str]:
    return set(re.findall(r'id="(?:new|repeat)_password"[^>]*minlength="(\d+)"', html))


@pytest.mark.parametrize("min_length", [12, 16])
def test_password_form_states_the_configured_minimum(db, min_length):
    settings = Settings(
        environment="test",
        secret_key="t" * 40,
        database_url="sqlite://",
        job_runner="inline",
        password_min_length=min_length,
    )
    app = create_app(settings, database=db)
    with session_client(app, db, make_user(db, "engineer", "wording")) as c:
        page = c.get("/account").text
    assert _minlengths(page) == {str(min_length)}  # what the browser enforces
    assert f"At least {min_length} characters" in page  # what the person reads


def _estimated_field(db, name="Upland") -> int:
    return field_with_estimate(db, name)


def _refused_field(db, name="Sparse") -> int:
    """A field with too few surveys for an estimate: every recompute is refused."""
    with db.session() as s:
        f = make_field(s, name=name)
        add_volumetric_history(s, f, survey_every_months=40)
        jobs.enqueue_field_recompute(s, [f.id], reason="test")
        fid = f.id
    runner.drain(db)
    return fid


def test_estimate_status_reads_the_same_on_screen_and_in_the_export(db, client):
    ok, refused = _estimated_field(db), _refused_field(db)
    page = client.get("/").text
    cell = re.compile(r'<tr data-field-id="(\d+)">.*?<td data-col="status">(.*?)</td>', re.S)
    shown = {int(fid): re.sub(r"<[^>]+>", "", text) for fid, text in cell.findall(page)}
    assert shown == {ok: "estimated", refused: "refused"}
    rows = list(csv.DictReader(io.StringIO(client.get("/portfolio.csv").text.lstrip("\ufeff"))))
    exported = {r["field"]: r["status"] for r in rows if r["field"] in ("Upland", "Sparse")}
    assert exported == {"Upland": "estimated", "Sparse": "refused"}
    history = client.get(f"/fields/{ok}").text.split('id="history-table"')[1]
    assert ">estimated</td>" in history and ">ok</td>" not in history


def test_a_field_without_any_estimate_shows_no_empty_history_chart(db, client):
    fid = _refused_field(db)
    page = client.get(f"/fields/{fid}").text
    assert 'id="chart-history"' not in page and 'id="history-figure"' not in page
    assert "no history to draw" in page and "1 stored result below was refused or failed" in page
    assert 'id="chart-history"' in client.get(f"/fields/{_estimated_field(db)}").text


@pytest.mark.parametrize(
    ("n_fields", "expected"), [(1, "1 estimate with a volume"), (2, "2 estimates with a volume")]
)
def test_the_settings_page_counts_stored_volumes_in_plain_english(db, admin_client, n_fields, expected):
    for k in range(n_fields):
        _estimated_field(db, f"Counted {k}")
    page = admin_client.get("/admin/settings").text
    lock = re.search(r'<small id="basis-lock">(.*?)</small>', page, re.S).group(1)
    assert expected in lock and f"{n_fields} volumetric estimate" in lock
    assert "a volumes" not in lock and "month(s)" not in lock


def test_jobs_list_names_the_kind_in_words_and_the_time_zone(db, client):
    _estimated_field(db)
    page = client.get("/jobs").text
    assert "<td>recompute field</td>" in page and "recompute_field" not in page
    assert "Queued (UTC)" in page


def test_upload_check_counts_rows_errors_and_warnings_in_words(db, client):
    _estimated_field(db)
    row = b"field,well,survey_date,pressure_psia\nUpland,W-1,2017-03-05,1200\n"
    page = client.post("/upload", data={"kind": "surveys"}, files={"file": ("s.csv", row, "text/csv")}).text
    summary = re.search(r'<p id="summary">(.*?)</p>', page, re.S).group(1)
    assert summary.startswith("1 row: 0 errors, ") and "(s)" not in summary


def _condensate_field(db, name="Wetmoor", yield_stb_per_mmscf=60.0) -> int:
    """A field producing condensate (50 °API), with the condensate correction on (the default)."""
    from server.db.models import Fluid, ProductionMonth, Well

    with db.session() as s:
        f = make_field(s, name=name)
        add_volumetric_history(s, f)
        s.execute(select(Fluid).where(Fluid.field_id == f.id)).scalar_one().condensate_api = 50.0
        wells = select(Well.id).where(Well.field_id == f.id)
        for p in s.execute(select(ProductionMonth).where(ProductionMonth.well_id.in_(wells))).scalars():
            p.condensate_stb = round(p.gas_mscf / 1e3 * yield_stb_per_mmscf, 1)
        jobs.enqueue_field_recompute(s, [f.id], reason="test")
        fid = f.id
    runner.drain(db)
    return fid


def _text(html: str, element_id: str) -> str:
    m = re.search(rf'id="{element_id}"[^>]*>(.*?)</(?:span|dd|th|p|td)>', html, re.S)
    return re.sub(r"\s+", " ", re.sub(r"<[^>]+>", "", m.group(1))).strip()


def test_the_field_page_says_which_gas_produced_is_and_shows_the_condensate(db, client):
    wet, dry = _condensate_field(db), _estimated_field(db)
    page = client.get(f"/fields/{wet}").text
    assert _text(page, "produced-label") == "Produced to date, wet-gas equivalent"
    parts = _text(page, "produced-parts")
    assert parts.startswith("separator gas ") and " + condensate " in parts and parts.endswith(" stb")
    facts = _text(page, "produced-to-date")
    assert facts.startswith("separator gas ") and "condensate " in facts and "wet-gas equivalent" in facts
    separator = float(re.search(r"separator gas ([\d,.]+) Bscf", facts).group(1).replace(",", ""))
    counted = float(_text(page, "produced").replace(",", ""))
    assert counted > separator  # the condensate's gas equivalent is added
    assert "Gp, wet-gas eq." in page  # the survey table's column
    pz = json.loads(re.search(r'id="pz-figure">(.*?)</script>', page, re.S).group(1))
    assert "wet-gas equivalent" in pz["layout"]["xaxis"]["title"]["text"]
    prod = json.loads(re.search(r'id="production-figure">(.*?)</script>', page, re.S).group(1))
    names = [t["name"] for t in prod["data"]]
    assert any(n.startswith("separator gas rate") for n in names) and any(
        n.startswith("condensate") for n in names
    )
    plain = client.get(f"/fields/{dry}").text
    assert _text(plain, "produced-label") == "Produced to date, separator gas"
    assert 'id="produced-parts"' not in plain


def test_portfolio_and_export_mark_the_wet_gas_equivalent(db, client):
    wet, dry = _condensate_field(db), _estimated_field(db)
    page = client.get("/").text
    cell = re.compile(r'<tr data-field-id="(\d+)">.*?<td class="num" data-col="produced">(.*?)</td>', re.S)
    produced = {int(fid): text for fid, text in cell.findall(page)}
    assert "wet-gas eq." in produced[wet] and "condensate" in produced[wet]
    assert "wet-gas" not in produced[dry]
    rows = {
        r["field"]: r for r in csv.DictReader(io.StringIO(client.get("/portfolio.csv").text.lstrip("\ufeff")))
    }
    w, d = rows["Wetmoor"], rows["Upland"]
    assert w["produced is"] == "wet-gas equivalent" and d["produced is"] == "separator gas"
    sep = next(k for k in w if k.startswith("separator gas produced"))
    made = next(k for k in w if k.startswith("produced ["))
    assert float(w[sep]) < float(w[made]) and float(d[sep]) == pytest.approx(float(d[made]), abs=1e-3)
    assert float(w[next(k for k in w if k.startswith("condensate produced"))]) > 0


def test_data_pages_name_separator_gas_and_show_condensate(db, client):
    wet = _condensate_field(db)
    wells = client.get(f"/fields/{wet}/wells").text
    assert "Cumulative separator gas" in wells and "Cumulative condensate" in wells
    assert _text(wells, "wells-total-condensate") not in ("", "0", "–")
    api = client.get(f"/api/fields/{wet}/wells").json()
    assert sum(w["cumulative_condensate_stb"] for w in api["wells"]) > 0
    production = client.get(f"/fields/{wet}/production").text
    assert "Separator gas<br>" in production
    assert _text(production, "production-totals").startswith("Matching months in total: separator gas ")


def test_the_account_page_does_not_repeat_a_name(db, login_as):
    from server.db.models import User

    dana = login_as("engineer", username="dana")

    def name(full: str) -> str:
        with db.session() as s:
            s.execute(select(User).where(User.username == "dana")).scalar_one().display_name = full
        return _text(dana.get("/account").text, "who-am-i")

    assert name("").startswith("dana, role engineer")  # no full name: the user name once
    assert name("Dana Quill").startswith("Dana Quill (dana), role engineer")


def test_the_audit_trail_names_what_changed_in_words(db, client, admin_client):
    fid = _estimated_field(db)
    with db.session() as s:
        from server.db.models import PressureSurvey, Well

        sid = (
            s.execute(
                select(PressureSurvey.id).join(Well).where(Well.field_id == fid).order_by(PressureSurvey.id)
            )
            .scalars()
            .first()
        )
    client.post(f"/fields/{fid}/surveys/{sid}/exclusion", data={"action": "exclude", "reason": "tool drift"})
    field_page = client.get(f"/fields/{fid}").text
    assert f"exclude pressure survey {sid}" in field_page and "pressure_survey" not in field_page
    admin_client.post(f"/admin/users/{client.user_id}/reset-password")
    audit = admin_client.get("/admin/audit").text
    assert f"set the password of user {client.user_id}" in audit and "password user" not in audit
