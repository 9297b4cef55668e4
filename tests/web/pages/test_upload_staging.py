"""What the upload page keeps between the check and the confirmation (issue 18, point 8): only a
file that can be committed; a rejected file keeps only its problem report; staging is capped per
user and in total; expired rows are purged at start-up and on every staging write."""

import datetime as dt
import re

import pytest
from fastapi.testclient import TestClient
from sqlalchemy import func, select

from server.app import create_app
from server.db.base import utcnow
from server.db.models import StagedUpload
from tests.factories import field_with_estimate
from tests.web.conftest import make_user, session_client

HEADER = b"field,well,survey_date,pressure_psia\n"


def _token(client):
    return re.search(r'name="csrf_token" value="([^"]+)"', client.get("/upload").text).group(1)


def _check(client, data, name="s.csv"):
    return client.post(
        "/upload", data={"kind": "surveys", "csrf_token": _token(client)}, files={"file": (name, data)}
    )


def _staged(page):
    m = re.search(r'name="token" value="([^"]+)"', page.text)
    return m.group(1) if m else None


def _held(db):
    with db.session() as s:
        rows = s.execute(select(StagedUpload.content, StagedUpload.size_bytes)).all()
    return [(c, n) for c, n in rows]


def _survey_file(day: int, padding: int = 0) -> bytes:
    """One new survey (a committable file), padded with blank lines to a given size."""
    return HEADER + f"Upland,W-2,2017-01-{day:02d},1500\n".encode() + b"\n" * padding


@pytest.fixture
def upland(db):
    field_with_estimate(db)


def test_a_rejected_file_keeps_its_report_not_its_bytes(db, upland, client):
    bad = HEADER + b"Upland,W-2,2017-01-15,abc\n" + b"\n" * 500_000  # 0.5 MB with one bad row
    for _ in range(5):
        r = _check(client, bad)
        assert r.status_code == 422
    held = _held(db)
    assert {c for c, _ in held} == {"report"} and len(held) == 5
    assert sum(n for _, n in held) < 5 * 2_000  # five small reports, not five files (before: 5 x 0.5 MB)
    link = re.search(r'href="([^"]*/upload/report/[^"]+\.csv)"', r.text).group(1)
    body = client.get(link).content.decode("utf-8-sig")
    assert "is not a number" in body and "abc" in body


def test_a_file_that_changes_nothing_keeps_nothing(db, upland, client):
    data = _survey_file(15)
    assert (
        client.post("/api/uploads/surveys", files={"file": ("s.csv", data)}).json()["status"] == "committed"
    )
    r = _check(client, data)
    assert r.status_code == 200 and _staged(r) is None
    assert _held(db) == []


def test_a_users_oldest_previews_make_room_for_the_newest(db, upland, settings, app):
    settings.staging_max_bytes_per_user = 2_500
    client = session_client(app, db, make_user(db, "engineer", "quota-user"))
    tokens = [_staged(_check(client, _survey_file(day, padding=1_000))) for day in (10, 11, 12)]
    assert all(tokens)
    with db.session() as s:
        kept = set(s.execute(select(StagedUpload.id)).scalars())
    assert kept == set(tokens[1:])  # two of ~1 KB fit in 2.5 KB; the oldest went
    r = client.post("/upload/commit", data={"csrf_token": _token(client), "token": tokens[0]})
    assert r.status_code == 410
    r = client.post("/upload/commit", data={"csrf_token": _token(client), "token": tokens[2]})
    assert r.status_code == 200 and "Stored upload" in r.text


def test_staging_beyond_the_total_cap_is_refused_and_the_check_still_shown(db, upland, settings, app):
    settings.staging_max_bytes_total = 1_500
    first = session_client(app, db, make_user(db, "engineer", "first-user"))
    second = session_client(app, db, make_user(db, "engineer", "second-user"))
    assert _staged(_check(first, _survey_file(10, padding=1_000)))
    r = _check(second, _survey_file(11, padding=1_000))
    assert r.status_code == 200 and "Would add 1" in r.text  # the check is shown
    assert _staged(r) is None and "cannot be kept" in r.text and "Store these rows" not in r.text
    with db.session() as s:
        assert s.execute(select(func.count()).select_from(StagedUpload)).scalar_one() == 1


def test_expired_staging_is_purged_at_start_up_and_on_each_staging_write(db, upland, settings, client):
    with db.session() as s:
        for token in ("old-1", "old-2"):
            s.add(
                StagedUpload(
                    id=token,
                    kind="surveys",
                    filename="x.csv",
                    data=b"x" * 100,
                    size_bytes=100,
                    sha256="0" * 64,
                    options={},
                    replace=False,
                    digest="",
                    created_by_id=None,
                    expires_at=utcnow() - dt.timedelta(minutes=1),
                )
            )
    with TestClient(create_app(settings, database=db)):  # the app's start-up
        pass
    with db.session() as s:
        assert s.execute(select(func.count()).select_from(StagedUpload)).scalar_one() == 0
        s.add(
            StagedUpload(
                id="old-3",
                kind="surveys",
                filename="x.csv",
                data=b"x",
                size_bytes=1,
                sha256="0" * 64,
                options={},
                replace=False,
                digest="",
                created_by_id=None,
                expires_at=utcnow() - dt.timedelta(minutes=1),
            )
        )
    assert _staged(_check(client, _survey_file(20)))
    with db.session() as s:
        assert s.get(StagedUpload, "old-3") is None
