"""The reserves review's HTML forms on both databases: create a review, book a field (overrides
with a reason, justification), assign a reconciliation line, refresh, return, approve (four
eyes), reopen, the filters, the admin settings; every change audited, every problem shown by
its form field and nothing changed; an approved review refuses every form route (409)."""

import datetime as dt
import re

from sqlalchemy import select

from server.db.models import AuditEvent, Booking, ReconciliationLine, ReservesReview, ReviewField
from tests.factories import make_field
from tests.services.reserves.conftest import add_estimate, add_production

ALERT = [{"code": "aquifer_suspected", "severity": "alert", "title": "Aquifer suspected", "reason": "r"}]


def _post(client, path, **data):
    return client.post(
        path, data={"csrf_token": client.headers["X-CSRF-Token"], **data}, follow_redirects=False
    )


def _portfolio(db):
    with db.session() as s:
        up = make_field(s, name="Upland", asset="North")
        low = make_field(s, name="Lowmoor", asset="South")
        add_estimate(s, up, eur=(40.0, 50.0, 60.0), flags=ALERT)
        add_estimate(s, low, eur=(20.0, 25.0, 30.0), forecast_eur=(18.0, 22.0, 27.0))
        add_production(s, up, dt.date(2023, 1, 1), 24, 1e6 / 12)  # 1 Bscf a year
        return up.id, low.id


def _created(client, name, date) -> int:
    r = _post(client, "/reserves", name=name, effective_date=date)
    assert r.status_code == 303, r.text[-500:]
    return int(re.search(r"/reserves/(\d+)\?changed=\d+", r.headers["location"]).group(1))


def _events(db, action):
    with db.session() as s:
        return (
            s.execute(
                select(AuditEvent.summary).where(
                    AuditEvent.entity_type == "reserves_review", AuditEvent.action == action
                )
            )
            .scalars()
            .all()
        )


def test_create_form_shows_problems_by_the_field_and_creates(db, login_as):
    _portfolio(db)
    eng = login_as("engineer", username="eng")
    page = eng.get("/reserves").text
    assert 'id="create-form"' in page and "csrf_token" in page
    r = _post(eng, "/reserves", name="  ", effective_date="31/12/2024")
    assert r.status_code == 422
    assert 'id="name-problem"' in r.text and 'id="date-problem"' in r.text and "YYYY-MM-DD" in r.text
    rid = _created(eng, "YE24", "2024-12-31")
    r = eng.get(f"/reserves/{rid}?changed={_last_event(db)}")
    assert "created reserves review &#39;YE24&#39; as at 2024-12-31 with 2 fields" in r.text
    r = _post(eng, "/reserves", name="YE24", effective_date="2025-12-31")
    assert r.status_code == 422 and 'id="name-problem"' in r.text and "exists already" in r.text
    with db.session() as s:
        assert s.execute(select(ReservesReview.id)).scalars().all() == [rid]  # the refused one made nothing
    assert _post(login_as("viewer"), "/reserves", name="V", effective_date="2024-12-31").status_code == 403
    assert 'id="create-form"' not in login_as("viewer").get("/reserves").text
    # without its form token the post is refused (CSRF)
    r = eng.post(
        "/reserves", data={"name": "X", "effective_date": "2024-12-31"}, headers={"X-CSRF-Token": ""}
    )
    assert r.status_code == 403


def _last_event(db) -> int:
    with db.session() as s:
        return s.execute(select(AuditEvent.id).order_by(AuditEvent.id.desc()).limit(1)).scalar_one()


