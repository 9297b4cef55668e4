"""services/reserves/movements.py on both databases: the waterfall closes for every group, the
ranking, the reserves replacement ratio worked by hand, a field's 2P history and a review with
no earlier approved review.

The roll-forward closing = opening - production + revisions + extensions and discoveries +
improved recovery + acquisitions - disposals is the usual reserves reconciliation (common
practice). The reserves replacement ratio, reserves added in the period over production in the
period, is common practice too (no single published definition; the split into organic and
"with acquisitions and disposals" is how companies usually quote it, from memory). Expected
numbers are worked by hand in movements_case.py.
"""

from types import SimpleNamespace

import pytest

from server.services.reserves import booking as bk
from server.services.reserves import movements as mv
from server.services.reserves import reconcile, views, workflow

from .movements_case import build_two_years


@pytest.fixture
def case(session, people):
    return build_two_years(session, people["eng"], people["appr"])


def test_every_waterfall_runs_from_opening_to_closing(session, case):
    m = mv.movements(session, case["ye25"])
    assert m.previous_id == case["ye24"].id and m.previous_name == "Year-end 2024"
    assert m.groups == ["portfolio", "asset East", "asset North", "asset South"]
    assert {(w.group, w.category) for w in m.waterfalls} == {
        (g, c) for g in m.groups for c in ("1P", "2P", "3P")
    }
    for w in m.waterfalls:
        assert [s.label for s in w.steps] == [
            "production",
            "revisions",
            "extensions and discoveries",
            "improved recovery",
            "acquisitions",
            "disposals",
        ]
        assert w.opening_bscf + sum(s.delta_bscf for s in w.steps) == pytest.approx(w.closing_bscf, abs=5e-4)
        assert w.balances
    # the ends are the two reviews' booked totals as the review page adds them (views.category_totals)
    opening = {(t.group, t.category): t.gas_bscf for t in views.review_detail(session, case["ye24"]).totals}
    closing = {(t.group, t.category): t.gas_bscf for t in views.review_detail(session, case["ye25"]).totals}
    for w in m.waterfalls:
        assert w.opening_bscf == pytest.approx(opening[(w.group, w.category)])
        assert w.closing_bscf == pytest.approx(closing[(w.group, w.category)])
    port = next(w for w in m.waterfalls if (w.group, w.category) == ("portfolio", "2P"))
    # by hand: 85.5 - 2.1 (1 + 0.5 + 0.6) - 1 (1 - 1 - 1) + 6 + 2 + 1 - 0 = 91.4
    assert port.opening_bscf == pytest.approx(85.5) and port.closing_bscf == pytest.approx(91.4)
    assert [s.delta_bscf for s in port.steps] == pytest.approx([-2.1, -1.0, 6.0, 2.0, 1.0, 0.0])


def test_fields_are_ranked_by_their_non_production_change(session, case):
    ranked = [c for c in mv.movements(session, case["ye25"]).ranking if c.category == "2P"]
    assert [(c.field_name, c.change_bscf) for c in ranked] == [
        ("Newdale", pytest.approx(6.0)),  # new: opens at zero
        ("Upland", pytest.approx(3.0)),  # 48 -> 50 with 1 produced
        ("Southcombe", pytest.approx(-1.0)),  # 12 -> 10.4 with 0.6 produced
        ("Eastfold", pytest.approx(0.0)),  # ties by name
        ("Lowmoor", pytest.approx(0.0)),  # 21.5 -> 21 with 0.5 produced: +1 bought, -1 revised
    ]
    up = ranked[1]
    assert up.production_bscf == pytest.approx(1.0) and up.reason_key == "improved_recovery_bscf"
    assert up.reason == "improved recovery +2.000, revisions +1.000 (assigned by eng-a)" and up.assigned
    south = ranked[2]
    assert south.reason_key == "revisions_bscf" and "not assigned yet" in south.reason
    assert ranked[0].presence == "new" and ranked[3].reason == "no change"


def test_replacement_ratio_by_hand(session, case):
    rrr = {(r.group, r.category): r for r in mv.movements(session, case["ye25"]).replacement}
    port, north, south, east = (
        rrr[(g, "2P")] for g in ("portfolio", "asset North", "asset South", "asset East")
    )
    # organic = revisions + extensions + improved recovery; acquisitions - disposals apart
    assert (port.production_bscf, port.organic_additions_bscf, port.net_acquisitions_bscf) == pytest.approx(
        (2.1, 7.0, 1.0)
    )
    assert port.organic_ratio == pytest.approx(7.0 / 2.1) and port.ratio_with_acquisitions == pytest.approx(
        8.0 / 2.1
    )
    assert north.organic_ratio == pytest.approx(2.0 / 1.5) and north.ratio_with_acquisitions == pytest.approx(
        2.0
    )
    assert south.organic_ratio == pytest.approx(5.0 / 0.6) == south.ratio_with_acquisitions
    assert east.production_bscf == 0.0 and east.organic_ratio is None and east.ratio_with_acquisitions is None


