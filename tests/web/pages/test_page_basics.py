"""Pages and their JSON twins: key elements, headers, cross-site protection (uploads: test_uploads.py)."""

import json
import re

from server.services.jobs import queue as jobs
from server.services.jobs import runner
from tests.factories import add_volumetric_history, make_field


def _seed(db):
    with db.session() as s:
        f = make_field(s, name="Upland")
        add_volumetric_history(s, f)
        jobs.enqueue_field_recompute(s, [f.id], reason="test")
        fid = f.id
    runner.drain(db)
    return fid


def test_portfolio_lists_fields_with_estimates(db, client):
    fid = _seed(db)
    r = client.get("/")
    assert r.status_code == 200
    assert "Upland" in r.text and f"/fields/{fid}" in r.text
    assert "qualified reservoir" in r.text  # the caution is on every page
    api = client.get("/api/portfolio").json()
    row = next(x for x in api if x["field_id"] == fid)
    assert row["estimate"]["status"] == "ok"
    assert 95 < row["estimate"]["giip_best_bscf"] < 105
    assert row["dynamic_to_volumetric"] == row["estimate"]["giip_best_bscf"] / 100


def test_field_page_embeds_chart_data_without_inline_script(db, client):
    fid = _seed(db)
    r = client.get(f"/fields/{fid}")
    assert r.status_code == 200
    block = re.search(r'<script type="application/json" id="pz-figure">(.*?)</script>', r.text, re.S)
    fig = json.loads(block.group(1))
    names = [t["name"] for t in fig["data"]]
    assert any(n.startswith("fitted line") for n in names)
    assert any(n.startswith("abandonment") for n in names)
    assert any(n.startswith("volumetric") for n in names)
    # every <script> is either external or a JSON data block
    for tag in re.findall(r"<script[^>]*>", r.text):
        assert "src=" in tag or 'type="application/json"' in tag
    csp = r.headers["content-security-policy"]
    assert "script-src 'self'" in csp and "unsafe-inline" not in csp.split("script-src")[1].split(";")[0]
    assert r.headers["x-content-type-options"] == "nosniff"
    twin = client.get(f"/api/fields/{fid}").json()
    assert twin["summary"]["name"] == "Upland"
    assert len(twin["detail"]["prepared"]["points"]) > 5


def test_unknown_field_is_a_clean_404(db, client):
    r = client.get("/fields/999999")
    assert r.status_code == 404 and "no such field" in r.text and "Traceback" not in r.text
    assert client.get("/api/fields/999999").json() == {"detail": "no such field"}


def test_plotly_is_served_locally(client):
    src = re.search(r'<script src="([^"]+plotly[^"]*)"', client.get("/").text).group(1)
    assert src.startswith("/assets/")  # this server, never a CDN
    r = client.get(src)
    assert r.status_code == 200 and r.headers["content-type"].startswith("text/javascript")
    assert "max-age" in r.headers["cache-control"]


def _form_token(client):
    page = client.get("/upload")
    return re.search(r'name="csrf_token" value="([^"]+)"', page.text).group(1)


def test_form_without_token_is_refused(client):
    r = client.post(
        "/upload",
        data={"kind": "surveys"},
        files={"file": ("s.csv", b"x", "text/csv")},
        headers={"X-CSRF-Token": ""},  # the client fixture sends the session's token by default
    )
    assert r.status_code == 403


def test_cross_site_post_is_refused(client):
    token = _form_token(client)
    r = client.post(
        "/upload",
        data={"kind": "surveys", "csrf_token": token},
        files={"file": ("s.csv", b"x", "text/csv")},
        headers={"Sec-Fetch-Site": "cross-site", "Origin": "https://evil.example"},
    )
    assert r.status_code == 403


def test_openapi_schema_lists_api(client):
    spec = client.get("/openapi.json").json()
    assert "/api/fields/{field_id}" in spec["paths"] and "/api/uploads/{kind}" in spec["paths"]
