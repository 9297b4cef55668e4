"""Hostile values through the HTTP API, the upload page and `tankbook analyse` (issue 18):
a clear answer naming the row and column, never a 500 or an engine error's exit status."""

import json
import subprocess
import sys
from pathlib import Path

import pytest

from tests.factories import make_field
from tests.xlsx_parts import Package, Sheet, row_xml, sheet_xml

HEADER = ["field", "well", "survey_date", "pressure_psia"]
ANALYSE = Path(__file__).resolve().parents[2] / "fixtures" / "analyse"


@pytest.fixture
def upland(db):
    with db.session() as s:
        make_field(s, name="Upland")


def _huge_xlsx() -> bytes:
    return Package(
        [Sheet("Data", sheet_xml([row_xml(1, HEADER), row_xml(2, ["Upland", "W-1", "2017-01-15", 10**400])]))]
    ).build()


def test_api_json_rows_with_huge_numbers_get_422_with_the_cell(db, upland, client):
    rows = [
        {"field": "Upland", "well": "W-1", "survey_date": "2017-01-15", "pressure_psia": 10**400},
        {"field": "Upland", "well": "W-1", "survey_date": 10**400, "pressure_psia": 1200},
    ]
    r = client.post("/api/uploads/surveys/rows", json={"rows": rows})
    assert r.status_code == 422, r.text[:300]
    problems = [(p["row"], p["column"]) for p in r.json()["report"]["problems"]]
    assert problems == [(2, "pressure"), (3, "survey_date")]
    # NaN and Infinity are JSON extensions Python and pydantic accept: still cell errors
    body = '{"rows": [{"field": "Upland", "well": "W-1", "survey_date": "2017-01-15", "pressure_psia": NaN}]}'
    r = client.post("/api/uploads/surveys/rows", content=body, headers={"Content-Type": "application/json"})
    assert r.status_code == 422 and r.json()["report"]["problems"][0]["column"] == "pressure"


def test_upload_page_answers_a_huge_xlsx_number_with_the_cell(db, upland, client):
    data = Package(
        [Sheet("Data", sheet_xml([row_xml(1, HEADER), row_xml(2, ["Upland", "W-1", "2017-01-15", 10**400])]))]
    ).build()
    token = client.get("/upload").text.split('name="csrf_token" value="')[1].split('"')[0]
    r = client.post(
        "/upload", data={"kind": "surveys", "csrf_token": token}, files={"file": ("s.xlsx", data)}
    )
    assert r.status_code == 422 and "beyond ±1.8e308" in r.text


def test_api_file_with_a_huge_xlsx_number_is_a_422(db, upland, client):
    r = client.post("/api/uploads/surveys", files={"file": ("s.xlsx", _huge_xlsx())})
    assert r.status_code == 422
    assert [(p["row"], p["column"]) for p in r.json()["report"]["problems"]] == [(2, "pressure")]


def test_analyse_exits_2_on_a_huge_number(tmp_path):
    surveys = tmp_path / "surveys.xlsx"
    surveys.write_bytes(
        Package(
            [
                Sheet(
                    "Data",
                    sheet_xml([row_xml(1, HEADER), row_xml(2, ["Ashcombe", "A-1", "2011-02-03", 10**400])]),
                )
            ]
        ).build()
    )
    args = [
        "--fields",
        ANALYSE / "fields.csv",
        "--fluids",
        ANALYSE / "fluids.csv",
        "--surveys",
        surveys,
        "--production",
        ANALYSE / "production.csv",
        "--field",
        "Ashcombe",
    ]
    done = subprocess.run(
        [sys.executable, "-m", "server.cli", "analyse", *map(str, args)],
        capture_output=True,
        text=True,
        timeout=120,
        check=False,
    )
    assert done.returncode == 2, done.stderr[-500:]
    out = json.loads(done.stdout)
    problems = out["files"][str(surveys)]["problems"]
    assert (problems[0]["row"], problems[0]["column"]) == (2, "pressure")
    assert "beyond ±1.8e308" in problems[0]["message"]
