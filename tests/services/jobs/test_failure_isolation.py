"""One field must not stop the portfolio (issue 18, point 1).

- A field whose surveys all predate first production used to stop every recompute with
  numpy's "SVD did not converge"; now the engine refuses it with a reason, stored as the
  field's estimate, and the fields after it are recomputed.
- A failure the engine did not foresee (injected here) is kept beside the field: the job
  finishes the other fields and lists the failure, the field keeps its last estimate and
  its page says that estimate is stale and why; the next good recompute clears it.
"""

import datetime as dt

from sqlalchemy import select

from server.db.models import Estimate, Job, PressureSurvey, RecomputeFailure
from server.services.jobs import queue as jobs
from server.services.jobs import recompute, runner
from tests.factories import add_volumetric_history, make_field


def _latest(session, field_id):
    return session.execute(
        select(Estimate).where(Estimate.field_id == field_id).order_by(Estimate.id.desc()).limit(1)
    ).scalar_one_or_none()


def _surveys_before_production(session, field):
    """Production from 2010; every survey in 2008-2009 (no gas produced at any survey)."""
    add_volumetric_history(session, field, survey_every_months=10**6)  # production only
    well = sorted(field.wells, key=lambda w: w.name)[0]
    for k in range(9):
        session.add(
            PressureSurvey(
                well_id=well.id,
                survey_date=dt.date(2008, 1, 1) + dt.timedelta(days=60 * k),
                pressure_psia=5000.0 - k,
                gauge_depth_ft=field.datum_depth_ft,
            )
        )
    session.flush()


def test_a_field_surveyed_only_before_production_does_not_stop_the_portfolio(db, session):
    first = make_field(session, name="Alder")
    add_volumetric_history(session, first)
    odd = make_field(session, name="Birch")
    _surveys_before_production(session, odd)
    last = make_field(session, name="Cedar")
    add_volumetric_history(session, last)
    job = jobs.enqueue_portfolio_recompute(session, reason="test")
    session.commit()
    runner.drain(db)
    session.expire_all()
    done = session.get(Job, job.id)
    assert done.status == "done"
    assert _latest(session, first.id).status == "ok"
    assert _latest(session, last.id).status == "ok"  # before the fix: never reached
    odd_estimate = _latest(session, odd.id)
    assert "cumulative production" in odd_estimate.message  # why material balance cannot judge
    # no p/z estimate: refused, or (since engine 0.6.2) carried by the field's volumetric estimate
    assert odd_estimate.status in ("refused", "error") or odd_estimate.basis_model == "volumetric"


def _boom_for(name, real):
    def analyse(inputs):
        if inputs.datum_depth_ft == 10001.0:  # the field picked by its datum (names are not inputs)
            raise ZeroDivisionError(f"injected failure for {name}")
        return real(inputs)

    return analyse


def test_an_unforeseen_failure_is_isolated_reported_and_shown_as_stale(db, session, monkeypatch):
    good = make_field(session, name="Alder")
    add_volumetric_history(session, good)
    bad = make_field(session, name="Birch", datum_ft=10001.0)
    add_volumetric_history(session, bad)
    after = make_field(session, name="Cedar")
    add_volumetric_history(session, after)
    jobs.enqueue_field_recompute(session, [bad.id], reason="first")
    session.commit()
    runner.drain(db)  # Birch gets an estimate while the engine works
    session.expire_all()
    old = _latest(session, bad.id)
    assert old.status == "ok"

    monkeypatch.setattr(recompute, "analyse_field", _boom_for("Birch", recompute.analyse_field))
    session.execute(PressureSurvey.__table__.update().values(pressure_psia=PressureSurvey.pressure_psia - 1))
    job = jobs.enqueue_portfolio_recompute(session, reason="settings changed")
    session.commit()
    runner.drain(db)
    session.expire_all()
    done = session.get(Job, job.id)
    assert done.status == "done"
    assert "1 of 3 fields could not be recomputed" in done.error and "Birch: ZeroDivisionError" in done.error
    assert _latest(session, bad.id).id == old.id  # the old estimate stays ...
    failure = session.get(RecomputeFailure, bad.id)
    assert failure is not None and "injected failure" in failure.error and failure.job_id == job.id
    assert _latest(session, after.id).status == "ok"  # ... and the fields after it were recomputed
    assert session.get(RecomputeFailure, after.id) is None

    monkeypatch.undo()
    jobs.enqueue_field_recompute(session, [bad.id], reason="fixed")
    session.commit()
    runner.drain(db)
    session.expire_all()
    assert _latest(session, bad.id).id != old.id
    assert session.get(RecomputeFailure, bad.id) is None  # current again


def test_a_field_job_that_fails_unforeseen_ends_failed_with_the_reason(db, session, monkeypatch):
    bad = make_field(session, name="Birch", datum_ft=10001.0)
    add_volumetric_history(session, bad)
    monkeypatch.setattr(recompute, "analyse_field", _boom_for("Birch", recompute.analyse_field))
    (job,) = jobs.enqueue_field_recompute(session, [bad.id], reason="test")
    session.commit()
    assert runner.drain(db) == 1  # ran once, not retried: the failure is not the database's
    session.expire_all()
    failed = session.get(Job, job.id)
    assert failed.status == "failed" and "ZeroDivisionError" in failed.error
    assert session.get(RecomputeFailure, bad.id).job_id == job.id
