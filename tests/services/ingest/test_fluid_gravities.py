"""Fluid gravities as teams have them (issue 12, point 7): separator gas, well stream, or both,
through uploads (CSV and JSON rows), the stored row, the engine inputs and the templates."""

import datetime as dt

import pytest
from sqlalchemy import select

from server.db.models import AuditEvent, Fluid
from server.services.audit import Actor
from server.services.ingest.kinds import file_kind
from server.services.ingest.service import check_upload, store_upload
from server.services.ingest.templates import template_csv
from server.services.jobs.recompute import load_field_inputs
from tests.factories import make_field

TODAY = dt.date(2026, 12, 1)


def store(db, text, **kw):
    return store_upload(db, kind="fluids", data=text.encode(), filename="fluids.csv", today=TODAY, **kw)


def problems(plan):
    return [(p.row, p.column, p.message) for p in plan.report.errors]


@pytest.fixture
def fields(session):
    made = [make_field(session, name=n) for n in ("Upland", "Lowland")]
    for f in made:  # fields without a fluid yet
        session.delete(f.fluid)
    session.commit()
    session.expire_all()
    return made


def _fluid(session, field):
    session.expire_all()
    return session.execute(select(Fluid).where(Fluid.field_id == field.id)).scalar_one()


def test_either_gravity_or_both_is_stored_and_reaches_the_engine(db, session, fields):
    up, low = fields
    text = (
        "field,gas_gravity,well_stream_gravity,condensate_api\n"  # an accepted alias of wellstream_gravity
        "Upland,,0.93,50\n"
        "Lowland,0.68,0.99,50\n"
    )
    result = store(db, text)
    assert result.status == "committed", result.plan.report.as_dict()
    a, b = _fluid(session, up), _fluid(session, low)
    assert (a.gas_gravity, a.wellstream_gravity) == (None, 0.93)
    assert (b.gas_gravity, b.wellstream_gravity) == (0.68, 0.99)
    only = load_field_inputs(session, up)
    assert (only.fluid.gas_gravity, only.wellstream_gravity, only.separator_gravity_given) == (
        0.93,
        0.93,
        False,
    )
    both = load_field_inputs(session, low)
    assert (both.fluid.gas_gravity, both.wellstream_gravity, both.separator_gravity_given) == (
        0.68,
        0.99,
        True,
    )
    assert store(db, text).status == "unchanged"


def test_a_row_without_any_gravity_is_refused_naming_row_and_column(db, session, fields):
    text = "field,gas_gravity,wellstream_gravity\nUpland,0.65,\nLowland,,\n"
    plan = check_upload(session, kind="fluids", data=text.encode(), today=TODAY)
    assert problems(plan) == [
        (
            3,
            "gas_gravity",
            "no gas gravity: give the separator gas gravity (gas_gravity), the well-stream gravity "
            "(wellstream_gravity), or both",
        )
    ]
    assert store(db, text).status == "rejected"
    session.expire_all()
    assert session.execute(select(Fluid)).scalars().all() == []  # nothing written, not even Upland's


def test_a_wellstream_gravity_in_the_separator_column_needs_confirmation(db, session, fields):
    # 0.93 with an API gravity and no well-stream gravity: heavier than separator gas usually is
    # (common practice, engine/pvt/wellstream.py), so the upload asks before storing it.
    text = "field,gas_gravity,condensate_api\nUpland,0.93,50\n"
    plan = check_upload(session, kind="fluids", data=text.encode(), today=TODAY)
    assert plan.report.ok, problems(plan)
    (w,) = plan.report.warnings
    assert (w.row, w.column) == (2, "gas_gravity") and "put it in a wellstream_gravity column" in w.message
    assert store(db, text).status == "needs_confirmation"
    # a usual separator gas, or a heavy gas without condensate, is no warning
    for fine in ("field,gas_gravity,condensate_api\nUpland,0.70,50\n", "field,gas_gravity\nUpland,0.93\n"):
        assert check_upload(session, kind="fluids", data=fine.encode(), today=TODAY).report.warnings == []


def test_moving_a_gravity_to_the_right_column_is_a_replacement_with_history(db, session, fields):
    up, _ = fields
    assert store(db, "field,gas_gravity,condensate_api\nUpland,0.93,50\n", accept_warnings=True).status == (
        "committed"
    )
    fix = "field,gas_gravity,wellstream_gravity\nUpland,,0.93\n"
    assert "gas_gravity 0.93 → None" in store(db, fix).plan.report.errors[0].message
    assert store(db, fix, replace=True, actor=Actor(None, "tester")).status == "committed"
    fl = _fluid(session, up)
    assert (fl.gas_gravity, fl.wellstream_gravity, fl.condensate_api) == (None, 0.93, 50.0)
    event = session.execute(select(AuditEvent).where(AuditEvent.action == "replace")).scalar_one()
    assert event.before == {"gas_gravity": 0.93, "wellstream_gravity": None}
    assert event.after == {"gas_gravity": None, "wellstream_gravity": 0.93}
    # a file without the well-stream column leaves it as stored
    assert store(db, "field,gas_gravity\nUpland,0.68\n", replace=True).status == "committed"
    fl = _fluid(session, up)
    assert (fl.gas_gravity, fl.wellstream_gravity) == (0.68, 0.93)


def test_the_template_has_both_columns():
    header = template_csv(file_kind("fluids")).decode().splitlines()[0].lstrip("\ufeff").split(",")
    assert header[:3] == ["field", "gas_gravity", "wellstream_gravity"]
