"""A user's own choice of display units: the header form, the API, and what pages get."""

from fastapi import Request
from sqlalchemy import select

from server.db.models import User
from server.web.auth import Reader
from server.web.display import units_for_request


def _probe(app):
    @app.get("/units-probe-user")
    def probe(request: Request, user: Reader):
        du = units_for_request(request)
        return {"system": du.system, "pressure": du.label("pressure")}


def _stored(db, user_id):
    with db.session() as s:
        return s.execute(select(User.unit_system).where(User.id == user_id)).scalar_one()


def test_the_header_form_switches_units_and_returns_to_the_page(db, app, client, admin_client):
    _probe(app)
    assert client.get("/units-probe-user").json()["system"] == "oilfield"
    page = client.get("/").text
    assert 'id="units-switch"' in page and f'name="csrf_token" value="{client.csrf_token}"' in page
    assert 'value="/"' in page  # the form returns to the page it is on

    r = client.post("/account/units", data={"unit_system": "si", "next": "/jobs?x=1"}, follow_redirects=False)
    assert r.status_code == 303 and r.headers["location"] == "/jobs?x=1"
    assert _stored(db, client.user_id) == "si"
    assert client.get("/units-probe-user").json() == {"system": "si", "pressure": "kPa"}
    assert "now showing SI units" in client.get("/").text
    assert '<option value="si" selected>' in client.get("/").text
    # another user is not affected
    assert admin_client.get("/units-probe-user").json()["system"] == "oilfield"

    # back to the team default; the team default then decides
    client.post("/account/units", data={"unit_system": ""}, follow_redirects=False)
    assert _stored(db, client.user_id) is None
    admin_client.put("/api/settings", json={"display_units": "si"})
    assert client.get("/units-probe-user").json()["system"] == "si"


def test_an_unknown_unit_system_is_refused_and_changes_nothing(db, client):
    r = client.post("/account/units", data={"unit_system": "imperial"}, follow_redirects=False)
    assert r.status_code == 422 and "unit_system" in r.text and "imperial" in r.text
    assert _stored(db, client.user_id) is None


def test_the_next_address_must_be_local(client):
    r = client.post(
        "/account/units",
        data={"unit_system": "si", "next": "https://elsewhere.example/"},
        follow_redirects=False,
    )
    assert r.status_code == 303 and r.headers["location"] == "/"


def test_the_form_needs_the_sessions_form_token(db, client):
    client.headers.pop("X-CSRF-Token")
    r = client.post("/account/units", data={"unit_system": "si"}, follow_redirects=False)
    assert r.status_code == 403
    assert _stored(db, client.user_id) is None


def test_the_api_reads_and_sets_the_choice(db, app, client):
    _probe(app)
    assert client.get("/api/me").json()["unit_system"] is None
    r = client.put("/api/me/units", json={"unit_system": "si"})
    assert r.status_code == 200 and r.json()["unit_system"] == "si"
    assert client.get("/units-probe-user").json()["system"] == "si"
    bad = client.put("/api/me/units", json={"unit_system": "metric"})
    assert bad.status_code == 422
    assert client.put("/api/me/units", json={"unit_system": None}).json()["unit_system"] is None
