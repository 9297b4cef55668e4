"""services/reserves on both databases: freezing, bookings, reconciliation, the workflow and the lock.

Expected numbers are worked by hand from the fixture's invented inputs (conftest.py): remaining
= case EUR - gas produced to the effective date (SPE-PRMS 2018, reserves are remaining
quantities as of a given date, from memory); the reconciliation identity closing = opening -
production + revisions + extensions + improved recovery + acquisitions - disposals is the
usual reserves roll-forward (common practice).
"""

import datetime as dt

import pytest
from sqlalchemy import delete, select

from server.db.models import (
    AuditEvent,
    Booking,
    Field,
    ProductionMonth,
    ReconciliationLine,
    ReservesReview,
    ReviewField,
)
from server.services.reserves import booking as bk
from server.services.reserves import reconcile, rules, views, workflow
from server.services.reserves.rules import FourEyesError, ReservesError, ReviewLockedError
from tests.factories import make_field

from .conftest import add_estimate, add_production

YE24, YE25 = dt.date(2024, 12, 31), dt.date(2025, 12, 31)


def _rows(session, review):
    return {r.field_name: r for r in views.field_bookings(session, review)}


def _pair(session, review, name):
    return next(p for p in reconcile.bookings_of(session, review.id).values() if p[0].field_name == name)


def test_create_freezes_each_field_with_its_volumes_and_production(session, portfolio, people):
    r = workflow.create_review(session, people["eng"], "Year-end 2024", YE24)
    rows = _rows(session, r)
    up, low = rows["Upland"], rows["Lowmoor"]
    # Upland: 24 months of 1/12 Bscf to the end of 2024; basis EUR 40/50/60 less 2 Bscf
    assert up.volume_source == "basis" and up.produced_gas_bscf == pytest.approx(2.0)
    assert (up.booked_low_bscf, up.booked_best_bscf, up.booked_high_bscf) == pytest.approx((38.0, 48.0, 58.0))
    # 30 stb/MMscf to date, carried to the remaining gas: 48 Bscf * 1000 MMscf/Bscf * 30
    assert up.condensate_gas_ratio_stb_per_mmscf == pytest.approx(30.0)
    assert up.booked_condensate_best_stb == pytest.approx(48.0 * 1000 * 30)
    # Lowmoor: forecast commercial EUR 18/22/27 less 0.5 Bscf produced in 2024
    assert (
        low.volume_source == "forecast" and low.forecast["cases"]["best"]["stop_reason"] == "economic limit"
    )
    assert (low.booked_low_bscf, low.booked_best_bscf, low.booked_high_bscf) == pytest.approx(
        (17.5, 21.5, 26.5)
    )
    assert low.categories == ("1P", "2P", "3P") and up.status == "developed_producing"
    # arithmetic totals: portfolio 2P = 48 + 21.5
    tot = {(t.group, t.category): t for t in views.category_totals(list(rows.values()))}
    assert tot[("portfolio", "2P")].gas_bscf == pytest.approx(69.5)
    assert tot[("asset North", "1P")].gas_bscf == pytest.approx(55.5)
    # mid-month effective date: December has not ended, so 23 months on Upland
    with pytest.raises(ReservesError, match="name: contains a NUL character"):  # PostgreSQL text refuses it
        workflow.create_review(session, people["eng"], "a\x00b", YE24)
    r2 = workflow.create_review(session, people["eng"], "Mid December", dt.date(2024, 12, 15))
    assert _rows(session, r2)["Upland"].produced_gas_bscf == pytest.approx(23.0 / 12)


def test_snapshot_is_a_copy_newer_estimates_listed_and_refresh_audited(session, portfolio, people):
    r = workflow.create_review(session, people["eng"], "YE24", YE24)
    e_old = _rows(session, r)["Upland"].estimate_id
    newer = add_estimate(session, portfolio["up"], eur=(45.0, 55.0, 65.0))
    add_production(session, portfolio["up"], dt.date(2020, 1, 1), 12, 1e6 / 12)  # late-loaded history
    up = _rows(session, r)["Upland"]
    assert (up.estimate_id, up.booked_best_bscf, up.newer_estimate_id) == (
        e_old,
        pytest.approx(48.0),
        newer.id,
    )
    assert workflow.newer_estimates(session, r) == {portfolio["up"].id: newer.id}
    workflow.refresh_field(session, people["eng2"], r, portfolio["up"].id)
    up = _rows(session, r)["Upland"]
    assert up.estimate_id == newer.id and up.produced_gas_bscf == pytest.approx(3.0)
    assert up.booked_best_bscf == pytest.approx(52.0) and up.newer_estimate_id is None
    ev = session.execute(select(AuditEvent).where(AuditEvent.action == "refresh")).scalar_one()
    assert ev.field_id == portfolio["up"].id and f"from estimate {e_old} to {newer.id}" in ev.summary


