"""The sales-gas factor on both databases: frozen into each snapshot (team default or the field's
own), never changed in an approved review by a later settings change, taken again by a draft
only when a field is refreshed, audited when set, refused out of range; the reconciliation stays
in separator gas and balances.

The expected volumes are worked out by hand from the fixture (``conftest.portfolio``):
Upland's basis EUR best 50 Bscf less 2 Bscf produced 2023-2024 = 48 Bscf separator gas;
Lowmoor's forecast EUR best 22 Bscf less 0.5 Bscf produced in 2024 = 21.5 Bscf.
"""

import datetime as dt

import pytest
from sqlalchemy import select

from server.db.models import AuditEvent, TeamSetting
from server.services.reserves import reconcile, sales_gas, views, workflow
from server.services.reserves.rules import ReservesError

YE24, YE25 = dt.date(2024, 12, 31), dt.date(2025, 12, 31)


def _rows(session, review):
    return {f.field_name: f for f in views.field_bookings(session, review)}


def _approved(session, people, name, date, **kw):
    review = workflow.create_review(session, people["eng"], name, date, **kw)
    workflow.submit(session, people["eng"], review)
    workflow.approve(session, people["appr"], review, "")
    return review


def test_the_default_is_stated_and_each_case_is_the_booked_gas_times_the_factor(session, portfolio, people):
    assert sales_gas.sales_gas_settings(session).sales_gas_frac == 0.95  # documented default
    review = workflow.create_review(session, people["eng"], "YE24", YE24)
    up = _rows(session, review)["Upland"]
    assert (up.sales_gas_frac, up.sales_gas_frac_source) == (0.95, "team")
    assert up.booked_best_bscf == pytest.approx(48.0)
    assert up.booked_sales_best_bscf == pytest.approx(48.0 * 0.95)
    assert up.booked_sales_low_bscf == pytest.approx((40.0 - 2.0) * 0.95)


def test_a_fields_own_factor_wins_and_the_totals_add_the_fields(session, portfolio, people):
    low = portfolio["low"]
    sales_gas.set_sales_gas_settings(session, people["appr"], sales_gas_frac=0.9, by_field={low.id: 0.8})
    review = workflow.create_review(session, people["eng"], "YE24", YE24)
    rows = _rows(session, review)
    assert (rows["Upland"].sales_gas_frac, rows["Upland"].sales_gas_frac_source) == (0.9, "team")
    assert (rows["Lowmoor"].sales_gas_frac, rows["Lowmoor"].sales_gas_frac_source) == (0.8, "field")
    assert rows["Lowmoor"].booked_sales_best_bscf == pytest.approx(21.5 * 0.8)
    total = {(t.group, t.category): t for t in views.review_detail(session, review).totals}
    assert total[("portfolio", "2P")].sales_gas_bscf == pytest.approx(48.0 * 0.9 + 21.5 * 0.8)
    assert total[("portfolio", "2P")].gas_bscf == pytest.approx(48.0 + 21.5)  # separator gas unchanged


def test_an_approved_review_keeps_its_factor_when_the_setting_changes(session, portfolio, people):
    low = portfolio["low"]
    last = _approved(session, people, "YE24", YE24)
    before = _rows(session, last)
    sales_gas.set_sales_gas_settings(session, people["appr"], sales_gas_frac=0.5, by_field={low.id: 0.6})
    session.expire_all()
    after = _rows(session, last)
    for name in ("Upland", "Lowmoor"):
        assert after[name].sales_gas_frac == before[name].sales_gas_frac == 0.95
        assert after[name].booked_sales_best_bscf == before[name].booked_sales_best_bscf
    # a reopened revision copies the frozen factor, not the new setting
    again = workflow.reopen(session, people["appr"], last, "re-check")
    assert _rows(session, again)["Upland"].sales_gas_frac == 0.95
    # a new review takes the setting in force
    this = workflow.create_review(session, people["eng"], "YE25", YE25)
    assert (
        _rows(session, this)["Lowmoor"].sales_gas_frac,
        _rows(session, this)["Upland"].sales_gas_frac,
    ) == (
        0.6,
        0.5,
    )


