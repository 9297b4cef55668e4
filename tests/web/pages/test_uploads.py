"""Uploads through the pages (check → preview → confirm) and the JSON API; templates; jobs."""

import datetime as dt
import io
import json
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
    assert r.status_code == 200 and "I have read the 1 warning and" in r.text
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


def test_fluid_gravities_round_trip_through_the_json_api(db, client):
    # Issue 12, point 7: the well-stream gravity alone, sent as JSON rows, is stored in its own
    # column (the separator gravity empty) and read back by the fluid twin, which says z uses it.
    with db.session() as s:
        f = make_field(s, name="Upland")
        fid = f.id
    rows = [{"field": "Upland", "gas_gravity": None, "wellstream_gravity": 0.93, "condensate_api": 50}]
    r = client.post("/api/uploads/fluids/rows", json={"rows": rows}, params={"replace": "true"})
    assert r.status_code == 200 and r.json()["status"] == "committed", r.json()
    fluid = client.get(f"/api/fields/{fid}/fluid").json()
    assert (fluid["gas_gravity"], fluid["wellstream_gravity"]) == (None, 0.93)
    assert fluid["z_gravity_source"] == "given" and fluid["z_gas_gravity"] == 0.93
    assert 'id="wellstream-gravity">0.9300 as given' in client.get(f"/fields/{fid}/fluid").text
    # neither gravity: a 422 naming the row and the column, nothing changed
    rows = [{"field": "Upland", "gas_gravity": None, "wellstream_gravity": None}]
    r = client.post("/api/uploads/fluids/rows", json={"rows": rows}, params={"replace": "true"})
    assert r.status_code == 422
    (problem,) = r.json()["report"]["problems"]
    assert (problem["row"], problem["column"]) == (2, "gas_gravity")
    assert client.get(f"/api/fields/{fid}/fluid").json()["wellstream_gravity"] == 0.93


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
    assert not any("outside your assets" in m for m in messages)  # no oracle (issue 18, point 15)


def _fields_file(name: str, asset: str) -> bytes:
    return (
        "field,asset,datum_depth_ft,reservoir_temperature_degF,initial_pressure_psia,abandonment_pressure_psia\n"
        f"{name},{asset},9000,190,4000,500\n"
    ).encode()


def test_a_field_of_another_asset_reads_as_unknown_in_a_fields_file(db, login_as):
    """Issue 18, point 15: the check of a fields file naming another asset's field answers as
    for a name nobody uses (a new field); only storing it is refused, as for any taken name."""
    _seed(db)  # field Upland in Test Asset
    with db.session() as s:
        mine = make_field(s, name="Elsewhere", asset="Other Asset").asset_id
    limited = login_as("engineer", assets=[mine], username="limited")

    def check(name):
        r = limited.post(
            "/api/uploads/fields?dry_run=true", files={"file": ("f.csv", _fields_file(name, "Other Asset"))}
        )
        text = json.dumps(r.json()).replace(name, "NAME")
        return r.status_code, re.sub(r"[0-9a-f]{64}", "<hash of the file>", text)

    assert check("Upland") == check("Brandnew")  # byte for byte, but for the name
    r = limited.post("/api/uploads/fields", files={"file": ("f.csv", _fields_file("Upland", "Other Asset"))})
    assert r.status_code == 422
    (problem,) = r.json()["report"]["problems"]
    assert "cannot be given to a new field" in problem["message"] and "outside" not in problem["message"]
    with db.session() as s:
        assert (
            s.execute(select(func.count()).select_from(Field).where(Field.name == "Upland")).scalar_one() == 1
        )


def test_viewers_cannot_upload_or_recompute(db, viewer_client):
    assert viewer_client.post("/api/uploads/surveys", files={"file": ("s.csv", SURVEY)}).status_code == 403
    assert viewer_client.post("/api/jobs/recompute-portfolio").status_code == 403
    assert viewer_client.get("/jobs").status_code == 200


