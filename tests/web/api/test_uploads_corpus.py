"""The hostile-file corpus through the HTTP API: a clean 422 for each, the database unchanged."""

import pytest

from tests.factories import make_field
from tests.services.ingest.test_corpus import CASES, CORPUS, snapshot


@pytest.fixture
def upland(db):
    with db.session() as s:
        make_field(s, name="Upland")


def test_every_corpus_file_gets_a_clean_answer_from_the_api(db, upland, client):
    with db.session() as s:
        before = snapshot(s)
    for case in CASES:
        data = (CORPUS / "files" / case["file"]).read_bytes()
        r = client.post(f"/api/uploads/{case['kind']}", files={"file": (case["file"], data)})
        assert r.status_code == 422, (case["file"], r.status_code, r.text[:300])
        body = r.json()
        assert body["status"] == "rejected" and body["upload_id"] is None
        # the API checks against today's date, so "in the future" cases still fail for their own reason
        assert any(case["expected"] in p["message"] for p in body["report"]["problems"]), case["file"]
    with db.session() as s:
        assert snapshot(s) == before