def test_override_needs_reason_and_nesting_and_alert_needs_justification(session, portfolio, people):
    add_estimate(
        session,
        portfolio["low"],
        eur=(20.0, 25.0, 30.0),
        flags=[{"code": "aquifer_suspected", "severity": "alert", "title": "t", "reason": "r"}],
    )
    r = workflow.create_review(session, people["eng"], "YE24", YE24)
    snap, b = _pair(session, r, "Upland")
    with pytest.raises(ReservesError, match="override_reason: an overridden volume needs a reason"):
        bk.change_booking(session, people["eng"], r, snap, b, bk.BookingChange(override_best_bscf=44.0))
    with pytest.raises(ReservesError, match="must nest"):
        bk.change_booking(
            session, people["eng"], r, snap, b, bk.BookingChange(override_best_bscf=30.0, override_reason="x")
        )
    assert b.override_best_bscf is None  # nothing changed
    bk.change_booking(
        session,
        people["eng"],
        r,
        snap,
        b,
        bk.BookingChange(override_best_bscf=44.0, override_reason="new fault mapped"),
    )
    blockers = workflow.submission_blockers(session, r)
    assert any("Upland: a justification is required (a volume is overridden)" in x for x in blockers)
    assert any(
        "Lowmoor: a justification is required (the estimate carries an alert flag (aquifer_suspected))" in x
        for x in blockers
    )
    with pytest.raises(ReservesError, match="cannot be submitted"):
        workflow.submit(session, people["eng"], r)
    bk.change_booking(
        session, people["eng"], r, snap, b, bk.BookingChange(justification="fault seen on seismic")
    )
    lsnap, lb = _pair(session, r, "Lowmoor")
    bk.change_booking(
        session,
        people["eng"],
        r,
        lsnap,
        lb,
        bk.BookingChange(
            resource_class="contingent", status="development_pending", justification="awaiting sanction"
        ),
    )
    assert _rows(session, r)["Lowmoor"].categories == ("1C", "2C", "3C")
    with pytest.raises(ReservesError, match="status: for reserves choose one of"):
        bk.change_booking(
            session,
            people["eng"],
            r,
            lsnap,
            lb,
            bk.BookingChange(resource_class="reserves", status="development_pending"),
        )
    workflow.submit(session, people["eng"], r)
    assert r.status == "submitted"


def _approved_2024(session, people):
    r = workflow.create_review(session, people["eng"], "YE24", YE24)
    workflow.submit(session, people["eng"], r)
    workflow.approve(session, people["appr"], r, "as presented")
    return r


