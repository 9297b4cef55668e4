"""Survey and production uploads: every bad row reported, nothing half-written."""

import datetime as dt

import pytest
from sqlalchemy import func, select

from server.db.models import Estimate, Job, PressureSurvey, ProductionMonth, Upload
from server.services import jobs
from server.services.ingest.report import UploadRejectedError
from server.services.ingest.service import commit_upload, validate_upload
from tests.factories import add_volumetric_history, make_field

TODAY = dt.date(2026, 12, 1)


def _counts(session):
    return tuple(
        session.execute(select(func.count()).select_from(m)).scalar_one()
        for m in (PressureSurvey, ProductionMonth, Upload, Job, Estimate)
    )


def _problems(plan):
    return [(p.row, p.column, p.message) for p in plan.report.errors]


@pytest.fixture
def field(session):
    f = make_field(session, name="Upland")
    add_volumetric_history(session, f)
    return f


MALFORMED = {
    "missing column": (
        "field,well,survey_date\nUpland,W-1,2017-01-15\n",
        [(1, "pressure_psia or pressure_psig", "exactly one pressure column is required, found 0")],
    ),
    "text in a number": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2017-01-15,12OO\n",
        [(2, "pressure_psia", "is not a number")],
    ),
    "impossible date": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2017-02-30,1200\n",
        [(2, "survey_date", "is not a real calendar date")],
    ),
    "negative pressure": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2017-01-15,-20\n",
        [(2, "pressure_psia", "absolute pressure must be positive")],
    ),
    "duplicate row": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2017-01-15,1200\nUpland,W-1,2017-01-15,1210\n",
        [(3, None, "duplicates row 2 (field, well, survey_date)")],
    ),
    "unknown well": (
        "field,well,survey_date,pressure_psia\nUpland,W-9,2017-01-15,1200\n",
        [(2, "well", "unknown well in field 'Upland'")],
    ),
    "future date": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2027-01-15,1200\n",
        [(2, "survey_date", "is in the future")],
    ),
}


@pytest.mark.parametrize("case", sorted(MALFORMED))
def test_malformed_survey_files_are_reported_and_change_nothing(session, field, case):
    text, expected = MALFORMED[case]
    before = _counts(session)
    plan = validate_upload(session, kind="surveys", data=text.encode(), filename=f"{case}.csv", today=TODAY)
    assert _problems(plan) == expected
    with pytest.raises(UploadRejectedError):
        commit_upload(session, plan)
    assert _counts(session) == before


def test_every_bad_row_is_listed(session, field):
    text = (
        "field,well,survey_date,pressure_psia\n"
        "Upland,W-1,2017-01-15,abc\nUpland,W-1,2017-13-01,1200\nUpland,W-1,2017-03-01,-1\n"
    )
    plan = validate_upload(session, kind="surveys", data=text.encode(), today=TODAY)
    assert [p[0] for p in _problems(plan)] == [2, 3, 4]


def test_good_survey_file_is_stored_and_recomputed(db, session, field):
    jobs.enqueue_field_recompute(session, [field.id], reason="test")
    session.commit()
    assert jobs.drain(db) == 1
    first = session.execute(select(Estimate).where(Estimate.field_id == field.id)).scalars().all()
    assert len(first) == 1 and first[0].status == "ok"
    text = "field,well,survey_date,pressure_psig\nUpland,W-2,2017-01-15,1500\n"
    plan = validate_upload(session, kind="surveys", data=text.encode(), today=TODAY, atmosphere_psia=14.7)
    assert plan.report.ok and len(plan.inserts) == 1
    upload = commit_upload(session, plan)
    session.commit()
    stored = session.execute(select(PressureSurvey).where(PressureSurvey.upload_id == upload.id)).scalar_one()
    assert stored.pressure_psia == pytest.approx(1514.7)
    assert jobs.drain(db) == 1
    ests = (
        session.execute(select(Estimate).where(Estimate.field_id == field.id).order_by(Estimate.id))
        .scalars()
        .all()
    )
    assert len(ests) == 2
    assert ests[1].inputs_fingerprint != ests[0].inputs_fingerprint
    assert ests[1].engine_version


def test_same_file_twice_changes_nothing(db, session, field):
    text = b"field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,1500\n"
    commit_upload(session, validate_upload(session, kind="surveys", data=text, today=TODAY))
    session.commit()
    jobs.drain(db)
    before = _counts(session)
    plan = validate_upload(session, kind="surveys", data=text, today=TODAY)
    assert plan.report.ok and plan.unchanged == 1 and not plan.inserts
    assert commit_upload(session, plan) is None
    assert _counts(session) == before


def test_conflicting_value_needs_replace_and_keeps_history(session, field):
    from server.db.models import AuditEvent

    text = b"field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,1500\n"
    commit_upload(session, validate_upload(session, kind="surveys", data=text, today=TODAY))
    corrected = b"field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,1525\n"
    plan = validate_upload(session, kind="surveys", data=corrected, today=TODAY)
    assert not plan.report.ok and "replace existing" in plan.report.errors[0].message
    plan = validate_upload(session, kind="surveys", data=corrected, today=TODAY, replace=True)
    commit_upload(session, plan, actor="tester")
    event = session.execute(select(AuditEvent).where(AuditEvent.action == "replace")).scalar_one()
    assert event.before["pressure_psia"] == 1500 and event.after["pressure_psia"] == 1525
    assert event.actor == "tester"


def test_survey_above_initial_pressure_is_a_warning(session, field):
    text = b"field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,5600\n"
    plan = validate_upload(session, kind="surveys", data=text, today=TODAY)
    assert plan.report.ok and len(plan.report.warnings) == 1
    with pytest.raises(UploadRejectedError):
        commit_upload(session, plan)
    assert commit_upload(session, plan, accept_warnings=True) is not None


def test_production_upload(session, field):
    text = (
        b"field,well,month,gas_mscf,condensate_stb,water_stb\n"
        b"Upland,W-2,2017-01,10000,5,1\nUpland,W-2,2017-02,-3,0,0\n"
    )
    plan = validate_upload(session, kind="production", data=text, today=TODAY)
    assert _problems(plan) == [(3, "gas_mscf", "volumes cannot be negative")]
    ok = b"field,well,month,gas_mscf\nUpland,W-2,2017-01,10000\n"
    plan = validate_upload(session, kind="production", data=ok, today=TODAY)
    assert plan.report.ok
    assert commit_upload(session, plan).rows_inserted == 1
