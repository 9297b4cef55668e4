"""Uploads of every kind: every bad row reported, nothing half-written, units explicit."""

import datetime as dt

import pytest
from sqlalchemy import func, select

from server.db.models import (
    AuditEvent,
    Estimate,
    Field,
    Fluid,
    FluidLabPoint,
    Job,
    PressureSurvey,
    ProductionMonth,
    Upload,
    VolumetricEstimate,
    Well,
)
from server.services.audit import Actor
from server.services.ingest.parse import ReadOptions
from server.services.ingest.service import check_upload, store_upload
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from tests.factories import add_volumetric_history, make_field

TODAY = dt.date(2026, 12, 1)
TABLES = (
    Field,
    Well,
    Fluid,
    FluidLabPoint,
    PressureSurvey,
    ProductionMonth,
    VolumetricEstimate,
    Upload,
    Job,
    Estimate,
    AuditEvent,
)


def counts(session):
    return tuple(session.execute(select(func.count()).select_from(m)).scalar_one() for m in TABLES)


def problems(plan):
    return [(p.row, p.column, p.message) for p in plan.report.errors]


def check(session, kind, text, **kw):
    return check_upload(session, kind=kind, data=text.encode(), filename=f"{kind}.csv", today=TODAY, **kw)


def store(db, kind, text, **kw):
    return store_upload(db, kind=kind, data=text.encode(), filename=f"{kind}.csv", today=TODAY, **kw)


@pytest.fixture
def field(session):
    f = make_field(session, name="Upland")
    add_volumetric_history(session, f)
    session.commit()
    return f


MALFORMED = {
    "missing column": (
        "field,well,survey_date\nUpland,W-1,2017-01-15\n",
        [(1, "pressure_psia", "required column is missing")],
    ),
    "text in a number": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2017-01-15,12OO\n",
        [(2, "pressure", "is not a number")],
    ),
    "impossible date": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2017-02-30,1200\n",
        [(2, "survey_date", "is not a real calendar date")],
    ),
    "negative pressure": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2017-01-15,-20\n",
        [(2, "pressure", "must be above 0 psia and below 30,000 psia")],
    ),
    "duplicate row": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2017-01-15,1200\nUpland,w-1,2017-01-15,1210\n",
        [(3, None, "duplicates row 2 (field, well, survey_date)")],
    ),
    "unknown well": (
        "field,well,survey_date,pressure_psia\nUpland,W-9,2017-01-15,1200\n",
        [(2, "well", "unknown well in field 'Upland'; add it with a wells file first")],
    ),
    "future date": (
        "field,well,survey_date,pressure_psia\nUpland,W-1,2027-01-15,1200\n",
        [(2, "survey_date", "is in the future")],
    ),
    "psi without absolute or gauge": (
        "field,well,survey_date,pressure_psi\nUpland,W-1,2017-01-15,1200\n",
        [
            (1, "pressure_psi", "'psi' does not say absolute or gauge: write psia or psig"),
            (1, "pressure_psia", "required column is missing"),
        ],
    ),
}


@pytest.mark.parametrize("case", sorted(MALFORMED))
def test_malformed_survey_files_are_reported_and_change_nothing(db, session, field, case):
    text, expected = MALFORMED[case]
    before = counts(session)
    assert problems(check(session, "surveys", text)) == expected
    result = store(db, "surveys", text)
    assert result.status == "rejected"
    assert counts(session) == before


def test_every_bad_row_is_listed(session, field):
    text = (
        "field,well,survey_date,pressure_psia\n"
        "Upland,W-1,2017-01-15,abc\nUpland,W-1,2017-13-01,1200\nUpland,W-1,2017-03-01,-1\n"
    )
    assert [p[0] for p in problems(check(session, "surveys", text))] == [2, 3, 4]


def test_good_survey_file_is_stored_and_recomputed(db, session, field):
    jobs.enqueue_field_recompute(session, [field.id], reason="test")
    session.commit()
    assert runner.drain(db) == 1
    text = "field,well,survey_date,pressure_psig\nUpland,W-2,2017-01-15,1500\n"
    result = store(db, "surveys", text, options=ReadOptions(atmosphere_psia=14.7))
    assert result.status == "committed" and result.job_ids
    stored = session.execute(
        select(PressureSurvey).where(PressureSurvey.upload_id == result.upload_id)
    ).scalar_one()
    assert stored.pressure_psia == pytest.approx(1514.7)  # gauge + the stated atmosphere
    assert stored.gauge_depth_ft == 10000.0  # the well's reference depth
    assert runner.drain(db) == 1
    ests = (
        session.execute(select(Estimate).where(Estimate.field_id == field.id).order_by(Estimate.id))
        .scalars()
        .all()
    )
    assert len(ests) == 2 and ests[1].inputs_fingerprint != ests[0].inputs_fingerprint


def test_same_file_twice_changes_nothing(db, session, field):
    text = "field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,1500\n"
    assert store(db, "surveys", text).status == "committed"
    runner.drain(db)
    before = counts(session)
    result = store(db, "surveys", text)
    assert result.status == "unchanged" and result.plan.unchanged == 1
    assert counts(session) == before


