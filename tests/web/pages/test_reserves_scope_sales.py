"""The reserves forms for a review's scope and the sales-gas factor, on both databases: the
create form books ticked assets and fields (an unknown one is refused beside the scope and
creates nothing); the settings form sets the team default and a field's own factor (a bad value
saves nothing); the review and booking pages state the frozen factor and the sales gas."""

import re

from sqlalchemy import select

from server.db.models import AuditEvent, ReservesReview, ReviewField
from tests.factories import make_field
from tests.web.pages.test_reserves_forms import _portfolio, _post


def _review_id(r) -> int:
    assert r.status_code == 303, r.text[-800:]
    return int(re.search(r"/reserves/(\d+)\?changed=\d+", r.headers["location"]).group(1))


def test_create_form_scopes_by_asset_and_field_and_refuses_an_unknown_one(db, login_as):
    up, low = _portfolio(db)  # Upland in North, Lowmoor in South
    with db.session() as s:
        east = make_field(s, name="Eastholm", asset="East")
        s.commit()
        east_id, east_asset = east.id, east.asset_id
    eng = login_as("engineer", username="eng")
    page = eng.get("/reserves").text
    assert f'id="scope-asset-{east_asset}"' in page and f'id="scope-field-{low}"' in page
    r = eng.post(
        "/reserves",
        data={
            "csrf_token": eng.headers["X-CSRF-Token"],
            "name": "YE24",
            "effective_date": "2024-12-31",
            "scope_asset": [str(east_asset)],
            "scope_field": [str(up)],
        },
        follow_redirects=False,
    )
    rid = _review_id(r)
    with db.session() as s:
        ids = set(s.execute(select(ReviewField.field_id).where(ReviewField.review_id == rid)).scalars())
    assert ids == {east_id, up}
    r = _post(eng, "/reserves", name="YE25", effective_date="2025-12-31", scope_field="987654")
    assert r.status_code == 422 and 'id="scope-problem"' in r.text and "no field 987654" in r.text
    assert 'id="scope-field-987654"' not in r.text
    with db.session() as s:
        assert s.execute(select(ReservesReview.id)).scalars().all() == [rid]
    # a user limited to some assets cannot create a review (the reconciliation is the portfolio's)
    limited = login_as("engineer", assets=[east_asset], username="limited")
    r = _post(limited, "/reserves", name="L", effective_date="2024-12-31", scope_field=str(east_id))
    assert r.status_code == 403 and "every asset" in r.text


def test_settings_form_sets_the_sales_gas_factor_and_the_pages_show_it(db, login_as):
    up, low = _portfolio(db)
    admin = login_as("admin", username="boss")
    page = admin.get("/admin/settings").text
    assert 'id="sales_gas_pct"' in page and 'value="95"' in page and 'id="sales_field_' in page
    base = {"csrf_token": admin.headers["X-CSRF-Token"], "justify_2p_change_pct": "10", "four_eyes": "true"}
    fields = {"sales_field_id": [str(up), str(low)]}
    r = admin.post(
        "/admin/settings/reserves", data=base | fields | {"sales_gas_pct": "0", "sales_field_pct": ["", ""]}
    )
    assert r.status_code == 422 and 'id="sales-gas-problem"' in r.text
    r = admin.post(
        "/admin/settings/reserves",
        data=base | fields | {"sales_gas_pct": "90", "sales_field_pct": ["", "101"]},
    )
    assert r.status_code == 422 and "or blank for the team default" in r.text
    assert admin.get("/api/reserves/settings").json()["sales_gas_frac"] == 0.95  # nothing saved
    r = admin.post(
        "/admin/settings/reserves",
        data=base | fields | {"sales_gas_pct": "90", "sales_field_pct": ["", "80"]},
    )
    assert r.status_code == 200 and 'id="reserves-settings-saved"' in r.text
    assert admin.get("/api/reserves/settings").json()["sales_gas_frac_by_field"] == {str(low): 0.8}
    with db.session() as s:
        summary = (
            s.execute(
                select(AuditEvent.summary)
                .where(AuditEvent.entity_type == "team_setting")
                .order_by(AuditEvent.id)
            )
            .scalars()
            .all()[-1]
        )
    assert (
        "sales_gas_frac 0.95 → 0.9" in summary and "sales_gas_frac of Lowmoor team default → 0.8" in summary
    )
    eng = login_as("engineer", username="eng")
    rid = _review_id(_post(eng, "/reserves", name="YE24", effective_date="2024-12-31"))
    review = eng.get(f"/reserves/{rid}").text
    assert 'id="sales-gas-note"' in review and "Sales gas (Bscf)" in review
    assert "90 % of separator gas" in review and "80 % of separator gas (field's own)" in review
    booking = eng.get(f"/reserves/{rid}/fields/{up}").text
    # Upland: 2P booked 50 - 2 produced = 48 Bscf separator gas; 48 x 0.9 = 43.2 Bscf sales gas
    assert re.search(r'id="booked-2P">48\.000<', booking) and re.search(r'id="sales-2P">43\.200<', booking)
    assert "90 % of the separator gas" in booking and "the team default" in booking
