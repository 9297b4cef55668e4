"""services/fieldwork/choices.py and notes.py on both databases: what is refused (nothing stored),
what an unchanged value does (nothing), and the audit of a change (old -> new)."""

import pytest
from sqlalchemy import func, select

from server.db.models import AuditEvent, FieldAnalysisSettings, FieldNote, Job, PressureSurvey
from server.services.audit import Actor
from server.services.fieldwork import choices as field_work
from server.services.fieldwork import notes as field_notes
from tests.factories import add_volumetric_history, make_field

ENGINEER = Actor(None, "eng")


@pytest.fixture
def field(session):
    f = make_field(session, name="Upland")
    add_volumetric_history(session, f)
    return f


def _count(session, model):
    return session.execute(select(func.count()).select_from(model)).scalar_one()


def test_every_bad_choice_is_named_and_nothing_is_stored(session, field):
    bad = {
        "abandonment_pressure_psia": 6000.0,
        "z_method": "guess",
        "overpressure_mode": "sometimes",
        "basis_model": "ocean",
        "effective_compressibility_per_psi": 0.01,
        "datum_correction": "yes",
        "colour": "red",
    }
    with pytest.raises(field_work.FieldWorkError) as err:
        field_work.update_choices(session, ENGINEER, field, bad, atmosphere_psia=14.696)
    problems = err.value.problems
    assert set(problems) == set(bad)
    assert (
        "below the initial pressure (5,000.0 psia); got 6,000.0 psia" in problems["abandonment_pressure_psia"]
    )
    assert (
        "dak, hall_yarborough" in problems["z_method"]
        and "off, given, fitted" in problems["overpressure_mode"]
    )
    assert (
        "automatic, single_tank" in problems["basis_model"]
        and "must lie in [0, 0.001)" in problems["effective_compressibility_per_psi"]
    )
    assert problems["datum_correction"] == "must be true or false"
    assert problems["colour"] == "not an analysis choice of a field"
    assert field.abandonment_pressure_psia == 1000.0 and _count(session, AuditEvent) == 0
    assert _count(session, Job) == 0


def test_unchanged_values_do_nothing_and_a_change_is_audited_once(session, field):
    same = field_work.current_choices(field)
    out = field_work.update_choices(session, ENGINEER, field, same, atmosphere_psia=14.696)
    assert out.changed == () and out.job_id is None and _count(session, AuditEvent) == 0
    out = field_work.update_choices(
        session, ENGINEER, field, {"anchor_initial": True, "z_method": "dak"}, atmosphere_psia=14.696
    )
    assert out.changed == ("anchor_initial",) and out.job_id is not None
    ev = session.execute(select(AuditEvent)).scalar_one()
    assert (ev.before, ev.after, ev.entity_type) == (
        {"anchor_initial": False},
        {"anchor_initial": True},
        "field_settings",
    )
    st = session.execute(
        select(FieldAnalysisSettings).where(FieldAnalysisSettings.field_id == field.id)
    ).scalar_one()
    assert st.anchor_initial is True
    # a second change while the first recompute still waits reuses the queued job
    again = field_work.update_choices(
        session, ENGINEER, field, {"anchor_initial": False}, atmosphere_psia=14.696
    )
    assert again.job_id == out.job_id and _count(session, Job) == 1


def test_exclusion_reason_is_required_trimmed_and_kept(session, field):
    sv = session.execute(select(PressureSurvey)).scalars().first()
    with pytest.raises(field_work.FieldWorkError, match="give a reason"):
        field_work.set_survey_exclusion(session, ENGINEER, field, sv.id, excluded=True, reason=" \t ")
    out = field_work.set_survey_exclusion(
        session, ENGINEER, field, sv.id, excluded=True, reason="  tool   failure "
    )
    assert sv.excluded and sv.exclusion_reason == "tool failure" and out.changed
    with pytest.raises(field_work.NotFoundError):
        field_work.set_survey_exclusion(session, ENGINEER, field, 10**9, excluded=False)
    out = field_work.set_survey_exclusion(session, ENGINEER, field, sv.id, excluded=False)
    assert not sv.excluded and sv.exclusion_reason is None and out.summary.startswith("took survey of W-1")