def test_conflicting_value_needs_replace_and_keeps_history(db, session, field):
    store(db, "surveys", "field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,1500\n")
    corrected = "field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,1525\n"
    result = store(db, "surveys", corrected)
    assert result.status == "rejected"
    assert "pressure_psia 1500.0 → 1525.0" in result.plan.report.errors[0].message
    result = store(db, "surveys", corrected, replace=True, actor=Actor(None, "tester"))
    assert result.status == "committed"
    event = session.execute(select(AuditEvent).where(AuditEvent.action == "replace")).scalar_one()
    assert event.before["pressure_psia"] == 1500 and event.after["pressure_psia"] == 1525
    assert event.actor == "tester" and event.field_id == field.id and event.at is not None


def test_survey_above_initial_pressure_needs_confirmation(db, session, field):
    text = "field,well,survey_date,pressure_psia\nUpland,W-2,2017-01-15,5600\n"
    plan = check(session, "surveys", text)
    assert plan.report.ok and [w.message for w in plan.report.warnings] == [
        "is above the field's initial pressure 5,000.0 psia"
    ]
    assert store(db, "surveys", text).status == "needs_confirmation"
    assert store(db, "surveys", text, accept_warnings=True).status == "committed"


def test_production_checks(db, session, field):
    text = (
        "field,well,month,gas_mscf,condensate_stb,water_stb\n"
        "Upland,W-2,2017-01,10000,5,1\nUpland,W-2,2017-02,-3,0,0\nUpland,W-2,2017-01-31,5,0,0\n"
    )
    assert problems(check(session, "production", text)) == [
        (3, "gas", "volumes cannot be negative"),
        (4, "month", "overlaps row 2: both give production of this well for 2017-01"),
    ]
    ok = "field,well,month,gas_mmscf,condensate_m3\nUpland,W-2,2017-01,10,1\n"
    result = store(db, "production", ok)
    row = session.execute(
        select(ProductionMonth).where(ProductionMonth.upload_id == result.upload_id)
    ).scalar_one()
    assert row.gas_mscf == 10000.0
    assert row.condensate_stb == pytest.approx(1 / 0.158987294928)  # 42 US gal barrel (NIST SP 811)


def test_cumulative_columns_must_not_decrease(session, field):
    text = (
        "field,well,month,gas_mscf,cum_gas_mscf\n"
        "Upland,W-2,2017-01,100,100\nUpland,W-2,2017-02,100,200\nUpland,W-2,2017-03,100,190\n"
    )
    plan = check(session, "production", text)
    assert problems(plan) == [
        (4, "cum_gas", "decreases from 200 to 190 Mscf (row 3, 2017-02); a cumulative cannot fall")
    ]
    mismatch = (
        "field,well,month,gas_mscf,cum_gas_mscf\nUpland,W-2,2017-01,100,100\nUpland,W-2,2017-02,100,300\n"
    )
    plan = check(session, "production", mismatch)
    assert plan.report.ok and "rises by 200 Mscf" in plan.report.warnings[0].message


def test_a_new_portfolio_from_files(db, session):
    before = counts(session)
    fields = (
        "Field Name;Asset;Datum Depth (m);Reservoir Temperature (degC);Initial Pressure (bara);"
        "Abandonment Pressure (bara)\nMoorend;Fenland;3048;93,3333;344,738;55,158\n"
    )
    result = store(db, "fields", fields)
    assert result.status == "committed", result.plan.report.as_dict()
    f = session.execute(select(Field).where(Field.name == "Moorend")).scalar_one()
    assert f.datum_depth_ft == pytest.approx(10000.0)
    assert f.reservoir_temperature_degF == pytest.approx(200.0, abs=1e-3)
    assert f.initial_pressure_psia == pytest.approx(5000.0, abs=0.01)  # 1 bar = 14.50377 psi (NIST SP 811)
    assert f.asset.name == "Fenland"
    assert (
        store(
            db,
            "wells",
            "field,well,compartment,gauge_reference_depth_ft\nMoorend,M-1,,9950\nMoorend,M-2,east,\n",
        ).status
        == "committed"
    )
    assert (
        store(db, "fluids", "field,gas_gravity,co2_pct,condensate_api\nMoorend,0.68,2.5,52\n").status
        == "committed"
    )
    fl = session.execute(select(Fluid).where(Fluid.field_id == f.id)).scalar_one()
    assert fl.y_co2_frac == pytest.approx(0.025) and fl.y_h2s_frac == 0.0
    lab = "field,pressure_psia,z_factor\nMoorend,5000,0.97\nMoorend,1000,0.91\n"
    assert store(db, "lab_table", lab).status == "committed"
    assert store(db, "lab_table", lab).status == "unchanged"
    other = "field,pressure_psia,z_factor\nMoorend,5000,0.96\nMoorend,1000,0.91\nMoorend,3000,0.9\n"
    assert "already has a different lab table" in store(db, "lab_table", other).plan.report.errors[0].message
    assert store(db, "lab_table", other, replace=True).status == "committed"
    session.expire_all()
    assert [p.pressure_psia for p in fl.lab_points] == [1000, 3000, 5000]
    vol = (
        "field,estimate_date,author,giip_low_e9m3,giip_best_e9m3,giip_high_e9m3\n"
        "Moorend,2015-06-30,geo,2,3,4\n"
    )
    assert store(db, "volumetrics", vol).status == "committed"
    v = session.execute(select(VolumetricEstimate).where(VolumetricEstimate.field_id == f.id)).scalar_one()
    # 1 m3 at 15 degC, 101.325 kPa = 35.3147 ft3 x (519.67/518.67) x (14.69595/14.696) scf
    # at 60 degF, 14.696 psia (ideal gas; ft3 per m3 from the exact foot, NIST SP 811)
    assert v.giip_best_bscf == pytest.approx(3 * 35.3147 * 519.67 / 518.67, rel=1e-5)
    assert counts(session)[:3] == (before[0] + 1, before[1] + 2, before[2] + 1)