def test_reconciliation_against_last_year_with_new_and_left_fields(session, portfolio, people):
    gone = make_field(session, name="Gone", asset="South")
    add_estimate(session, gone, eur=(5.0, 6.0, 7.0))
    last = _approved_2024(session, people)
    new = make_field(session, name="Newfield", asset="South")  # before the delete: SQLite reuses a top id
    session.execute(delete(Field).where(Field.id == gone.id))  # left the portfolio
    for obj in list(session.identity_map.values()):
        if obj is gone or getattr(obj, "field_id", 0) == gone.id:
            session.expunge(obj)
    add_estimate(session, new, eur=(8.0, 10.0, 12.0))
    add_production(session, portfolio["up"], dt.date(2026, 1, 1), 3, 1e6 / 12)  # after the date: not counted
    r = workflow.create_review(session, people["eng"], "YE25", YE25)
    assert reconcile.last_approved(session, r).id == last.id
    lines = {(ln.field_name, ln.category): ln for ln in reconcile.lines_of(session, r.id)}
    up = lines[("Upland", "2P")]
    # 2P: opening 48, 1 Bscf produced in 2025, closing 50 - 3 = 47: no revision
    assert (up.opening_bscf, up.production_bscf, up.closing_bscf) == pytest.approx((48.0, 1.0, 47.0))
    assert up.revisions_bscf == pytest.approx(0.0) and up.presence == "both"
    nf, gl = lines[("Newfield", "1P")], lines[("Gone", "3P")]
    assert (nf.presence, nf.opening_bscf, nf.closing_bscf, nf.revisions_bscf) == ("new", 0.0, 8.0, 8.0)
    assert (gl.presence, gl.opening_bscf, gl.closing_bscf, gl.revisions_bscf) == ("left", 7.0, 0.0, -7.0)
    # the engineer calls the new field an extension and the departure a disposal
    for cat, v in (("1P", 8.0), ("2P", 10.0), ("3P", 12.0)):
        reconcile.assign(
            session, people["eng"], r, new.id, cat, {"revisions_bscf": 0.0, "extensions_discoveries_bscf": v}
        )
    reconcile.assign(session, people["eng"], r, gone.id, "3P", {"revisions_bscf": 0.0, "disposals_bscf": 7.0})
    assert workflow.submission_blockers(session, r) == []
    # an unbalanced split is refused at submission, naming the field, its asset and the portfolio
    reconcile.assign(session, people["eng"], r, gone.id, "2P", {"revisions_bscf": 0.0, "disposals_bscf": 5.0})
    problems = workflow.submission_blockers(session, r)
    assert problems == [
        "Gone 2P: out of balance by -1.0000 Bscf",
        "asset South 2P: out of balance by -1.0000 Bscf",
        "portfolio 2P: out of balance by -1.0000 Bscf",
    ]
    with pytest.raises(ReservesError, match="Gone 2P: out of balance"):
        workflow.submit(session, people["eng"], r)
    with pytest.raises(ReservesError, match="disposals_bscf: cannot be negative"):
        reconcile.assign(session, people["eng"], r, gone.id, "2P", {"disposals_bscf": -6.0})
    reconcile.reset(session, people["eng"], r, gone.id, "2P")
    assert workflow.submission_blockers(session, r) == []
    tot = {(t.group, t.category): t for t in reconcile.totals(reconcile.lines_of(session, r.id))}
    p2 = tot[("portfolio", "2P")]
    assert p2.closing_bscf == pytest.approx(
        p2.opening_bscf
        - p2.production_bscf
        + p2.revisions_bscf
        + p2.extensions_discoveries_bscf
        - p2.disposals_bscf
    )


def test_two_p_change_above_team_threshold_needs_justification(session, portfolio, people):
    _approved_2024(session, people)
    # 2P 48 -> 53 with 1 Bscf produced in 2025: 53 - (48 - 1) = 6 Bscf, 12.5 % of last year's 48
    add_estimate(session, portfolio["up"], eur=(40.0, 56.0, 60.0))
    r = workflow.create_review(session, people["eng"], "YE25", YE25)
    assert any(
        "Upland: a justification is required (2P changes by 12% of last year's 48.000 Bscf beyond "
        "the 1.000 Bscf produced since" in x
        for x in workflow.submission_blockers(session, r)
    )
    rules.set_reserves_settings(session, people["appr"], justify_2p_change_frac=0.2)
    assert workflow.submission_blockers(session, r) == []
    with pytest.raises(ReservesError, match="justify_2p_change_frac: must be a fraction"):
        rules.set_reserves_settings(session, people["appr"], justify_2p_change_frac=-1)


def test_four_eyes_and_roles_of_the_workflow(session, portfolio, people):
    r = workflow.create_review(session, people["eng"], "YE24", YE24)
    snap, b = _pair(session, r, "Upland")
    bk.change_booking(session, people["appr"], r, snap, b, bk.BookingChange(status="developed_non_producing"))
    workflow.submit(session, people["eng"], r)
    with pytest.raises(FourEyesError, match="another approver must approve it"):
        workflow.approve(session, people["appr"], r, "")
    assert r.status == "submitted"
    with pytest.raises(ReservesError, match="reason: required"):
        workflow.return_to_draft(session, people["appr2"], r, "  ")
    workflow.return_to_draft(session, people["appr2"], r, "check Lowmoor's forecast")
    workflow.submit(session, people["eng"], r)
    rules.set_reserves_settings(session, people["appr2"], four_eyes=False)
    workflow.approve(session, people["appr"], r, "ok")
    assert (r.status, r.approved_by_name) == ("approved", "appr-a")