def test_a_note_longer_than_the_limit_is_refused_by_the_service_and_the_database(session, field):
    with pytest.raises(field_work.FieldWorkError, match="at most 4,000 characters"):
        field_notes.add_note(session, ENGINEER, field, "x" * 4001)
    note = field_notes.add_note(session, ENGINEER, field, "  kept  \r\n  as typed  ")
    assert note.body == "kept  \n  as typed" and note.author == "eng"
    from sqlalchemy.exc import IntegrityError

    with pytest.raises(IntegrityError), session.begin_nested():  # the check constraint holds too
        session.add(FieldNote(field_id=field.id, body="", author_username="eng"))
        session.flush()


def _store_outcomes(session, field, outcomes):
    """A stored estimate whose detail lists the models' outcomes (as the engine serialises them)."""
    from server.db.models import Estimate

    session.add(
        Estimate(
            field_id=field.id,
            method="single_tank",
            status="ok",
            message="",
            giip_best_bscf=100.0,
            cumulative_gas_bscf=10.0,
            flags=[],
            detail={"outcomes": outcomes},
            inputs_fingerprint="x",
            engine_version="t",
        )
    )
    session.flush()


def test_basis_choice_needs_a_reason_is_audited_in_words_and_automatic_clears_it(session, field):
    with pytest.raises(field_work.FieldWorkError) as err:
        field_work.update_choices(
            session,
            ENGINEER,
            field,
            {"basis_model": "aquifer_pot", "basis_reason": "  "},
            atmosphere_psia=14.7,
        )
    assert set(err.value.problems) == {"basis_reason"}
    assert err.value.problems["basis_reason"].startswith("Upland: give a reason for basing the headline on")
    assert _count(session, AuditEvent) == 0 and _count(session, Job) == 0
    out = field_work.update_choices(
        session,
        ENGINEER,
        field,
        {"basis_model": "aquifer_pot", "basis_reason": "  water sample:  aquifer water "},
        atmosphere_psia=14.7,
    )
    assert out.changed == ("basis_model", "basis_reason") and out.job_id is not None
    assert (
        field.settings.basis_model == "aquifer_pot"
        and field.settings.basis_reason == "water sample: aquifer water"
    )
    assert out.summary == (
        "analysis choices: basis of the headline Automatic (the evidence rule) → Tank with a pot aquifer; "
        "reason for the basis none → “water sample: aquifer water”"
    )
    assert "aquifer_pot" not in out.summary  # words, not keys
    back = field_work.update_choices(
        session, ENGINEER, field, {"basis_model": "automatic"}, atmosphere_psia=14.7
    )
    assert back.changed == ("basis_model", "basis_reason")
    assert (field.settings.basis_model, field.settings.basis_reason) == ("automatic", "")
    # a reason alone under the automatic rule is not kept (the rule needs none): nothing changes
    same = field_work.update_choices(
        session, ENGINEER, field, {"basis_reason": "because"}, atmosphere_psia=14.7
    )
    assert same.changed == () and field.settings.basis_reason == ""


def test_a_model_without_results_in_the_current_estimate_cannot_be_the_basis(session, field):
    _store_outcomes(
        session,
        field,
        [
            {"model": "single_tank", "giip_bscf": 100.0, "eur_bscf": 80.0, "status": "determined"},
            {
                "model": "two_tank",
                "giip_bscf": None,
                "eur_bscf": None,
                "status": "not fitted: too little depletion",
            },
        ],
    )
    with pytest.raises(field_work.FieldWorkError) as err:
        field_work.update_choices(
            session,
            ENGINEER,
            field,
            {"basis_model": "two_tank", "basis_reason": "geology"},
            atmosphere_psia=14.7,
        )
    assert err.value.problems == {
        "basis_model": "Upland: Two connected tanks cannot be the basis (not fitted: too little depletion)"
    }
    with pytest.raises(field_work.FieldWorkError, match="Fetkovich .* has no result for it"):
        field_work.update_choices(
            session,
            ENGINEER,
            field,
            {"basis_model": "aquifer_fetkovich", "basis_reason": "x"},
            atmosphere_psia=14.7,
        )
    out = field_work.update_choices(
        session,
        ENGINEER,
        field,
        {"basis_model": "single_tank", "basis_reason": "keep the line"},
        atmosphere_psia=14.7,
    )
    assert out.changed == ("basis_model", "basis_reason")