def test_booking_form_overrides_with_reason_and_justification(db, login_as):
    up, low = _portfolio(db)
    eng = login_as("engineer", username="eng")
    rid = _created(eng, "YE24", "2024-12-31")
    page = eng.get(f"/reserves/{rid}/fields/{up}").text
    assert "fp-" in page and 'id="booking-form"' in page and 'id="chart-booking"' in page
    assert "Aquifer suspected" in page and "justification required: the estimate carries an alert" in page
    assert "Bscf" in page and "stb" in page  # units on the columns
    base = {"class_status": "reserves:developed_producing", "override_reason": "", "justification": ""}
    path = f"/reserves/{rid}/fields/{up}/booking"
    r = _post(eng, path, **base, override_best="lots")
    assert (
        r.status_code == 422 and 'id="override_best_bscf-problem"' in r.text and "must be a number" in r.text
    )
    r = _post(eng, path, **base, override_best="45")
    assert r.status_code == 422 and 'id="override_reason-problem"' in r.text and "needs a reason" in r.text
    r = _post(eng, path, **(base | {"override_reason": "sales gas"}), override_best="70")
    assert r.status_code == 422 and 'id="overrides-problem"' in r.text and "must nest" in r.text
    r = _post(eng, path, **(base | {"class_status": "reserves:nonsense"}))
    assert r.status_code == 422 and 'id="class_status-problem"' in r.text
    with db.session() as s:
        b = s.execute(select(Booking).join(ReviewField).where(ReviewField.field_id == up)).scalar_one()
        assert b.override_best_bscf is None and b.justification == ""  # nothing changed
    r = _post(
        eng,
        path,
        class_status="reserves:developed_producing",
        override_best="45",
        override_reason="fuel and shrinkage",
        justification="aquifer support checked against the volumetric range",
    )
    assert r.status_code == 303 and r.headers["location"].endswith("#booking")
    page = eng.get(r.headers["location"].split("#")[0]).text
    assert 'id="booked-2P">45.000<' in page and "fuel and shrinkage" in page and 'id="flash"' in page
    assert any("booking of Upland" in e for e in _events(db, "book"))
    # the same form sent again with the values it shows changes nothing (no new audit event)
    n = len(_events(db, "book"))
    r = _post(
        eng,
        path,
        class_status="reserves:developed_producing",
        override_best="45.000",
        override_reason="fuel and shrinkage",
        justification="aquifer support checked against the volumetric range",
    )
    assert r.status_code == 303 and len(_events(db, "book")) == n
    # contingent: the categories read 1C/2C/3C
    r = _post(eng, f"/reserves/{rid}/fields/{low}/booking", class_status="contingent:development_pending")
    assert r.status_code == 303
    assert "1C/2C/3C" in eng.get(f"/reserves/{rid}").text
    assert eng.get(f"/reserves/{rid}/fields/999999").status_code == 404


def test_reconciliation_form_assigns_and_resets(db, login_as):
    up, _ = _portfolio(db)
    eng, appr = login_as("engineer", username="eng"), login_as("approver", username="appr")
    first = _created(eng, "YE23", "2023-12-31")
    _post(
        eng,
        f"/reserves/{first}/fields/{up}/booking",
        class_status="reserves:developed_producing",
        justification="j",
    )
    assert _post(eng, f"/reserves/{first}/submit").status_code == 303
    assert _post(appr, f"/reserves/{first}/approve", comment="ok").status_code == 303
    rid = _created(eng, "YE24", "2024-12-31")
    page = eng.get(f"/reserves/{rid}/fields/{up}").text
    assert 'id="line-form-2P"' in page
    path = f"/reserves/{rid}/fields/{up}/reconciliation/2P"
    r = _post(eng, path, revisions="", extensions_discoveries="x", disposals="-1")
    assert r.status_code == 422 and 'id="line-2P-extensions_discoveries-problem"' in r.text
    # 2P: 49 Bscf at YE23, 48 at YE24, 1 Bscf produced in 2024; 0.4 Bscf assigned to improved recovery
    r = _post(
        eng,
        path,
        revisions="",
        improved_recovery="0.4",
        extensions_discoveries="",
        acquisitions="",
        disposals="",
    )
    assert r.status_code == 303
    with db.session() as s:
        ln = s.execute(
            select(ReconciliationLine).where(
                ReconciliationLine.review_id == rid,
                ReconciliationLine.field_id == up,
                ReconciliationLine.category == "2P",
            )
        ).scalar_one()
        assert ln.assigned and round(ln.production_bscf, 9) == 1.0 and round(ln.opening_bscf, 9) == 49.0
        assert (
            round(ln.closing_bscf, 9) == 48.0
            and round(ln.improved_recovery_bscf, 9) == 0.4
            and round(ln.revisions_bscf, 9) == -0.4
        )
    r = _post(eng, path, revisions="1", improved_recovery="0.4", disposals="")
    assert r.status_code == 303
    page = eng.get(f"/reserves/{rid}").text
    assert "Upland 2P: out of balance by" in page and 'id="submit-review"' not in page
    assert _post(eng, path, action="reset").status_code == 303
    with db.session() as s:
        ln = s.get(ReconciliationLine, ln.id)
        assert not ln.assigned and ln.improved_recovery_bscf == 0.0 and round(ln.revisions_bscf, 9) == 0.0
    assert _post(eng, f"/reserves/{rid}/fields/{up}/reconciliation/4P", action="reset").status_code == 404
    assert len(_events(db, "reconcile")) == 3