def test_zero_production_leaves_the_ratio_undefined_and_a_negative_one_is_kept():
    line = dict.fromkeys(
        ("opening_bscf", "improved_recovery_bscf", "acquisitions_bscf", "disposals_bscf"), 0.0
    )
    lines = [
        SimpleNamespace(**line, field_name="A", asset_name="X", category="2P", production_bscf=0.0,
                        revisions_bscf=2.0, extensions_discoveries_bscf=0.0, closing_bscf=2.0),
        SimpleNamespace(**line, field_name="B", asset_name="Y", category="2P", production_bscf=2.0,
                        revisions_bscf=-3.0, extensions_discoveries_bscf=0.0, closing_bscf=-5.0),
    ]  # fmt: skip
    rrr = {r.group: r for r in mv.replacement(lines)}
    assert rrr["asset X"].organic_ratio is None
    assert rrr["asset Y"].organic_ratio == pytest.approx(-1.5)  # revised down more than produced
    assert rrr["portfolio"].organic_ratio == pytest.approx(-1.0 / 2.0)


def test_a_field_s_2p_over_the_reviews(session, case):
    reviews = mv.history_reviews(session, case["ye25"])
    assert [(r.name, r.status) for r in reviews] == [
        ("Year-end 2024", "approved"),
        ("Year-end 2025", "draft"),
    ]
    up = mv.field_history(session, reviews, case["fields"]["Upland"])
    assert [(p.reserves_2p_bscf, p.this_review, p.status) for p in up] == [
        (pytest.approx(48.0), False, "approved"),
        (pytest.approx(50.0), True, "draft"),
    ]
    new = mv.field_history(session, reviews, case["fields"]["Newdale"])
    assert [(p.in_review, p.reserves_2p_bscf) for p in new] == [(False, None), (True, pytest.approx(6.0))]
    m = mv.movements(session, case["ye25"])
    assert [c.field_name for c in m.fields] == ["Eastfold", "Lowmoor", "Newdale", "Southcombe", "Upland"]
    assert mv.default_field(m).field_name == "Newdale"  # the largest 2P change


def test_a_review_with_no_earlier_approved_review_shows_no_movements(session, case):
    m = mv.movements(session, case["ye24"])
    assert m.previous_id is None and m.waterfalls == m.ranking == m.replacement == []
    assert m.groups == ["portfolio"] and len(m.fields) == 4  # the history still lists its fields
    (only,) = mv.field_history(session, mv.history_reviews(session, case["ye24"]), case["fields"]["Upland"])
    assert only.this_review and only.status == "approved" and only.reserves_2p_bscf == pytest.approx(48.0)


def test_a_user_limited_to_an_asset_sees_its_fields_only(session, case):
    m = mv.movements(session, case["ye25"], asset_ids={case["assets"]["Southcombe"]})
    assert m.groups == ["portfolio", "asset South"]
    assert {c.field_name for c in m.ranking} == {"Southcombe", "Newdale"}
    port = next(w for w in m.waterfalls if (w.group, w.category) == ("portfolio", "2P"))
    assert (port.opening_bscf, port.closing_bscf) == pytest.approx((12.0, 16.4))
    assert [c.field_name for c in m.fields] == ["Newdale", "Southcombe"]


def test_the_history_takes_the_newest_approved_revision_of_each_date(session, case, people):
    ye24 = case["ye24"]
    rev2 = workflow.reopen(session, people["appr"], ye24, "late production correction")
    snap, booking = reconcile.bookings_of(session, rev2.id)[case["fields"]["Upland"]]
    change = bk.BookingChange(
        override_best_bscf=47.0, override_reason="correction", justification="corrected"
    )
    bk.change_booking(session, people["eng"], rev2, snap, booking, change)
    reconcile.rebuild(session, rev2)
    workflow.submit(session, people["eng"], rev2)
    workflow.approve(session, people["appr2"], rev2, "corrected")
    reviews = mv.history_reviews(session, case["ye25"])
    assert [(r.name, r.revision) for r in reviews] == [("Year-end 2024", 2), ("Year-end 2025", 1)]
    up = mv.field_history(session, reviews, case["fields"]["Upland"])
    assert [p.reserves_2p_bscf for p in up] == [pytest.approx(47.0), pytest.approx(50.0)]
