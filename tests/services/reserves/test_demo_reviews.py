"""The demo's reserves reviews through the real path (demo rows -> recompute jobs -> estimates ->
reviews through the workflow services), on both databases: last year's approved by someone
other than its preparer, this year's in draft, and the reconciliation between them balancing
for every field, asset and the portfolio with every line of the change in use. One test per
database: a demo load with its recomputes takes seconds."""

import pytest
from sqlalchemy import select

from server.db.models import AuditEvent, ReservesReview
from server.services.demo import load_demo
from server.services.jobs import runner
from server.services.reserves import demo_reviews, reconcile, views, workflow
from server.services.reserves.rules import ReviewLockedError

NEW, ACQUIRED, REVISED = demo_reviews.NEW_FIELD, demo_reviews.ACQUIRED, demo_reviews.HELD_BACK


def _check_reviews(s, last, this):
    assert (last.status, this.status) == ("approved", "draft")
    assert last.effective_date < this.effective_date
    assert reconcile.last_approved(s, this).id == last.id
    # four eyes: prepared by one invented account, approved by another
    assert last.approved_by_id is not None and last.created_by_id is not None
    assert last.approved_by_id not in workflow.preparers(s, last)
    actions = set(
        s.execute(select(AuditEvent.action).where(AuditEvent.entity_type == "reserves_review")).scalars()
    )
    assert {"create", "book", "submit", "approve", "reconcile"} <= actions


def _check_reconciliation(s, this):
    lines = reconcile.lines_of(s, this.id)
    assert lines and reconcile.balance_problems(lines) == []  # every field, asset and the portfolio
    by_field = {(ln.field_name, ln.category): ln for ln in lines}
    presence = {ln.field_name: ln.presence for ln in lines}
    assert presence.pop(NEW) == presence.pop(ACQUIRED) == "new"
    assert set(presence.values()) == {"both"}
    new = by_field[(NEW, "2P")]
    assert new.extensions_discoveries_bscf > 0 and new.revisions_bscf == 0
    assert by_field[(ACQUIRED, "2P")].acquisitions_bscf > 0
    assert by_field[(REVISED, "2P")].revisions_bscf > 0.5  # last year 2P was held at 1P
    portfolio = {t.category: t for t in reconcile.totals(lines) if t.group == "portfolio"}
    for cat in ("1P", "2P", "3P"):
        t = portfolio[cat]
        assert t.opening_bscf > 0 and t.production_bscf > 0 and t.closing_bscf > 0, cat
        assert t.extensions_discoveries_bscf > 0 and t.acquisitions_bscf > 0, cat
    assert portfolio["2P"].revisions_bscf > 0.5
    booked = {f.field_name: f for f in views.review_detail(s, this).fields}
    assert booked[NEW].override_best_bscf is not None
    assert booked[NEW].override_reason and booked[NEW].justification


def test_demo_reviews_approved_and_draft_reconcile_with_every_line(db):
    with db.session() as s:
        load_demo(s)
    runner.drain(db)
    with db.session() as s:
        last_id, this_id = demo_reviews.load_demo_reviews(s)
    with db.session() as s:
        last, this = s.get(ReservesReview, last_id), s.get(ReservesReview, this_id)
        _check_reviews(s, last, this)
        _check_reconciliation(s, this)
        assert demo_reviews.load_demo_reviews(s) is None  # running it again adds nothing
        with pytest.raises(ReviewLockedError):  # the approved review stays as it was
            reconcile.rebuild(s, last)