def test_refresh_return_four_eyes_approve_locked_and_reopen(db, login_as):
    up, low = _portfolio(db)
    eng, appr, appr2 = (
        login_as(r, username=u) for r, u in (("engineer", "eng"), ("approver", "a1"), ("approver", "a2"))
    )
    rid = _created(eng, "YE24", "2024-12-31")
    with db.session() as s:
        add_estimate(s, _field(s, low), eur=(21.0, 26.0, 31.0))
    page = eng.get(f"/reserves/{rid}?show=newer").text
    assert (
        f'id="refresh-{low}"' in page and "Upland" not in page.split('id="bookings"')[1].split("</table>")[0]
    )
    r = _post(eng, f"/reserves/{rid}/fields/{low}/refresh")
    assert r.status_code == 303 and "refreshed from estimate" in eng.get(r.headers["location"]).text
    _post(
        eng,
        f"/reserves/{rid}/fields/{up}/booking",
        class_status="reserves:developed_producing",
        justification="j",
    )
    assert _post(eng, f"/reserves/{rid}/submit").status_code == 303
    r = _post(eng, f"/reserves/{rid}/return", reason="  ")
    assert r.status_code == 422 and 'id="return-problem"' in r.text
    assert _post(eng, f"/reserves/{rid}/return", reason="check Lowmoor").status_code == 303
    # a1 books something, so four eyes refuses a1's approval
    _post(
        appr,
        f"/reserves/{rid}/fields/{up}/booking",
        class_status="reserves:developed_producing",
        justification="j2",
    )
    assert _post(eng, f"/reserves/{rid}/submit").status_code == 303
    r = _post(appr, f"/reserves/{rid}/approve", comment="")
    assert r.status_code == 403 and "four eyes" in r.text and 'id="approve-problem"' in r.text
    assert _post(appr2, f"/reserves/{rid}/approve", comment="agreed").status_code == 303
    # approved: no form that changes it, and every form route refuses (409), nothing changes
    for path in (f"/reserves/{rid}", f"/reserves/{rid}/fields/{up}"):
        page = eng.get(path).text
        for form in ("booking-form", "line-form-", "refresh-", "submit-review", "create-form"):
            assert f'id="{form}' not in page, (path, form)
    posts = {
        f"/reserves/{rid}/fields/{up}/booking": {"class_status": "contingent:development_pending"},
        f"/reserves/{rid}/fields/{up}/reconciliation/1P": {"revisions": "1"},
        f"/reserves/{rid}/fields/{low}/refresh": {},
        f"/reserves/{rid}/submit": {},
        f"/reserves/{rid}/return": {"reason": "x"},
    }
    n = _last_event(db)
    for path, data in posts.items():
        r = _post(eng, path, **data)
        assert (
            r.status_code == 409
            and "is approved" in r.text
            and ("it cannot be changed" in r.text or "only a submitted review goes back to draft" in r.text)
        ), (path, r.status_code)
    assert _last_event(db) == n
    r = _post(appr, f"/reserves/{rid}/reopen", reason="")
    assert r.status_code == 422 and 'id="reopen-problem"' in r.text
    r = _post(appr, f"/reserves/{rid}/reopen", reason="late well test on Upland")
    assert r.status_code == 303
    new = int(re.search(r"/reserves/(\d+)", r.headers["location"]).group(1))
    assert new != rid and 'id="booking-form"' in eng.get(f"/reserves/{new}/fields/{up}").text
    assert 'id="review-status">approved<' in eng.get(f"/reserves/{rid}").text


def _field(session, field_id):
    from server.db.models import Field

    return session.get(Field, field_id)


