"""The wells view reads only its own field's surveys and production (issue 18, point 9): on
PostgreSQL it aggregated the whole tables first (15-20 s with a million production rows).

Checked from the databases' own query plans, not from time: PostgreSQL's EXPLAIN ANALYZE counts
the rows each plan node actually read; SQLite's EXPLAIN QUERY PLAN says whether a table is
scanned whole (SCAN) or searched by key (SEARCH)."""

import datetime as dt
import json

import sqlalchemy as sa

from server.services.portfolio import field_data
from tests.factories import make_field

OTHER_MONTHS = 120  # the other field's production: 20 wells x 120 months


def _fields(session):
    mine = make_field(session, name="Mine", wells=("M-1", "M-2"))
    other = make_field(session, name="Other", wells=tuple(f"O-{i}" for i in range(20)))
    session.flush()
    rows = [
        {"well_id": w.id, "month": dt.date(2000 + k // 12, k % 12 + 1, 1), "gas_mscf": 100.0}
        for w in other.wells
        for k in range(OTHER_MONTHS)
    ]
    rows += [{"well_id": w.id, "month": dt.date(2020, 1, 1), "gas_mscf": 5.0} for w in mine.wells]
    session.execute(sa.text(
        "INSERT INTO production_month (well_id, month, gas_mscf, condensate_stb, water_stb) "
        "VALUES (:well_id, :month, :gas_mscf, 0, 0)"
    ), rows)  # fmt: skip
    session.execute(sa.text(
        "INSERT INTO pressure_survey (well_id, survey_date, pressure_psia, gauge_depth_ft, kind, quality, "
        "excluded, created_at) VALUES (:well_id, :month, 3000, 9000, 'static', 'good', false, :month)"
    ), rows)  # fmt: skip
    session.flush()
    return mine


def _nodes(plan):
    yield plan
    for child in plan.get("Plans", ()):
        yield from _nodes(child)


def test_the_wells_view_reads_only_its_fields_rows(session):
    mine = _fields(session)
    assert [(w.name, w.cumulative_gas_mscf, w.n_surveys) for w in field_data.wells(session, mine.id)] == [
        ("M-1", 5.0, 1),
        ("M-2", 5.0, 1),
    ]
    stmt = field_data.wells_statement(mine.id)
    sql = str(stmt.compile(session.get_bind(), compile_kwargs={"literal_binds": True}))
    if session.get_bind().dialect.name == "postgresql":
        session.execute(sa.text("ANALYZE production_month; ANALYZE pressure_survey; ANALYZE well"))
        plan = session.execute(sa.text("EXPLAIN (ANALYZE, FORMAT JSON) " + sql)).scalar_one()
        plan = plan if isinstance(plan, list) else json.loads(plan)
        read = {
            n["Relation Name"]: n["Actual Rows"] * n.get("Actual Loops", 1)
            for n in _nodes(plan[0]["Plan"])
            if n.get("Relation Name") in ("production_month", "pressure_survey")
        }
        # two rows of each are the field's; before, every row of the other field was read too
        assert read and all(n <= 2 for n in read.values()), read
    else:
        details = [r[3] for r in session.execute(sa.text("EXPLAIN QUERY PLAN " + sql)).all()]
        touched = [d for d in details if "production_month" in d or "pressure_survey" in d]
        assert touched and all(d.startswith("SEARCH") for d in touched), details
