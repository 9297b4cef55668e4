"""The reserves API's scope and sales-gas factor, on both databases: create a review of chosen
assets and fields (unknown ids refused with the reason, a user limited to some assets refused),
set the factor (audited; out of range refused, nothing changed), the review's JSON states the
frozen factor and sales gas, and an approved review keeps them when the setting changes."""

from sqlalchemy import select

from server.db.models import Asset
from tests.factories import make_field
from tests.web.pages.test_reserves_forms import _portfolio


def _asset(db, name) -> int:
    with db.session() as s:
        return s.execute(select(Asset.id).where(Asset.name == name)).scalar_one()


def test_create_a_review_of_chosen_assets_and_fields(db, login_as):
    up, low = _portfolio(db)  # Upland in North, Lowmoor in South
    with db.session() as s:
        east = make_field(s, name="Eastholm", asset="East")
        s.commit()
        east_id = east.id
    eng = login_as("engineer", username="eng")
    body = {
        "name": "YE24",
        "effective_date": "2024-12-31",
        "asset_ids": [_asset(db, "East")],
        "field_ids": [up],
    }
    r = eng.post("/api/reserves/reviews", json=body)
    assert r.status_code == 201, r.text
    assert {f["field_id"] for f in r.json()["fields"]} == {east_id, up}
    for bad, words in (
        ({"field_ids": [987654]}, "field_ids: no field 987654"),
        ({"asset_ids": [987654]}, "asset_ids: no asset 987654"),
        ({"field_ids": []}, "at least one field or asset"),
    ):
        r = eng.post("/api/reserves/reviews", json={"name": "YE25", "effective_date": "2025-12-31"} | bad)
        assert r.status_code == 409 and words in r.json()["detail"], r.text
    assert eng.post("/api/reserves/reviews", json=body | {"name": "Z", "field_ids": [0]}).status_code == 422
    assert [x["name"] for x in eng.get("/api/reserves/reviews").json()] == ["YE24"]
    limited = login_as("engineer", assets=[_asset(db, "North")], username="limited")
    r = limited.post(
        "/api/reserves/reviews", json={"name": "L", "effective_date": "2024-12-31", "field_ids": [low]}
    )
    assert r.status_code == 403 and "every asset" in r.json()["detail"]


def test_sales_gas_setting_is_frozen_in_the_review_json(db, login_as):
    up, low = _portfolio(db)
    admin, eng = login_as("admin", username="boss"), login_as("engineer", username="eng")
    appr = login_as("approver", username="appr")
    r = admin.put(
        "/api/reserves/settings", json={"sales_gas_frac": 0.9, "sales_gas_frac_by_field": {str(low): 0.8}}
    )
    assert r.status_code == 200 and r.json()["sales_gas_frac_by_field"] == {str(low): 0.8}
    assert admin.put("/api/reserves/settings", json={"sales_gas_frac": 1.5}).status_code == 422
    r = admin.put("/api/reserves/settings", json={"sales_gas_frac_by_field": {"987654": 0.5}})
    assert r.status_code == 409 and "no field 987654" in r.json()["detail"]
    assert eng.put("/api/reserves/settings", json={"sales_gas_frac": 0.5}).status_code == 403
    assert admin.get("/api/reserves/settings").json()["sales_gas_frac"] == 0.9
    review = eng.post("/api/reserves/reviews", json={"name": "YE24", "effective_date": "2024-12-31"}).json()
    rid = review["review"]["id"]
    rows = {f["field_name"]: f for f in review["fields"]}
    assert (rows["Upland"]["sales_gas_frac"], rows["Upland"]["sales_gas_frac_source"]) == (0.9, "team")
    assert rows["Upland"]["booked_sales_best_bscf"] == rows["Upland"]["booked_best_bscf"] * 0.9
    assert (rows["Lowmoor"]["sales_gas_frac"], rows["Lowmoor"]["sales_gas_frac_source"]) == (0.8, "field")
    one = eng.get(f"/api/reserves/reviews/{rid}/fields/{low}").json()
    assert one["booked_sales_high_bscf"] == one["booked_high_bscf"] * 0.8
    eng.patch(f"/api/reserves/reviews/{rid}/fields/{up}/booking", json={"justification": "alert checked"})
    assert eng.post(f"/api/reserves/reviews/{rid}/submit").status_code == 200
    assert appr.post(f"/api/reserves/reviews/{rid}/approve", json={"comment": ""}).status_code == 200
    before = eng.get(f"/api/reserves/reviews/{rid}").json()
    assert admin.put("/api/reserves/settings", json={"sales_gas_frac": 0.5}).status_code == 200
    after = eng.get(f"/api/reserves/reviews/{rid}").json()
    assert after["fields"] == before["fields"] and after["totals"] == before["totals"]
    total = {(t["group"], t["category"]): t for t in after["totals"]}[("portfolio", "2P")]
    assert total["sales_gas_bscf"] == sum(f["booked_sales_best_bscf"] for f in after["fields"])