def test_filters_and_their_problems(db, login_as):
    up, low = _portfolio(db)
    eng = login_as("engineer", username="eng")
    rid = _created(eng, "YE24", "2024-12-31")

    def shown(query):
        page = eng.get(f"/reserves/{rid}?{query}").text
        table = page.split('id="bookings"')[1].split("</table>")[0]
        return {n for n in ("Upland", "Lowmoor") if f">{n}</a>" in table}

    assert shown("") == {"Upland", "Lowmoor"}
    assert shown("show=flags") == {"Upland"}
    assert shown("show=justification_missing") == {"Upland"}
    assert shown("asset=South") == {"Lowmoor"}
    assert shown("resource_class=contingent") == set()
    r = eng.get(f"/reserves/{rid}?asset=Nowhere")
    assert r.status_code == 422 and "query.asset" in r.text and "North, South" in r.text
    assert eng.get(f"/reserves/{rid}?show=everything").status_code == 422


def test_admin_sets_the_reserves_settings(db, login_as):
    admin = login_as("admin", username="boss")
    page = admin.get("/admin/settings").text
    assert 'id="reserves-settings-form"' in page and 'value="10"' in page
    r = _post(admin, "/admin/settings/reserves", justify_2p_change_pct="abc", four_eyes="true")
    assert r.status_code == 422 and 'id="justify-problem"' in r.text
    r = _post(admin, "/admin/settings/reserves", justify_2p_change_pct="0")
    assert r.status_code == 422 and "above 0 %" in r.text
    r = _post(admin, "/admin/settings/reserves", justify_2p_change_pct="25")  # four eyes unticked
    assert r.status_code == 200 and 'id="reserves-settings-saved"' in r.text
    assert admin.get("/api/reserves/settings").json() == {
        "four_eyes": False,
        "justify_2p_change_frac": 0.25,
        "sales_gas_frac": 0.95,
        "sales_gas_frac_by_field": {},
    }
    with db.session() as s:
        summary = (
            s.execute(select(AuditEvent.summary).where(AuditEvent.entity_type == "team_setting"))
            .scalars()
            .all()
        )
    assert any("reserves settings" in t for t in summary)
    eng = login_as("engineer", username="eng")
    assert _post(eng, "/admin/settings/reserves", justify_2p_change_pct="5").status_code == 403


def test_booking_form_in_si_units_converts_and_keeps_unchanged_values(db, login_as):
    up, _ = _portfolio(db)
    eng = login_as("engineer", username="eng")
    rid = _created(eng, "YE24", "2024-12-31")
    api = f"/api/reserves/reviews/{rid}/fields/{up}/booking"
    assert eng.patch(api, json={"override_best_bscf": 45.0, "override_reason": "r"}).status_code == 200
    assert eng.put("/api/me/units", json={"unit_system": "si"}).status_code == 200
    page = eng.get(f"/reserves/{rid}/fields/{up}").text
    assert "10⁶ m³" in page and "Bscf" not in page.split('id="booking"')[1]
    shown = re.search(r'id="override_best" name="override_best" value="([0-9.]+)"', page).group(1)
    per_bscf = float(shown) / 45.0  # 10⁶ m³ per Bscf at the storage basis, as the page converts
    assert 27.5 < per_bscf < 29.0  # 1 Bscf = 28.3 10⁶ m³ (1 ft³ = 0.0283168 m³), nearly the same basis
    form = {"class_status": "reserves:developed_producing", "override_reason": "r", "justification": "j"}
    n = len(_events(db, "book"))
    assert _post(eng, f"/reserves/{rid}/fields/{up}/booking", **form, override_best=shown).status_code == 303
    with db.session() as s:
        b = s.execute(select(Booking).join(ReviewField).where(ReviewField.field_id == up)).scalar_one()
        assert b.override_best_bscf == 45.0  # the rounded SI value did not overwrite the stored one
    assert len(_events(db, "book")) == n + 1  # only the justification changed
    assert _post(eng, f"/reserves/{rid}/fields/{up}/booking", **form, override_best="1200").status_code == 303
    row = eng.get(f"/api/reserves/reviews/{rid}/fields/{up}").json()
    assert abs(row["override_best_bscf"] - 1200 / per_bscf) < 1e-3  # the API keeps stored Bscf
