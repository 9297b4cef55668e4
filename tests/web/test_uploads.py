"""Uploads through the pages (check → preview → confirm) and the JSON API; templates; jobs."""

import datetime as dt
import io
import re

import openpyxl
import pytest
from sqlalchemy import func, select

from server.app import create_app
from server.db.models import Estimate, Field, PressureSurvey, StagedUpload
from server.services.ingest.kinds import UPLOAD_KINDS
from server.settings import Settings
from tests.factories import field_with_estimate, make_field
from tests.web.conftest import make_user, session_client

SURVEY = b"field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,1500\n"


def _seed(db):
    return field_with_estimate(db)


def _token(client):
    return re.search(r'name="csrf_token" value="([^"]+)"', client.get("/upload").text).group(1)


def _check(client, data, kind="surveys", name="s.csv", **form):
    return client.post(
        "/upload",
        data={"kind": kind, "csrf_token": _token(client), **form},
        files={"file": (name, data, "text/csv")},
    )


def _staged(page):
    m = re.search(r'name="token" value="([^"]+)"', page.text)
    return m.group(1) if m else None


def _commit(client, staged, **form):
    return client.post("/upload/commit", data={"csrf_token": _token(client), "token": staged, **form})


def test_check_shows_how_the_file_was_read_then_commit_stores_and_recomputes(db, client):
    fid = _seed(db)
    r = _check(client, b"Field;Well;Survey Date;Pressure (barg)\nUpland;W-2;2017-01-15;100,5\n")
    assert r.status_code == 200 and "Would add 1" in r.text
    assert "semicolon-separated" in r.text and "decimal comma" in r.text
    assert "bar gauge, converted to psia" in r.text  # the preview says how the column was read
    assert "Upland / W-2 / 2017-01-15" in r.text  # what would change
    staged = _staged(r)
    assert "staged" not in r.text  # the bytes stay on the server, the page has a token only
    r = _commit(client, staged)
    assert r.status_code == 200 and "Stored upload" in r.text
    with db.session() as s:
        assert (
            s.execute(select(func.count()).select_from(Estimate).where(Estimate.field_id == fid)).scalar()
            == 2
        )
        assert s.get(StagedUpload, staged) is None
    assert _commit(client, staged).status_code == 410  # a token stores once


def test_errors_block_the_file_and_the_full_report_downloads_as_safe_csv(db, client):
    _seed(db)
    bad = b"field,well,survey_date,pressure_psia\nUpland,=HYPERLINK(1),2017-01-15,abc\n"
    r = _check(client, bad)
    assert r.status_code == 422
    assert "is not a number" in r.text and "would run it as a formula" in r.text
    assert "Store these rows" not in r.text
    link = re.search(r'href="([^"]*/upload/report/[^"]+\.csv)"', r.text).group(1)
    report = client.get(link)
    assert report.status_code == 200 and report.headers["content-type"].startswith("text/csv")
    assert "'=HYPERLINK(1)" in report.content.decode("utf-8-sig")  # neutralised on export


def test_warnings_need_the_checkbox(db, client):
    _seed(db)
    r = _check(client, b"field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,5600\n")
    assert r.status_code == 200 and "I have read the 1 warning(s)" in r.text
    staged = _staged(r)
    assert _commit(client, staged).status_code == 409
    assert _commit(client, staged, accept_warnings="true").status_code == 200


def test_a_preview_is_not_committed_after_the_data_changed(db, client):
    _seed(db)
    staged = _staged(_check(client, SURVEY))
    assert (
        client.post("/api/uploads/surveys", files={"file": ("s.csv", SURVEY)}).json()["status"] == "committed"
    )
    r = _commit(client, staged)
    assert r.status_code == 409 and "changed after your check" in r.text
    with db.session() as s:
        assert (
            s.execute(
                select(func.count())
                .select_from(PressureSurvey)
                .where(PressureSurvey.survey_date == dt.date(2017, 1, 15))
            ).scalar()
            == 1
        )


