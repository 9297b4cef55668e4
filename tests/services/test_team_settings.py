"""Team settings in the database: fallbacks, validation, audit, recompute, and the standard
conditions that are the storage basis of every gas volume."""

from __future__ import annotations

import pytest
from sqlalchemy import select

from server.db.models import AuditEvent, Estimate, Field, Job, TeamSetting
from server.engine.thresholds import FlagThresholds
from server.engine.units import ISO_15C, OILFIELD_60F
from server.services import audit, team_settings
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.services.jobs.recompute import load_field_inputs, recompute_field
from server.settings import Settings
from tests.factories import add_volumetric_history, field_with_estimate, make_field

ADMIN = audit.Actor(None, "admin-test")


@pytest.fixture
def env():
    return Settings(environment="test", secret_key="t" * 40, database_url="sqlite://", display_units="si")


def _events(session):
    return (
        session.execute(select(AuditEvent).where(AuditEvent.entity_type == "team_settings")).scalars().all()
    )


def test_without_rows_the_environment_and_the_code_defaults_apply(session, env):
    team = team_settings.current(session, env)
    assert (team.display_units, team.atmosphere_psia, team.standard_conditions) == ("si", 14.696, "oilfield")
    assert team.flag_thresholds == FlagThresholds()
    assert team.sources["display_units"] == "environment"
    assert team.sources["threshold.outlier_sigma"] == "default"
    assert set(team.sources) == {*team_settings.UNIT_KEYS, *team_settings.THRESHOLD_KEYS}
    assert team_settings.engine_settings(session) == (OILFIELD_60F, FlagThresholds())


def test_bad_values_are_all_reported_and_nothing_is_stored(session, env):
    bad = {
        "atmosphere_psia": "9.5",
        "display_units": "imperial",
        "threshold.curvature_p_value": "often",
        "threshold.min_surveys": "2.5",
        "threshold.outlier_sigma": "nan",
        "threshold.comparable_delta_aicc": "0",
        "threshold.not_a_threshold": "1",
        "threshold.max_scatter_frac": "0.02",  # acceptable, but not stored: another value is wrong
    }
    with pytest.raises(team_settings.TeamSettingsError) as info:
        team_settings.update(session, ADMIN, env, bad)
    problems = info.value.problems
    assert set(problems) == set(bad) - {"threshold.max_scatter_frac"}
    assert "between 10 and 16 psia" in problems["atmosphere_psia"]
    assert "oilfield, si" in problems["display_units"]
    assert "must be a number" in problems["threshold.curvature_p_value"]
    assert "whole number" in problems["threshold.min_surveys"]
    assert "finite" in problems["threshold.outlier_sigma"]
    assert "between 0.5 and 10 AICc" in problems["threshold.comparable_delta_aicc"]
    assert session.execute(select(TeamSetting)).first() is None and _events(session) == []


def test_a_threshold_change_is_audited_and_queues_a_portfolio_recompute(session, env):
    out = team_settings.update(
        session,
        ADMIN,
        env,
        {"threshold.outlier_sigma": "5", "threshold.min_surveys": "4", "display_units": "si"},
    )
    assert set(out.changed) == {"threshold.outlier_sigma", "threshold.min_surveys"}  # si was already in force
    (event,) = _events(session)
    assert event.actor == "admin-test" and event.action == "update"
    assert event.before == {"threshold.outlier_sigma": 4.0, "threshold.min_surveys": 3}
    assert event.after == {"threshold.outlier_sigma": 5.0, "threshold.min_surveys": 4}
    job = session.get(Job, out.recompute_job_id)
    assert job.kind == jobs.PORTFOLIO_JOB and job.status == "queued" and "admin-test" in job.reason
    team = team_settings.current(session, env)
    assert team.flag_thresholds == FlagThresholds(outlier_sigma=5.0, min_surveys=4)
    assert team.sources["threshold.outlier_sigma"] == "team"
    assert team_settings.engine_settings(session)[1] == team.flag_thresholds
    # resubmitting the same values changes nothing and records nothing
    again = team_settings.update(session, ADMIN, env, {"threshold.outlier_sigma": 5, "display_units": "si"})
    assert again == team_settings.UpdateOutcome((), None) and len(_events(session)) == 1