def _state(session, review_id):
    def cols(o):
        return {c.key: getattr(o, c.key) for c in o.__table__.columns}

    snaps = session.execute(select(ReviewField).where(ReviewField.review_id == review_id)).scalars().all()
    books = session.execute(
        select(Booking).where(Booking.review_field_id.in_([s.id for s in snaps]))
    ).scalars()
    lines = session.execute(
        select(ReconciliationLine).where(ReconciliationLine.review_id == review_id)
    ).scalars()
    return (
        cols(session.get(ReservesReview, review_id)),
        sorted(map(str, map(cols, snaps))),
        sorted(map(str, map(cols, books))),
        sorted(map(str, map(cols, lines))),
    )


def test_an_approved_review_cannot_be_changed_by_any_service_and_reopen_copies(session, portfolio, people):
    r = _approved_2024(session, people)
    session.expire_all()
    before = _state(session, r.id)
    snap, b = _pair(session, r, "Upland")
    uid = portfolio["up"].id
    attempts = [
        lambda: bk.change_booking(session, people["eng"], r, snap, b, bk.BookingChange(justification="x")),
        lambda: workflow.refresh_field(session, people["eng"], r, uid),
        lambda: reconcile.assign(session, people["eng"], r, uid, "2P", {"revisions_bscf": 1.0}),
        lambda: reconcile.reset(session, people["eng"], r, uid, "2P"),
        lambda: reconcile.rebuild(session, r),
        lambda: workflow.submit(session, people["eng"], r),
    ]
    for attempt in attempts:
        with pytest.raises(ReviewLockedError, match="is approved: it cannot be changed; reopen it"):
            attempt()
    for attempt in (
        lambda: workflow.approve(session, people["appr2"], r, ""),
        lambda: workflow.return_to_draft(session, people["appr2"], r, "why"),
    ):
        with pytest.raises(ReservesError, match="is approved"):
            attempt()
    # the ORM itself refuses, whichever code path tries
    for change in (
        lambda: setattr(b, "justification", "edited"),
        lambda: setattr(snap, "eur_best_bscf", 1.0),
        lambda: setattr(r, "approval_comment", "edited"),
        lambda: session.delete(snap),
    ):
        with session.begin_nested() as sp:
            change()
            with pytest.raises(ReviewLockedError, match="is approved"):
                session.flush()
            sp.rollback()
        session.expire_all()
    assert _state(session, r.id) == before
    new = workflow.reopen(session, people["appr2"], r, "late production correction")
    assert (new.revision, new.status, new.reopened_from_id) == (2, "draft", r.id)
    assert [x.booked_best_bscf for x in views.field_bookings(session, new)] == [
        x.booked_best_bscf for x in views.field_bookings(session, r)
    ]
    nsnap, nb = _pair(session, new, "Upland")
    bk.change_booking(
        session,
        people["eng"],
        new,
        nsnap,
        nb,
        bk.BookingChange(override_best_bscf=47.0, override_reason="correction", justification="j"),
    )
    session.expire_all()
    assert _state(session, r.id) == before
    with pytest.raises(ReservesError, match="has a newer revision"):
        workflow.reopen(session, people["appr2"], r, "again")


def test_a_two_p_fall_that_is_the_years_production_needs_no_justification(session, portfolio, people):
    """A field that produced its booked gas revised nothing: last year's 2P less the gas produced
    since is this year's 2P, whatever share of last year's 2P that production is (the team's
    threshold is held against the change net of production)."""
    _approved_2024(session, people)  # Upland 2P 48 (EUR 50, 2 Bscf produced by 2024)
    second = sorted(portfolio["up"].wells, key=lambda w: w.name)[1]
    for m in range(1, 13):  # 6 Bscf more in 2025 on the second well: 7 Bscf in the year
        session.add(ProductionMonth(well=second, month=dt.date(2025, m, 1), gas_mscf=0.5e6))
    session.flush()
    r = workflow.create_review(session, people["eng"], "YE25", YE25)
    up = _rows(session, r)["Upland"]
    assert up.booked_best_bscf == pytest.approx(50.0 - 9.0)  # 14.6 % below last year's 48
    assert not any("Upland" in x for x in workflow.submission_blockers(session, r))