@pytest.mark.parametrize("ext", ["csv", "xlsx"])
def test_templates_load_a_whole_example_portfolio(db, client, ext):
    for kind in UPLOAD_KINDS:
        t = client.get(f"/upload/templates/{kind}.{ext}")
        assert t.status_code == 200
        r = client.post(f"/api/uploads/{kind}", files={"file": (f"{kind}.{ext}", t.content)})
        assert r.status_code == 200 and r.json()["status"] == "committed", (kind, r.json()["report"])
    with db.session() as s:
        f = s.execute(select(Field).where(Field.name == "Example Field")).scalar_one()
        assert len(f.wells) == 2 and f.fluid.lab_points and f.volumetrics
    assert client.get("/upload/templates/nothing.csv").status_code == 404


def test_xlsx_template_dates_are_real_dates():
    from server.services.ingest.kinds import file_kind
    from server.services.ingest.templates import template_xlsx

    wb = openpyxl.load_workbook(io.BytesIO(template_xlsx(file_kind("surveys"))), read_only=True)
    row = next(wb.worksheets[0].iter_rows(min_row=2, values_only=True))
    wb.close()
    assert row[2].year == 2019


def test_api_upload_reports_rows_and_writes_nothing_on_error(db, client):
    _seed(db)
    bad = b"field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,-3\nUpland,W-2,2017-02-30,100\n"
    r = client.post("/api/uploads/surveys", files={"file": ("bad.csv", bad, "text/csv")})
    assert r.status_code == 422
    body = r.json()
    assert body["status"] == "rejected" and body["upload_id"] is None
    assert [(p["row"], p["column"]) for p in body["report"]["problems"]] == [
        (2, "pressure"),
        (3, "survey_date"),
    ]


def test_api_dry_run_confirmation_and_units_from_the_query(db, client):
    _seed(db)
    data = b"field,well,survey_date,pressure\nUpland,W-2,2017-01-15,5600\n"
    r = client.post("/api/uploads/surveys?pressure_unit=psia&dry_run=true", files={"file": ("s.csv", data)})
    assert r.status_code == 200 and r.json()["status"] == "dry_run"
    assert r.json()["report"]["columns"][3]["unit_from"] == "form"
    r = client.post("/api/uploads/surveys?pressure_unit=psia", files={"file": ("s.csv", data)})
    assert r.status_code == 409 and r.json()["status"] == "needs_confirmation"
    r = client.post(
        "/api/uploads/surveys?pressure_unit=psia&accept_warnings=true", files={"file": ("s.csv", data)}
    )
    assert r.status_code == 200 and r.json()["status"] == "committed" and r.json()["job_ids"]
    assert client.post("/api/uploads/nothing", files={"file": ("s.csv", data)}).status_code == 404
    assert (
        client.post("/api/uploads/surveys?pressure_unit=torr", files={"file": ("s.csv", data)}).status_code
        == 422
    )


def test_api_json_rows_upload(db, client):
    _seed(db)
    rows = {"rows": [{"field": "Upland", "well": "W-2", "survey_date": "2017-01-15", "pressure_psia": 1500}]}
    r = client.post("/api/uploads/surveys/rows", json=rows)
    assert r.status_code == 200, r.text
    assert r.json()["status"] == "committed"
    assert client.post("/api/uploads/surveys/rows", json=rows).json()["status"] == "unchanged"
    bad = {"rows": [{"field": "Upland", "well": "W-2", "survey_date": "2017-01-16", "pressure_psia": True}]}
    r = client.post("/api/uploads/surveys/rows", json=bad)
    assert (
        r.status_code == 422 and r.json()["report"]["problems"][0]["message"] == "is TRUE/FALSE, not a number"
    )


def _small_limit_client(db):
    settings = Settings(
        environment="test",
        secret_key="t" * 40,
        database_url="sqlite://",
        job_runner="inline",
        max_upload_bytes=1000,
    )
    return session_client(create_app(settings, database=db), db, make_user(db, "engineer", "small-limit"))