def test_a_draft_takes_a_new_factor_only_when_the_field_is_refreshed(session, portfolio, people):
    up = portfolio["up"]
    draft = workflow.create_review(session, people["eng"], "YE24", YE24)
    sales_gas.set_sales_gas_settings(session, people["appr"], by_field={up.id: 0.85})
    assert _rows(session, draft)["Upland"].sales_gas_frac == 0.95
    workflow.refresh_field(session, people["eng"], draft, up.id)
    assert _rows(session, draft)["Upland"].sales_gas_frac == 0.85
    event = session.execute(
        select(AuditEvent).where(AuditEvent.action == "refresh").order_by(AuditEvent.id.desc()).limit(1)
    ).scalar_one()
    assert event.before["sales_gas_frac"] == 0.95 and event.after["sales_gas_frac"] == 0.85


def test_the_reconciliation_is_in_separator_gas_and_balances(session, portfolio, people):
    sales_gas.set_sales_gas_settings(session, people["appr"], sales_gas_frac=0.9)
    _approved(session, people, "YE24", YE24)
    sales_gas.set_sales_gas_settings(
        session, people["appr"], sales_gas_frac=0.7
    )  # a factor change is no movement
    this = workflow.create_review(session, people["eng"], "YE25", YE25)
    lines = {(ln.field_name, ln.category): ln for ln in reconcile.lines_of(session, this.id)}
    rows = _rows(session, this)
    # Upland: opening 48 (YE24), 1 Bscf produced in 2025, closing 50 - 3 = 47, no revision
    up = lines[("Upland", "2P")]
    assert (up.opening_bscf, up.production_bscf, up.closing_bscf) == pytest.approx((48.0, 1.0, 47.0))
    assert up.revisions_bscf == pytest.approx(0.0, abs=1e-12)
    assert up.closing_bscf == pytest.approx(rows["Upland"].booked_best_bscf)
    assert reconcile.balance_problems(reconcile.lines_of(session, this.id)) == []


def test_settings_changes_are_audited_and_bad_values_change_nothing(session, portfolio, people):
    low = portfolio["low"]
    sales_gas.set_sales_gas_settings(session, people["appr"], sales_gas_frac=0.92, by_field={low.id: 0.88})
    event = (
        session.execute(
            select(AuditEvent).where(AuditEvent.entity_type == "team_setting").order_by(AuditEvent.id.desc())
        )
        .scalars()
        .first()
    )
    assert event.after == {"sales_gas_frac": 0.92, "sales_gas_frac of Lowmoor": 0.88}
    assert "sales_gas_frac 0.95 → 0.92" in event.summary and "team default → 0.88" in event.summary
    for kw, words in (
        ({"sales_gas_frac": 0.0}, "reserves.sales_gas_frac: must be a fraction above 0"),
        ({"sales_gas_frac": 1.2}, "at most 1"),
        ({"sales_gas_frac": float("nan")}, "reserves.sales_gas_frac"),
        ({"by_field": {low.id: -0.1}}, f"field {low.id}: must be"),
        ({"by_field": {low.id: "abc"}}, f"field {low.id}: must be"),
        ({"by_field": {987654: 0.9}}, "no field 987654"),
        ({"sales_gas_frac": 0.5, "by_field": {"x": 0.9}}, "'x' is not a field id"),
    ):
        with pytest.raises(ReservesError, match=words):
            sales_gas.set_sales_gas_settings(session, people["appr"], **kw)
    now = sales_gas.sales_gas_settings(session)
    assert (now.sales_gas_frac, now.by_field) == (0.92, {low.id: 0.88})
    # back to the team default: the field's entry goes
    sales_gas.set_sales_gas_settings(session, people["appr"], by_field={low.id: None})
    assert sales_gas.sales_gas_settings(session).by_field == {}
    assert session.get(TeamSetting, sales_gas.BY_FIELD_KEY).value == {}
