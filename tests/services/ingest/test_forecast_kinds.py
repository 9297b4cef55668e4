"""Uploads of well tests, field plans and planned wells: strict rows, units, nothing half-written.

Expected numbers are unit definitions (1 MMscf = 1,000 Mscf; 1 bar = 14.5037738 psi, NIST SP 811)
and the plan rules of docs/uploads.md; each case states its reason."""

import datetime as dt

import pytest
from sqlalchemy import func, select

from server.db.models import AuditEvent, FieldPlan, PlannedWell, WellTest
from server.services.audit import Actor
from server.services.ingest.kinds import file_kind
from server.services.ingest.service import check_upload, store_upload
from server.services.ingest.templates import template_csv
from tests.factories import make_field

TODAY = dt.date(2026, 12, 1)


def check(session, kind, text, **kw):
    return check_upload(session, kind=kind, data=text.encode(), filename=f"{kind}.csv", today=TODAY, **kw)


def store(db, kind, text, **kw):
    return store_upload(db, kind=kind, data=text.encode(), filename=f"{kind}.csv", today=TODAY, **kw)


def errors(plan):
    return [(p.row, p.column, p.message) for p in plan.report.errors]


def count(session, model):
    return session.execute(select(func.count()).select_from(model)).scalar_one()


@pytest.fixture
def field(session):
    f = make_field(session, name="Upland", pi_psia=5000.0)
    session.commit()
    return f


TESTS = "field,well,test_date,rate_mmscf_per_day,flowing_pressure_psia,static_pressure_psia\n"


def test_well_tests_are_stored_in_mscf_per_day(db, session, field):
    text = TESTS + "Upland,W-1,2021-03-04,4.2,3650,4100\nUpland,W-1,2021-03-04,7.9,3180,4100\n"
    result = store(db, "well_tests", text)
    assert result.status == "committed", errors(result.plan)
    rates = sorted(session.execute(select(WellTest.rate_mscf_per_day)).scalars())
    assert rates == pytest.approx([4200.0, 7900.0])  # 1 MMscf/d = 1,000 Mscf/d
    assert store(db, "well_tests", text).status == "unchanged"


def test_bad_well_test_rows_are_each_named_and_nothing_is_written(session, field):
    text = TESTS + (
        "Upland,W-1,2021-03-04,4.2,4200,4100\n"  # flowing above static
        "Upland,W-9,2021-03-04,4.2,3650,4100\n"  # unknown well
        "Upland,W-1,2021-03-04,-1,3650,4100\n"  # negative rate
        "Upland,W-1,2030-03-04,4.2,3650,4100\n"  # a test cannot lie in the future
    )
    plan = check(session, "well_tests", text)
    found = errors(plan)
    assert [(r, c) for r, c, _ in found] == [
        (2, "flowing_pressure"),
        (3, "well"),
        (4, "rate"),
        (5, "test_date"),
    ]
    assert "below the static pressure" in found[0][2]
    assert not plan.changes_anything and count(session, WellTest) == 0


def test_a_rate_needs_its_unit(session, field):
    text = (
        "field,well,test_date,rate,flowing_pressure_psia,static_pressure_psia\n"
        "Upland,W-1,2021-03-04,4.2,3650,4100\n"
    )
    found = errors(check(session, "well_tests", text))
    assert found and found[0][:2] == (1, "rate") and "has no unit" in found[0][2]


def test_pressures_in_bar_gauge_are_converted(db, session, field):
    from server.services.ingest.parse import ReadOptions

    text = (
        "field,well,test_date,rate_mscf_per_day,flowing_pressure_barg,static_pressure_barg\n"
        "Upland,W-2,2021-03-04,4200,250,280\n"
    )
    result = store(db, "well_tests", text, options=ReadOptions(atmosphere_psia=14.7))
    assert result.status == "committed", errors(result.plan)
    t = session.execute(select(WellTest)).scalar_one()
    assert t.flowing_bhp_psia == pytest.approx(250 * 14.5037738 + 14.7, rel=1e-6)  # NIST SP 811


PLAN = (
    "field,plateau_rate_mmscf_per_day,uptime_frac,min_flowing_pressure_psia,compression_date,"
    "compression_min_flowing_pressure_psia,economic_limit_rate_mscf_per_day,licence_end,deliverability_exponent\n"
)


def test_a_field_plan_is_stored_with_future_dates(db, session, field):
    result = store(db, "field_plans", PLAN + "Upland,60,0.95,900,2031-01-01,450,2500,2040-12-31,0.85\n")
    assert result.status == "committed", errors(result.plan)
    p = session.execute(select(FieldPlan)).scalar_one()
    assert p.plateau_rate_mscf_per_day == pytest.approx(60000.0)
    assert p.compression_start_date == dt.date(2031, 1, 1) and p.licence_end_date == dt.date(2040, 12, 31)
    assert result.job_ids  # the field is recomputed