def test_volumetric_monte_carlo_inputs_are_stored(db, session, field):
    header = "field,estimate_date,giip_low_bscf,giip_best_bscf,giip_high_bscf," + ",".join(
        f"{p}_{c}{u}"
        for p, u in (
            ("rock_volume", "_acre_ft"),
            ("net_to_gross", ""),
            ("porosity", ""),
            ("gas_saturation", ""),
            ("bgi", "_rcf_per_scf"),
        )
        for c in ("low", "best", "high")
    )
    # best GIIP check: 100,000 acre-ft x 43,560 ft3 x 0.8 x 0.2 x 0.75 / 0.004 rcf/scf = 130.7 Bscf
    row = (
        "Upland,2020-01-01,90,130,170,80000,100000,120000,0.7,0.8,0.9,0.15,0.2,0.25,0.7,0.75,0.8,"
        "0.0035,0.004,0.0045"
    )
    result = store(db, "volumetrics", header + "\n" + row + "\n")
    assert result.status == "committed", result.plan.report.as_dict()
    v = session.execute(
        select(VolumetricEstimate).where(VolumetricEstimate.estimate_date == dt.date(2020, 1, 1))
    ).scalar_one()
    assert v.method == "monte_carlo"
    assert v.inputs["rock_volume_ft3"]["best"] == pytest.approx(100000 * 43560)
    off = row.replace(",130,", ",60,").replace(",90,", ",50,")
    plan = check(session, "volumetrics", header + "\n" + off.replace("2020", "2021") + "\n")
    assert "differs by more than 25%" in plan.report.warnings[0].message


def test_units_must_be_stated(session, field):
    text = "field,well,survey_date,pressure\nUpland,W-1,2017-01-15,1200\n"
    assert "has no unit" in problems(check(session, "surveys", text))[0][2]
    plan = check(session, "surveys", text, options=ReadOptions(units={"pressure": "barg"}))
    assert plan.report.ok
    (reading,) = [c for c in plan.report.columns if c.column == "pressure"]
    assert reading.unit_from == "form" and "bar gauge" in reading.meaning
    # header units win over the form's choice, and the preview says so
    plan = check(
        session,
        "surveys",
        text.replace("pressure\n", "pressure_psia\n"),
        options=ReadOptions(units={"pressure": "barg"}),
    )
    assert [c.unit_from for c in plan.report.columns if c.column == "pressure"] == ["header"]


def test_docs_list_every_column_and_unit():
    from pathlib import Path

    from server.services.ingest.kinds import KINDS, MC_PARAMETERS

    doc = (Path(__file__).resolve().parents[3] / "docs" / "uploads.md").read_text()
    for kind in KINDS.values():
        assert f"(`{kind.name}`)" in doc
        for c in kind.columns:
            if not c.name.startswith(MC_PARAMETERS):
                assert f"`{c.template_header}`" in doc, c.template_header


def test_windows_1252_bytes_that_are_also_utf8_can_be_chosen(session):
    # "à", NBSP, "¡" in Windows-1252 are the bytes E0 A0 A1: also valid UTF-8 (U+0821), found by hypothesis
    text = (
        "field,asset,datum_depth_ft,reservoir_temperature_degF,initial_pressure_psia,"
        "abandonment_pressure_psia\n"
    )
    data = text.encode() + "Fà\xa0¡,A,9000,190,4000,500\n".encode("cp1252")
    plan = check_upload(session, kind="fields", data=data, today=TODAY)
    assert plan.inserts[0].values["name"] == "F\u0821" and "choose Windows-1252" in plan.report.notes[0]
    plan = check_upload(
        session, kind="fields", data=data, today=TODAY, options=ReadOptions(encoding="cp1252")
    )
    # names are stored in Unicode NFKC (issue 18): the no-break space folds to a space (UAX #15)
    assert (
        plan.inserts[0].values["name"] == "Fà ¡"
        and "Windows-1252 (chosen on the form)" in plan.report.notes[0]
    )
