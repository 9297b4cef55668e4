"""The movements dashboard's JSON twin on both databases: every waterfall, the ranking, the
replacement ratios and a field's 2P history, as the service computes them (numbers worked by
hand in tests/services/reserves/movements_case.py), with bad parameters named."""

import pytest

from server.services.audit import Actor
from tests.services.reserves.movements_case import build_two_years
from tests.web.conftest import make_user


@pytest.fixture
def case(db):
    prep, appr = make_user(db, "engineer", "prep"), make_user(db, "approver", "appr")
    with db.session() as s:
        c = build_two_years(s, Actor(prep, "prep"), Actor(appr, "appr"))
        return {"ye24": c["ye24"].id, "ye25": c["ye25"].id, "fields": c["fields"], "assets": c["assets"]}


def test_movements_twin(case, login_as):
    viewer = login_as("viewer", username="v")
    r = viewer.get(f"/api/reserves/reviews/{case['ye25']}/movements")
    assert r.status_code == 200, r.text
    d = r.json()
    assert (d["previous_id"], d["previous_effective_date"]) == (case["ye24"], "2024-12-31")
    port = next(w for w in d["waterfalls"] if (w["group"], w["category"]) == ("portfolio", "2P"))
    assert port["opening_bscf"] == pytest.approx(85.5) and port["closing_bscf"] == pytest.approx(91.4)
    assert [(s["key"], s["delta_bscf"]) for s in port["steps"]][:2] == [
        ("production_bscf", pytest.approx(-2.1)),
        ("revisions_bscf", pytest.approx(-1.0)),
    ]
    ranked = [c["field_name"] for c in d["ranking"] if c["category"] == "2P"]
    assert ranked == ["Newdale", "Upland", "Southcombe", "Eastfold", "Lowmoor"]
    rrr = {(x["group"], x["category"]): x for x in d["replacement"]}
    assert rrr[("portfolio", "2P")]["ratio_with_acquisitions"] == pytest.approx(8.0 / 2.1)
    assert rrr[("asset East", "2P")]["organic_ratio"] is None  # no production: undefined
    assert "production" in d["definitions"]["organic_ratio"]
    # the history defaults to the largest 2P change; another field on request
    assert d["history_field_id"] == case["fields"]["Newdale"]
    r = viewer.get(
        f"/api/reserves/reviews/{case['ye25']}/movements", params={"field_id": case["fields"]["Upland"]}
    )
    hist = r.json()["history"]
    assert [(p["review_name"], p["status"], p["reserves_2p_bscf"]) for p in hist] == [
        ("Year-end 2024", "approved", pytest.approx(48.0)),
        ("Year-end 2025", "draft", pytest.approx(50.0)),
    ]
    first = viewer.get(f"/api/reserves/reviews/{case['ye24']}/movements").json()
    assert first["previous_id"] is None and first["waterfalls"] == [] and len(first["history"]) == 1


def test_movements_twin_refuses_bad_parameters_and_limits_to_the_user_s_assets(case, login_as):
    eng = login_as("engineer", username="e")
    url = f"/api/reserves/reviews/{case['ye25']}/movements"
    assert eng.get("/api/reserves/reviews/999/movements").status_code == 404
    r = eng.get(url, params={"field_id": 999999})
    assert r.status_code == 422 and r.json()["detail"][0]["loc"] == ["query", "field_id"]
    assert eng.get(url, params={"field_id": 0}).status_code == 422
    south = login_as("viewer", assets=[case["assets"]["Southcombe"]], username="s")
    d = south.get(url).json()
    assert {c["field_name"] for c in d["ranking"]} == {"Southcombe", "Newdale"}
    assert south.get(url, params={"field_id": case["fields"]["Upland"]}).status_code == 422