def test_too_large_uploads_get_413_with_a_message(db):
    with _small_limit_client(db) as c:
        big = b"x" * 5000
        r = c.post("/api/uploads/surveys", files={"file": ("big.csv", big)})
        assert r.status_code == 413 and "larger than the limit of 1,000 bytes" in r.json()["detail"]
        token = re.search(r'name="csrf_token" value="([^"]+)"', c.get("/upload").text).group(1)
        r = c.post("/upload", data={"kind": "surveys", "csrf_token": token}, files={"file": ("big.csv", big)})
        assert r.status_code == 413 and "larger than the limit" in r.text and "<html" in r.text


def test_portfolio_recompute_job_with_progress(db, client):
    _seed(db)
    token = _token(client)
    r = client.post("/jobs/recompute", data={"csrf_token": token}, follow_redirects=False)
    assert r.status_code == 303
    page = client.get(r.headers["location"])
    assert page.status_code == 200 and '<progress id="job-progress"' in page.text and "jobs.js" in page.text
    job_id = int(r.headers["location"].rsplit("/", 1)[1])
    state = client.get(f"/api/jobs/{job_id}").json()
    assert state["status"] == "done" and state["progress_done"] == state["progress_total"] >= 1
    with client.stream("GET", f"/api/jobs/{job_id}/events") as events:
        text = "".join(events.iter_text())
    assert "event: progress" in text and '"status":"done"' in text.replace(" ", "")
    assert client.get("/api/jobs/999999").status_code == 404
    assert client.get("/api/jobs/999999/events").status_code == 404
    r = client.post("/api/jobs/recompute-portfolio")
    assert r.status_code == 202 and r.json()["kind"] == "recompute_portfolio"


def test_chunked_bodies_over_the_limit_get_413(db):
    def chunks():
        for _ in range(10):
            yield b'{"rows": [' + b" " * 500

    with _small_limit_client(db) as c:
        r = c.post(
            "/api/uploads/surveys/rows", content=chunks(), headers={"content-type": "application/json"}
        )
        assert r.status_code == 413 and "larger than the limit" in r.json()["detail"]


def test_bad_query_parameters_are_a_described_422(client):
    r = client.post("/api/uploads/surveys?delimiter=pipe", files={"file": ("s.csv", SURVEY)})
    assert r.status_code == 422 and r.json()["detail"][0]["loc"][-1] == "delimiter"


def test_openapi_describes_every_upload_status(client):
    spec = client.get("/openapi.json").json()
    op = spec["paths"]["/api/uploads/{kind}"]["post"]
    assert set(op["responses"]) >= {"200", "404", "409", "413", "422"}
    assert "/api/jobs/{job_id}/events" in spec["paths"]


def test_uploads_stay_within_the_users_assets(db, login_as):
    _seed(db)
    with db.session() as s:
        other = make_field(s, name="Elsewhere", asset="Other Asset")
        other_asset = other.asset_id
    limited = login_as("engineer", assets=[other_asset], username="limited")
    r = limited.post("/api/uploads/surveys", files={"file": ("s.csv", SURVEY)})
    assert r.status_code == 422
    assert "unknown field (or not in your assets)" in r.json()["report"]["problems"][0]["message"]
    fields = (
        "field,asset,datum_depth_ft,reservoir_temperature_degF,initial_pressure_psia,abandonment_pressure_psia\n"
        "Newfield,Test Asset,9000,190,4000,500\nUpland,Other Asset,9000,190,4000,500\n"
    )
    r = limited.post("/api/uploads/fields", files={"file": ("f.csv", fields.encode())})
    messages = [p["message"] for p in r.json()["report"]["problems"]]
    assert any("is not one of your assets" in m for m in messages)
    assert any("a field of this name exists outside your assets" in m for m in messages)


def test_viewers_cannot_upload_or_recompute(db, viewer_client):
    assert viewer_client.post("/api/uploads/surveys", files={"file": ("s.csv", SURVEY)}).status_code == 403
    assert viewer_client.post("/api/jobs/recompute-portfolio").status_code == 403
    assert viewer_client.get("/jobs").status_code == 200
