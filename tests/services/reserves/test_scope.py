"""A review of part of the portfolio (workflow.create_review's field_ids), on both databases: a
field left out of last year's review enters this year's reconciliation as new, and a bad scope
is refused with a message naming it and adds nothing."""

import datetime as dt

import pytest
from sqlalchemy import func, select

from server.db.models import ReservesReview
from server.services.reserves import reconcile, workflow
from server.services.reserves.rules import ReservesError

YE24, YE25 = dt.date(2024, 12, 31), dt.date(2025, 12, 31)


def test_a_field_out_of_last_years_scope_is_new_this_year(session, portfolio, people):
    up, low = portfolio["up"], portfolio["low"]
    last = workflow.create_review(session, people["eng"], "YE24", YE24, field_ids=[up.id])
    assert set(reconcile.bookings_of(session, last.id)) == {up.id}
    workflow.submit(session, people["eng"], last)
    workflow.approve(session, people["appr"], last, "")
    this = workflow.create_review(session, people["eng"], "YE25", YE25)
    presence = {(ln.field_name, ln.category): ln.presence for ln in reconcile.lines_of(session, this.id)}
    assert presence[("Upland", "2P")] == "both" and presence[("Lowmoor", "2P")] == "new"
    # Lowmoor: forecast EUR 22 less 1 Bscf produced to the end of 2025 (0.5 a year from 2024)
    new = next(
        ln for ln in reconcile.lines_of(session, this.id) if ln.field_id == low.id and ln.category == "2P"
    )
    assert (new.opening_bscf, new.closing_bscf) == pytest.approx((0.0, 21.0))
    assert reconcile.balance_problems(reconcile.lines_of(session, this.id)) == []


@pytest.mark.parametrize(
    ("field_ids", "words"),
    [([], "at least one field"), ([987654], "no field 987654"), (["x"], "a list of field ids")],
)
def test_a_bad_scope_is_refused_and_adds_nothing(session, portfolio, people, field_ids, words):
    with pytest.raises(ReservesError, match=words) as e:
        workflow.create_review(session, people["eng"], "YE24", YE24, field_ids=field_ids)
    assert "field_ids" in str(e.value)
    assert session.execute(select(func.count(ReservesReview.id))).scalar_one() == 0
