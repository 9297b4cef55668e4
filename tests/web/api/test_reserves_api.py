"""The reserves review's JSON API on both databases: the whole cycle (create, refresh, override
with justification, submit, approve, refused edits, reopen), four eyes across users, and an
approved review unchanged by every route. Expected volumes are hand-worked from the invented
inputs (remaining = EUR - produced to the effective date)."""

import datetime as dt

from server.db.models import Field
from tests.factories import make_field
from tests.services.reserves.conftest import add_estimate, add_production


def _portfolio(db):
    with db.session() as s:
        f = make_field(s, name="Upland", asset="North")
        add_estimate(s, f, eur=(40.0, 50.0, 60.0))
        add_production(s, f, dt.date(2024, 1, 1), 12, 1e6 / 12)
        return f.id


def test_review_cycle_through_the_api(db, login_as):
    fid = _portfolio(db)
    eng, eng2, appr = (
        login_as("engineer", username="eng"),
        login_as("engineer", username="eng2"),
        login_as("approver", username="appr"),
    )
    r = eng.post("/api/reserves/reviews", json={"name": "YE24", "effective_date": "2024-12-31"})
    assert r.status_code == 201, r.text
    rid = r.json()["review"]["id"]
    (row,) = r.json()["fields"]
    assert (row["booked_best_bscf"], row["volume_source"], row["categories"]) == (
        49.0,
        "basis",
        ["1P", "2P", "3P"],
    )
    assert (
        eng.post("/api/reserves/reviews", json={"name": "YE24", "effective_date": "2024-12-31"}).status_code
        == 409
    )
    # a newer estimate is listed, and the refresh takes it
    with db.session() as s:
        newer = add_estimate(s, s.get(Field, fid), eur=(41.0, 52.0, 63.0)).id
    assert eng.get(f"/api/reserves/reviews/{rid}").json()["fields"][0]["newer_estimate_id"] == newer
    r = eng2.post(f"/api/reserves/reviews/{rid}/fields/{fid}/refresh")
    assert r.status_code == 200 and r.json()["booked_best_bscf"] == 51.0
    # override: a reason is required; then a justification is required to submit
    url = f"/api/reserves/reviews/{rid}/fields/{fid}/booking"
    r = eng.patch(url, json={"override_best_bscf": 45.0})
    assert r.status_code == 409 and "needs a reason" in r.json()["detail"]
    assert (
        eng.patch(url, json={"override_best_bscf": 45.0, "override_reason": "fault"}).json()[
            "booked_best_bscf"
        ]
        == 45
    )
    r = eng.post(f"/api/reserves/reviews/{rid}/submit")
    assert (
        r.status_code == 409
        and "Upland: a justification is required (a volume is overridden)" in r.json()["detail"]
    )
    eng.patch(url, json={"justification": "fault mapped on the new survey"})
    assert eng.post(f"/api/reserves/reviews/{rid}/submit").json()["review"]["status"] == "submitted"
    assert eng.patch(url, json={"justification": "late"}).status_code == 409  # submitted: locked
    assert (
        eng.post(f"/api/reserves/reviews/{rid}/approve", json={}).status_code == 403
    )  # engineers never approve
    r = appr.post(f"/api/reserves/reviews/{rid}/approve", json={"comment": "agreed"})
    assert r.status_code == 200 and r.json()["review"]["status"] == "approved"
    before = appr.get(f"/api/reserves/reviews/{rid}").json()
    refused = [
        eng.patch(url, json={"justification": "edit"}),
        eng.post(f"/api/reserves/reviews/{rid}/fields/{fid}/refresh"),
        eng.put(f"/api/reserves/reviews/{rid}/fields/{fid}/reconciliation/2P", json={"revisions_bscf": 1.0}),
        eng.post(f"/api/reserves/reviews/{rid}/submit"),
        eng.post(f"/api/reserves/reviews/{rid}/return", json={"reason": "x"}),
        appr.post(f"/api/reserves/reviews/{rid}/approve", json={}),
    ]
    assert [x.status_code for x in refused] == [409] * 6
    assert "is approved: it cannot be changed" in refused[0].json()["detail"]
    assert appr.get(f"/api/reserves/reviews/{rid}").json() == before
    r = appr.post(f"/api/reserves/reviews/{rid}/reopen", json={"reason": "late production correction"})
    assert r.status_code == 201 and r.json()["review"]["revision"] == 2
    assert r.json()["fields"][0]["booked_best_bscf"] == 45.0
    assert appr.get(f"/api/reserves/reviews/{rid}").json() == before
    listed = [(x["name"], x["revision"], x["status"]) for x in eng.get("/api/reserves/reviews").json()]
    assert listed == [("YE24", 2, "draft"), ("YE24", 1, "approved")]
    trail = str(eng.get(f"/api/fields/{fid}/audit").json())  # audited in words, on the field's trail
    assert "booking of Upland (1P/2P/3P): override_best_bscf None → 45.0" in trail
    assert "Upland refreshed from estimate" in trail


def test_four_eyes_refuses_the_preparer_through_the_api(db, login_as):
    _portfolio(db)
    appr = login_as("approver", username="appr")
    rid = appr.post("/api/reserves/reviews", json={"name": "Y", "effective_date": "2024-12-31"}).json()[
        "review"
    ]["id"]
    appr.post(f"/api/reserves/reviews/{rid}/submit")
    r = appr.post(f"/api/reserves/reviews/{rid}/approve", json={})
    assert r.status_code == 403 and "four eyes" in r.json()["detail"]
    assert (
        login_as("approver", username="appr2")
        .post(f"/api/reserves/reviews/{rid}/approve", json={})
        .status_code
        == 200
    )


def test_a_user_limited_to_an_asset_cannot_run_portfolio_actions(db, login_as):
    _portfolio(db)
    with db.session() as s:
        from server.db.models import Asset

        aid = s.query(Asset).filter_by(name="North").one().id
    limited = login_as("engineer", assets=[aid], username="limited")
    r = limited.post("/api/reserves/reviews", json={"name": "Y", "effective_date": "2024-12-31"})
    assert r.status_code == 403 and "every asset" in r.json()["detail"]
