"""The field page shows the estimate, its method, corrections, interval kinds and every
survey's status; the stored estimate row carries the summary. Numbers are asserted in the
engine tests: here they must reach the page unchanged."""

import html
import re

from sqlalchemy import select

from server.db.models import Estimate, Field, FieldAnalysisSettings, PressureSurvey
from server.services.demo import load_demo
from server.services.jobs import queue as jobs
from server.services.jobs import runner
from server.web.templating import fmt
from tests.factories import add_volumetric_history, make_field


def _field_with_trouble(db, **settings):
    """A volumetric field with one survey excluded by the engineer and one gross error."""
    with db.session() as s:
        f = make_field(s, name="Quarrel Flats")
        add_volumetric_history(s, f)
        surveys = s.execute(select(PressureSurvey).order_by(PressureSurvey.survey_date)).scalars().all()
        surveys[3].excluded, surveys[3].exclusion_reason = True, "gauge not stabilised"
        surveys[6].pressure_psia -= 300.0
        query = select(FieldAnalysisSettings).where(FieldAnalysisSettings.field_id == f.id)
        st = s.execute(query).scalar_one()
        for k, v in settings.items():
            setattr(st, k, v)
        jobs.enqueue_field_recompute(s, [f.id], reason="test")
        fid = f.id
    runner.drain(db)
    return fid


def _text(page: str) -> str:
    page = re.sub(r'<script type="application/json".*?</script>', "", page, flags=re.S)
    return html.unescape(re.sub(r"\s+", " ", re.sub(r"<[^>]+>", " ", page)))


def test_estimate_row_carries_the_bootstrap_range_and_the_page_shows_it(db, client):
    fid = _field_with_trouble(db)
    with db.session() as s:
        est = s.execute(select(Estimate).where(Estimate.field_id == fid)).scalars().one()
        d = est.detail
    boot = d["pz"]["giip_range_bscf"]["bootstrap"]
    assert est.status == "ok" and est.method == "pz-ols"
    # the straight line's own bootstrap range is kept beside the headline (issue 12) ...
    assert (est.line_giip_low_bscf, est.line_giip_best_bscf, est.line_giip_high_bscf) == (
        boot["p90"],
        d["pz"]["giip_bscf"],
        boot["p10"],
    )
    # ... and the headline is the basis (here the line) with its booked range
    b = d["basis"]
    assert (est.basis_model, est.giip_best_bscf) == ("single_tank", d["pz"]["giip_bscf"])
    assert (est.giip_low_bscf, est.giip_high_bscf) == (b["giip_low_bscf"], b["giip_high_bscf"])
    assert est.giip_low_bscf <= boot["p90"] and est.giip_high_bscf >= boot["p10"]  # wider than scatter alone
    assert est.eur_bscf == d["pz"]["eur_bscf"] and est.remaining_bscf == d["pz"]["remaining_bscf"]
    text = _text(client.get(f"/fields/{fid}").text)
    assert f"P90–P10 {fmt(b['giip_low_bscf'])}–{fmt(b['giip_high_bscf'])}" in text
    assert f"{fmt(boot['p90'])} / {fmt(boot['p50'])} / {fmt(boot['p10'])}" in text  # the line's bootstrap
    assert "How this estimate was made" in text and "Ordinary least-squares p/z line" in text
    ci = d["pz"]["giip_range_bscf"]["ci_fieller"]
    assert f"{fmt(ci['low'])} to {fmt(ci['high'])}" in text
    assert "P90 is exceeded with 90 % probability" in text and "not a confidence interval" in text
    assert "survey scatter only" in text


def test_every_survey_status_is_shown_with_its_reason(db, client):
    fid = _field_with_trouble(db)
    text = _text(client.get(f"/fields/{fid}").text)
    assert "set aside by the engineer: gauge not stabilised" in text
    assert "set aside by the outlier rule: p/z" in text and "below the line through the used points" in text
    assert "1 set aside as outliers, 1 set aside by the engineer" in text


def test_anchored_choice_reaches_the_page(db, client):
    fid = _field_with_trouble(db, anchor_initial=True)
    text = _text(client.get(f"/fields/{fid}").text)
    assert "anchored at pi/zi" in text
    assert "the recovery factor is set by pi/zi and pa/za alone" in text


def test_demo_young_field_books_its_volumetric_estimate_and_overpressured_field_is_corrected(db, client):
    with db.session() as s:
        load_demo(s)
    runner.drain(db)
    with db.session() as s:
        ids = {f.name: f.id for f in s.execute(select(Field)).scalars()}
    young = _text(client.get(f"/fields/{ids['Dunmarrow']}").text)
    assert "Basis: Volumetric estimate (too little depletion for material balance)" in young
    assert "too little depletion to judge" in young and "at least 10 % is needed" in young
    assert "No estimate:" not in young and "no p/z line yet (too little depletion)" in young
    over = client.get(f"/api/fields/{ids['Emberline']}").json()
    assert over["summary"]["estimate"]["method"] == "pz-ols-ce-fitted"
    assert abs(over["summary"]["estimate"]["giip_best_bscf"] - 100.0) < 3.0  # simulated truth: 100
    unc = over["detail"]["pz_uncorrected"]["giip_bscf"]
    assert unc > 108.0  # the plain line overestimates an overpressured tank
    page = _text(client.get(f"/fields/{ids['Emberline']}").text)
    assert "Rock and water expansion (Ramagost-Farshad), ce = 1.4" in page and "fitted to the data" in page
    assert f"Without the ce correction the straight p/z line would give GIIP {fmt(unc)} Bscf" in page
    assert "ce 1/psi" in page