# ── Issue 18, point 17: one file part, a cleaned base name, a bounded header line ──


def _raw_multipart(parts: list[tuple[bytes, bytes]], **fields: str) -> tuple[bytes, str]:
    """A multipart body of ``file`` parts (filename, content) and text fields, byte by byte."""
    boundary = "tbboundary18"
    body = b""
    for name, value in fields.items():
        body += f'--{boundary}\r\nContent-Disposition: form-data; name="{name}"\r\n\r\n{value}\r\n'.encode()
    for filename, content in parts:
        body += (
            f"--{boundary}\r\n".encode()
            + b'Content-Disposition: form-data; name="file"; filename="'
            + filename
            + b'"\r\nContent-Type: text/csv\r\n\r\n'
            + content
            + b"\r\n"
        )
    return body + f"--{boundary}--\r\n".encode(), f"multipart/form-data; boundary={boundary}"


def test_two_file_parts_are_refused_and_nothing_is_stored(db, client):
    _seed(db)

    def surveys():
        with db.session() as s:
            return s.execute(select(func.count()).select_from(PressureSurvey)).scalar_one()

    before = surveys()
    body, ctype = _raw_multipart([(b"a.csv", SURVEY), (b"b.csv", SURVEY)])
    r = client.post("/api/uploads/surveys", content=body, headers={"Content-Type": ctype})
    assert r.status_code == 422 and "exactly one file part" in r.text
    assert surveys() == before
    body, ctype = _raw_multipart([(b"a.csv", SURVEY), (b"b.csv", SURVEY)], kind="surveys")
    r = client.post("/upload", content=body, headers={"Content-Type": ctype})
    assert r.status_code == 422 and "exactly one file part" in r.text


def test_a_file_is_kept_under_its_cleaned_base_name(db, client):
    from server.db.models import Upload
    from server.web.limits import clean_filename

    assert clean_filename("../../etc/passwd") == "passwd"
    assert clean_filename("C:\\Users\\dana\\surveys 2024.csv") == "surveys 2024.csv"
    assert clean_filename("a/b/sur\r\nveys\u2028.csv") == "sur veys .csv"
    assert clean_filename("../..") == "upload" and clean_filename(None) == "upload"
    _seed(db)
    body, ctype = _raw_multipart([(b"..\\..\\secret/../surveys\tMarch.csv", SURVEY)])
    r = client.post("/api/uploads/surveys", content=body, headers={"Content-Type": ctype})
    assert r.status_code == 200, r.text
    with db.session() as s:
        assert s.execute(select(Upload.filename)).scalar_one() == "surveys March.csv"


def test_a_header_line_over_128_kib_is_refused_as_too_many_columns(db, client):
    header = ",".join(f"column_{i}" for i in range(20_000)).encode()
    assert len(header) > 128 * 1024
    r = client.post("/api/uploads/surveys?dry_run=true", files={"file": ("wide.csv", header + b"\n1\n")})
    assert r.status_code == 422
    (problem,) = r.json()["report"]["problems"]
    assert "too many columns" in problem["message"]
    one_name = b"x" * (200 * 1024)  # one enormous column name: the same words, not csv's own error
    r = client.post("/api/uploads/surveys?dry_run=true", files={"file": ("wide.csv", one_name + b"\n1\n")})
    assert r.status_code == 422 and "too many columns" in r.json()["report"]["problems"][0]["message"]


def test_an_empty_date_to_means_not_given_in_the_schema_and_the_handler(db, client):
    fid = field_with_estimate(db)
    r = client.get(f"/api/fields/{fid}/surveys?date_to=&date_from=")
    assert r.status_code == 200
    params = client.get("/openapi.json").json()["paths"]["/api/fields/{field_id}/surveys"]["get"][
        "parameters"
    ]
    date_to = next(p for p in params if p["name"] == "date_to")["schema"]
    assert {"const": "", "type": "string"} in date_to["anyOf"] or {"enum": [""], "type": "string"} in date_to[
        "anyOf"
    ]
