"""The hostile-file corpus: each file is refused with its expected message and leaves the
database exactly as it was, on both databases (the HTTP API: tests/web/api/test_uploads_corpus.py)."""

import datetime as dt
import json
from pathlib import Path

import pytest
import sqlalchemy as sa

from server.db.base import Base
from server.services.ingest.service import store_upload
from tests.factories import make_field

CORPUS = Path(__file__).resolve().parents[2] / "fixtures" / "uploads"
CASES = json.loads((CORPUS / "expected.json").read_text())
TODAY = dt.date(2026, 12, 1)


def snapshot(session) -> dict:
    """Every row of every table (ordered), to compare before and after."""
    out = {}
    for table in Base.metadata.sorted_tables:
        rows = session.execute(sa.select(table).order_by(*table.primary_key.columns)).all()
        out[table.name] = [tuple(r) for r in rows]
    return out


@pytest.fixture
def upland(db):
    with db.session() as s:
        make_field(s, name="Upland")


def test_the_corpus_is_large_enough():
    assert len(CASES) >= 30
    assert sum(c["file"].endswith(".xlsx") for c in CASES) >= 10


@pytest.mark.parametrize("case", CASES, ids=[c["file"] for c in CASES])
def test_hostile_file_is_refused_and_changes_nothing(db, upland, case):
    data = (CORPUS / "files" / case["file"]).read_bytes()
    with db.session() as s:
        before = snapshot(s)
    result = store_upload(db, kind=case["kind"], data=data, filename=case["file"], today=TODAY)
    assert result.status == "rejected"
    messages = [p.message for p in result.plan.report.errors]
    assert any(case["expected"] in m for m in messages), messages
    with db.session() as s:
        assert snapshot(s) == before
