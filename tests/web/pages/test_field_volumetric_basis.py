"""A young field whose p/z line has fallen too little to judge books its volumetric estimate:
the recompute stores the volumetric basis, and the field page, the portfolio, the JSON API and
the exports show it by name with the reason. The numbers are checked in the engine's tests
(tests/engine/headline/test_volumetric_basis.py); here the wiring and what a user sees."""

import datetime as dt
import html
import re

from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.web.templating import DASH, fmt
from tests.factories import add_volumetric_history, make_field
from tests.web.fieldbench import giip_card, latest, text_of

TITLE = "Volumetric estimate (too little depletion for material balance)"


def _young(db, *, volumetric=True) -> int:
    """Three years at 5,000 Mscf/d from 100 Bscf: p/z down about 5 %, six surveys."""
    with db.session() as s:
        f = make_field(s, name="Tenterfold")  # mapped 80 / 100 / 125 Bscf
        if not volumetric:
            s.delete(f.volumetrics[0])
        add_volumetric_history(s, f, end=dt.date(2012, 12, 1), rate_mscf_d=5000.0)
        jobs.enqueue_field_recompute(s, [f.id], reason="test")
        fid = f.id
    runner.drain(db)
    return fid


def test_the_recompute_stores_the_volumetric_basis(db):
    est = latest(db, _young(db))
    assert est.status == "ok" and est.method == "volumetric"
    assert (est.basis_model, est.basis_source, est.basis_title) == ("volumetric", "automatic", TITLE)
    assert (est.giip_low_bscf, est.giip_best_bscf, est.giip_high_bscf) == (80.0, 100.0, 125.0)
    assert est.eur_bscf is not None and est.remaining_bscf is not None
    assert est.line_giip_best_bscf is None  # the refused line is not stored as a value
    assert est.detail["pz"] is None and est.detail["basis"]["model"] == "volumetric"
    assert "too_little_depletion" in {f["code"] for f in est.flags}


def test_field_page_portfolio_api_and_export_show_the_volumetric_basis(db, client):
    fid = _young(db)
    est = latest(db, fid)
    r = client.get(f"/fields/{fid}")
    assert r.status_code == 200
    page, text = r.text, text_of(r.text)
    assert giip_card(page) == fmt(100.0)
    assert "GIIP from the volumetric estimate" in text and "Dynamic GIIP" not in text
    assert "P90–P10 80.0–125.0" in text
    assert "no p/z line yet (too little depletion)" in text and "attempted; no estimate" not in text
    basis = text_of(re.search(r'<p[^>]*id="basis-line".*?</p>', page, re.S).group(0))
    assert basis.strip().startswith(f"Basis: {TITLE} (automatic")
    assert "too little depletion" in basis and "volumetric estimate" in basis
    assert "Too little depletion to judge" in text  # the flag stays on the page
    assert re.search(r'id="eur">' + re.escape(fmt(est.eur_bscf)) + "<", page)
    # the portfolio row and totals book it; no "within the range" against itself
    home = client.get("/")
    assert home.status_code == 200
    row = home.text.split(f'data-field-id="{fid}"')[1].split("</tr>")[0]
    assert re.search(r'data-col="dynamic_best">' + re.escape(fmt(100.0)) + "<", row)
    assert "Volumetric" in html.unescape(row)
    assert re.search(r'data-col="ratio">\s*' + re.escape(DASH), row)  # not held against itself
    vol_page = text_of(client.get(f"/fields/{fid}/volumetric").text)
    assert "No current dynamic estimate to compare with." in vol_page
    body = client.get(f"/api/fields/{fid}").json()
    assert (body["headline"]["model"], body["headline"]["source"]) == ("volumetric", "automatic")
    assert body["headline"]["line_best_bscf"] is None
    assert client.get(f"/api/fields/{fid}/estimate").json()["basis_model"] == "volumetric"
    for path in (f"/fields/{fid}/surveys", "/portfolio.csv", f"/api/fields/{fid}/forecast"):
        assert client.get(path).status_code in (200, 404), path


def test_without_a_volumetric_estimate_the_young_field_is_still_refused(db, client):
    fid = _young(db, volumetric=False)
    est = latest(db, fid)
    assert est.status == "refused" and est.basis_model is None
    assert est.message.startswith("too little depletion to judge")
    page = client.get(f"/fields/{fid}")
    assert page.status_code == 200 and "No estimate:" in text_of(page.text)
