"""A review of part of the portfolio (workflow.create_review's asset_ids and field_ids), on both
databases: a field left out of last year's review enters this year's reconciliation as new; a
scope by asset takes every field of the asset; a bad scope (unknown, empty, outside the user's
assets) is refused with a message naming it and adds nothing."""

import datetime as dt

import pytest
from sqlalchemy import func, select

from server.db.models import ReservesReview
from server.services.reserves import reconcile, workflow
from server.services.reserves.rules import ReservesError
from tests.factories import make_field

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


def test_a_scope_by_asset_takes_every_field_of_the_asset_and_adds_single_fields(session, portfolio, people):
    east = make_field(session, name="Eastholm", asset="East")
    review = workflow.create_review(
        session, people["eng"], "YE24", YE24, asset_ids=[east.asset_id], field_ids=[portfolio["up"].id]
    )
    assert set(reconcile.bookings_of(session, review.id)) == {east.id, portfolio["up"].id}
    only_north = workflow.create_review(
        session, people["eng"], "YE24 North", YE24, asset_ids=[portfolio["up"].asset_id]
    )
    assert set(reconcile.bookings_of(session, only_north.id)) == {portfolio["up"].id, portfolio["low"].id}


def test_a_scope_outside_the_users_assets_or_unknown_is_refused(session, portfolio, people):
    east = make_field(session, name="Eastholm", asset="East")
    north = portfolio["up"].asset_id
    cases = [
        ({"asset_ids": [987654]}, "asset_ids: no asset 987654"),
        (
            {"field_ids": [east.id], "permitted_asset_ids": {north}},
            f"field {east.id} is outside the assets you may",
        ),
        ({"asset_ids": [east.asset_id], "permitted_asset_ids": {north}}, "not among the assets you may book"),
        ({"permitted_asset_ids": {north}}, "whole portfolio needs access to every asset"),
    ]
    for kw, words in cases:
        with pytest.raises(ReservesError, match=words):
            workflow.create_review(session, people["eng"], "YE24", YE24, **kw)
    assert session.execute(select(func.count(ReservesReview.id))).scalar_one() == 0
    # within the user's assets it is accepted
    ok = workflow.create_review(
        session, people["eng"], "YE24", YE24, field_ids=[portfolio["low"].id], permitted_asset_ids={north}
    )
    assert set(reconcile.bookings_of(session, ok.id)) == {portfolio["low"].id}