@pytest.mark.parametrize(
    "row, column, words",
    [
        ("Upland,60,0.95,900,2031-01-01,,2500,2040-12-31,0.85", "compression_min_flowing_pressure", "both"),
        (
            "Upland,60,0.95,900,2031-01-01,950,2500,2040-12-31,0.85",
            "compression_min_flowing_pressure",
            "lowers",
        ),
        ("Upland,60,0.95,6000,,,2500,,0.85", "min_flowing_pressure", "initial pressure"),
        ("Upland,2,0.95,900,,,2500,,0.85", "economic_limit_rate", "below the plateau"),
        ("Upland,60,1.2,900,,,2500,,0.85", "uptime", "at most 1"),
        ("Upland,60,0.95,900,,,2500,,0.3", "deliverability_exponent", "at least 0.5"),
        (
            "Upland,60,0.95,900,2041-01-01,450,2500,2040-12-31,0.85",
            "compression_date",
            "before the licence end",
        ),
    ],
)
def test_an_impossible_plan_names_row_and_column(session, field, row, column, words):
    plan = check(session, "field_plans", PLAN + row + "\n")
    found = errors(plan)
    assert found and found[0][:2] == (2, column), found
    assert words in found[0][2]
    assert count(session, FieldPlan) == 0


def test_the_deliverability_form_column(db, session, field):
    from server.engine.forecast.deliverability import FORMS
    from server.services.ingest.kinds import KINDS

    col = KINDS["field_plans"].column("deliverability_form")
    assert col.choices == FORMS and col.default == "pressure_squared"  # the engine's forms, its default
    bad = check(
        session, "field_plans", "field,plateau_rate_mscf_per_day,deliverability_form\nUpland,60000,cubic\n"
    )
    assert errors(bad) and errors(bad)[0][:2] == (2, "deliverability_form")
    text = "field,plateau_rate_mscf_per_day,deliverability_form\nUpland,60000,Pseudo-Pressure\n"
    assert store(db, "field_plans", text).status == "committed"
    assert session.execute(select(FieldPlan.deliverability_form)).scalar_one() == "pseudo_pressure"
    # A file without the column keeps the stored form.
    again = "field,plateau_rate_mscf_per_day\nUpland,50000\n"
    assert store(db, "field_plans", again, replace=True, actor=Actor(None, "tester")).status == "committed"
    session.expire_all()
    assert session.execute(select(FieldPlan.deliverability_form)).scalar_one() == "pseudo_pressure"


def test_changing_a_plan_needs_replace_and_is_audited(db, session, field):
    store(db, "field_plans", "field,plateau_rate_mscf_per_day\nUpland,60000\n")
    again = "field,plateau_rate_mscf_per_day\nUpland,50000\n"
    assert store(db, "field_plans", again).status == "rejected"
    result = store(db, "field_plans", again, replace=True, actor=Actor(None, "tester"))
    assert result.status == "committed"
    event = session.execute(
        select(AuditEvent).where(AuditEvent.entity_type == "field_plan", AuditEvent.action == "replace")
    ).scalar_one()
    assert event.before == {"plateau_rate_mscf_per_day": 60000} and event.after == {
        "plateau_rate_mscf_per_day": 50000
    }


def test_planned_wells(db, session, field):
    text = (
        "field,well,start_date,compartment,c_mscf_per_day_psi2n,n\nUpland,P-1,2028-07-01,north,0.0004,0.85\n"
    )
    assert store(db, "planned_wells", text).status == "committed"
    assert session.execute(select(PlannedWell.name)).scalars().all() == ["P-1"]
    clash = (
        "field,well,start_date,c_mscf_per_day_psi2n,n\n"
        "Upland,W-1,2028-07-01,0.0004,0.85\nUpland,P-2,2028-07-01,0.0004,1.2\n"
    )
    found = errors(check(session, "planned_wells", clash))
    assert [(r, c) for r, c, _ in found] == [(2, "well"), (3, "n")]
    assert "existing well" in found[0][2]


@pytest.mark.parametrize("kind", ["well_tests", "field_plans", "planned_wells"])
def test_templates_are_accepted_by_their_own_checks(db, session, kind):
    """The template's invented example rows pass the checks once the example field exists."""
    make_field(session, name="Example Field", wells=("EX-1", "EX-2"), pi_psia=5200.0)
    session.commit()
    data = template_csv(file_kind(kind))
    plan = check_upload(session, kind=kind, data=data, filename=f"{kind}.csv", today=TODAY)
    assert not plan.report.errors, errors(plan)
    assert plan.changes_anything