def test_a_unit_change_does_not_recompute(session, env):
    out = team_settings.update(session, ADMIN, env, {"display_units": "oilfield", "atmosphere_psia": 14.5})
    assert out.recompute_job_id is None and set(out.changed) == {"display_units", "atmosphere_psia"}
    assert _events(session)[0].before == {"display_units": "si", "atmosphere_psia": 14.696}


def test_a_running_portfolio_job_is_not_reused(session, env):
    running = jobs.enqueue_portfolio_recompute(session, reason="earlier")
    running.status = "running"
    session.flush()
    out = team_settings.update(session, ADMIN, env, {"threshold.survey_gap_days": 400})
    assert out.recompute_job_id != running.id  # the running job may already have passed some fields
    # a queued one is reused
    out2 = team_settings.update(session, ADMIN, env, {"threshold.survey_gap_days": 500})
    assert out2.recompute_job_id == out.recompute_job_id


def test_recompute_writes_new_estimates_with_the_new_thresholds(db, env):
    fid = field_with_estimate(db)
    with db.session() as s:
        first = s.execute(select(Estimate).where(Estimate.field_id == fid)).scalar_one()
        assert "data_gaps" not in {f["code"] for f in first.flags}
        out = team_settings.update(s, ADMIN, env, {"threshold.survey_gap_days": 60})
    runner.drain(db)
    with db.session() as s:
        rows = (
            s.execute(select(Estimate).where(Estimate.field_id == fid).order_by(Estimate.id)).scalars().all()
        )
        assert len(rows) == 2 and rows[0].inputs_fingerprint != rows[1].inputs_fingerprint
        assert "data_gaps" in {f["code"] for f in rows[1].flags}  # surveys are six months apart
        assert s.get(Job, out.recompute_job_id).status == "done"


def test_standard_conditions_change_only_while_no_gas_volumes_are_stored(db, env):
    with db.session() as s:
        assert team_settings.standard_conditions_lock(s) is None
        out = team_settings.update(s, ADMIN, env, {"standard_conditions": "iso"})
        assert out.changed == ("standard_conditions",) and out.recompute_job_id is not None
        make_field(s, name="Locked")  # brings a volumetric estimate (a gas volume)
    with db.session() as s:
        lock = team_settings.standard_conditions_lock(s)
        assert "1 volumetric estimate" in lock
        with pytest.raises(team_settings.TeamSettingsError) as info:
            team_settings.update(s, ADMIN, env, {"standard_conditions": "oilfield"})
        assert "cannot change" in info.value.problems["standard_conditions"]
        assert team_settings.update(s, ADMIN, env, {"standard_conditions": "iso"}).changed == ()


def test_the_environment_value_is_pinned_once(session):
    iso = Settings(environment="test", secret_key="t" * 40, standard_conditions="iso")
    team_settings.pin_standard_conditions(session, iso)
    oilfield = Settings(environment="test", secret_key="t" * 40, standard_conditions="oilfield")
    team_settings.pin_standard_conditions(session, oilfield)
    assert team_settings.engine_settings(session)[0] is ISO_15C
    assert team_settings.current(session, iso).sources["standard_conditions"] == "pinned"


def test_recompute_passes_the_installations_standard_conditions(db, env):
    """With ISO standard conditions the engine gets ISO_15C (Bg, gas equivalents and the
    aquifer balance use it), and the estimate says which basis its volumes are at."""
    with db.session() as s:
        team_settings.update(s, ADMIN, env, {"standard_conditions": "iso"})
        f = make_field(s, name="Iso")
        add_volumetric_history(s, f)
        fid = f.id
    with db.session() as s:
        field = s.get(Field, fid)
        inputs = load_field_inputs(s, field)
        assert inputs.standard_conditions is ISO_15C
        est, written = recompute_field(s, field)
        assert written and est.detail["prepared"]["standard_conditions"] == ISO_15C.label
