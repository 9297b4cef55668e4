"""The reserves pages on both databases: the list, a review's page (bookings, blockers, totals,
reconciliation) and the submit and approve forms (CSRF, roles, four eyes, the locked review)."""

import datetime as dt

from tests.factories import make_field
from tests.services.reserves.conftest import add_estimate, add_production


def test_review_pages_submit_and_approve(db, login_as):
    with db.session() as s:
        f = make_field(s, name="Upland", asset="North")
        add_estimate(
            s,
            f,
            eur=(40.0, 50.0, 60.0),
            flags=[{"code": "aquifer_suspected", "severity": "alert", "title": "t", "reason": "r"}],
        )
        add_production(s, f, dt.date(2024, 1, 1), 12, 1e6 / 12)
        fid = f.id
    eng, appr = login_as("engineer", username="eng"), login_as("approver", username="appr")
    assert "No reviews yet" in eng.get("/reserves").text
    rid = eng.post("/api/reserves/reviews", json={"name": "YE24", "effective_date": "2024-12-31"}).json()[
        "review"
    ]["id"]
    page = eng.get(f"/reserves/{rid}").text
    assert "What blocks submission" in page and "Upland: a justification is required" in page
    assert "49.000" in page and "aquifer_suspected" in page  # 2P = 50 - 1 Bscf produced in 2024
    assert 'id="submit-review"' not in page
    eng.patch(
        f"/api/reserves/reviews/{rid}/fields/{fid}/booking", json={"justification": "aquifer support checked"}
    )
    page = eng.get(f"/reserves/{rid}").text
    assert 'id="submit-review"' in page
    token = eng.headers["X-CSRF-Token"]
    r = eng.post(f"/reserves/{rid}/submit", data={"csrf_token": token}, follow_redirects=False)
    assert r.status_code == 303
    r = eng.post(f"/reserves/{rid}/approve", data={"csrf_token": token, "comment": "x"})
    assert r.status_code == 403  # engineers do not approve
    page = appr.get(f"/reserves/{rid}").text
    assert 'id="approve-form"' in page
    r = appr.post(
        f"/reserves/{rid}/approve",
        data={"csrf_token": appr.headers["X-CSRF-Token"], "comment": "agreed"},
        follow_redirects=False,
    )
    assert r.status_code == 303
    page = appr.get(f"/reserves/{rid}").text
    assert 'id="review-status">approved<' in page and "“agreed”" in page
    r = eng.post(f"/reserves/{rid}/submit", data={"csrf_token": token})
    assert r.status_code == 409 and "is approved: it cannot be changed" in r.text
    listed = eng.get("/reserves").text
    assert "YE24" in listed and "approved" in listed
    assert eng.get("/reserves/999").status_code == 404
