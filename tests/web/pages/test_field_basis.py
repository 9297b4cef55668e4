# ruff: noqa: F811 - the fixture fid is imported from tests/web/fieldbench.py
"""The headline's basis on the field page and in the JSON API (issue 12, points 3 and 9): the
basis title and source, the straight p/z line beside it, the parts of the range, every model's
outcome (a model the data do not determine gives no numbers), the engineer's choice beside the
automatic recommendation, and the basis choice in the choices form.

The stored estimate is given a basis by hand, serialised from the engine's own contract types
(engine/headline/types.py) exactly as the recompute stores them, so these tests read what the
engine will write whatever its rule decides."""

import html
import re

from sqlalchemy import select

from server.db.models import Estimate
from server.engine.headline.types import Basis, ModelOutcome, RangePart
from server.services.serialize import to_jsonable
from server.web.templating import fmt
from tests.web.fieldbench import fid, giip_card, latest, text_of  # noqa: F401 - fid is a fixture

LINE = (95.0, 100.0, 105.0)


def _outcomes():
    return (
        ModelOutcome(
            "single_tank",
            "Straight p/z line",
            100.0,
            97.0,
            103.0,
            80.0,
            0.80,
            60.0,
            True,
            "determined",
            "closed form",
            delta_aicc=3.0,
        ),
        ModelOutcome(
            "aquifer_fetkovich",
            "Tank with a Fetkovich pseudo-steady-state aquifer",
            88.0,
            84.0,
            92.0,
            75.0,
            0.852,
            55.0,
            True,
            "determined",
            "stepped to the abandonment pressure",
            delta_aicc=0.0,
        ),
        ModelOutcome(
            "aquifer_pot",
            "Tank with a pot aquifer",
            61.234,
            10.0,
            500.0,
            50.0,
            0.8,
            30.0,
            False,
            "not determined: the aquifer strength stopped at a search bound",
            "stepped",
        ),
        ModelOutcome(
            "two_tank",
            "Two tanks with gas flow between them",
            None,
            None,
            None,
            None,
            None,
            None,
            False,
            "not fitted: too little depletion",
            "",
        ),
    )


def _basis(model="aquifer_fetkovich", source="automatic", engineer_reason=None):
    title = {"aquifer_fetkovich": "Tank with a Fetkovich pseudo-steady-state aquifer"}.get(
        model, "Straight p/z line"
    )
    return Basis(
        model=model,
        title=title,
        source=source,
        reason="water arrives at the wells and the aquifer model is determined",
        recommended_model="aquifer_fetkovich",
        recommended_title="Tank with a Fetkovich pseudo-steady-state aquifer",
        recommended_reason="water arrives at the wells and the aquifer model is determined",
        giip_bscf=88.0,
        giip_low_bscf=80.0,
        giip_high_bscf=97.0,
        eur_bscf=75.0,
        eur_low_bscf=70.0,
        eur_high_bscf=81.0,
        recovery_factor_frac=0.852,
        remaining_bscf=55.0,
        range_parts=(
            RangePart("scatter", "Scatter of the surveys", 0.03, 0.36),
            RangePart("models", "Models the data cannot tell apart", 0.04, 0.64),
        ),
        range_kind="P90-P10: data scatter, model spread and systematic inputs combined",
        engineer_reason=engineer_reason,
    )


def _give_basis(db, fid, basis: Basis):
    """Store on the current estimate what the engine writes once it names a basis."""
    with db.session() as s:
        est = s.execute(
            select(Estimate).where(Estimate.field_id == fid).order_by(Estimate.id.desc())
        ).scalar()
        detail = dict(est.detail)
        detail |= {
            "basis": to_jsonable(basis),
            "outcomes": to_jsonable(_outcomes()),
            "line_giip_low_bscf": LINE[0],
            "line_giip_best_bscf": LINE[1],
            "line_giip_high_bscf": LINE[2],
            "line_eur_bscf": 80.0,
        }
        est.detail = detail
        est.giip_low_bscf, est.giip_best_bscf, est.giip_high_bscf = (
            basis.giip_low_bscf,
            basis.giip_bscf,
            basis.giip_high_bscf,
        )
        est.eur_bscf, est.recovery_factor_frac, est.remaining_bscf = (
            basis.eur_bscf,
            basis.recovery_factor_frac,
            basis.remaining_bscf,
        )
        est.basis_model, est.basis_title, est.basis_source = basis.model, basis.title, basis.source
        est.line_giip_low_bscf, est.line_giip_best_bscf, est.line_giip_high_bscf = LINE


def _section(page: str, element_id: str) -> str:
    m = re.search(rf'<(table|p|section)[^>]*id="{element_id}".*?</\1>', page, re.S)
    assert m, element_id
    return re.sub(r"\s+([:,.)])", r"\1", text_of(m.group(0))).strip()


def test_a_volumetric_field_keeps_the_line_and_offers_the_models_with_results(db, client, fid):
    est = latest(db, fid)
    assert (est.basis_model, est.basis_source) == ("single_tank", "automatic")  # stored as plain columns
    assert est.line_giip_best_bscf == est.giip_best_bscf  # the line is the basis: the same GIIP
    page = client.get(f"/fields/{fid}").text
    assert giip_card(page) == fmt(est.giip_best_bscf)
    assert _section(page, "basis-line").startswith("Basis: Straight p/z line (volumetric tank) (automatic")
    assert 'id="line-giip"' not in page  # no second copy of the same number
    options = re.findall(r'<option value="([^"]+)"', page.split('id="basis_model"')[1].split("</select>")[0])
    with_results = [
        o["model"] for o in est.detail["outcomes"] if o["giip_bscf"] is not None and o["eur_bscf"]
    ]
    assert options == ["automatic", *with_results] and "single_tank" in options


def test_an_estimate_stored_before_the_basis_shows_the_line_as_its_headline(db, client, fid):
    with db.session() as s:
        est = s.execute(select(Estimate).where(Estimate.field_id == fid)).scalar()
        est.detail = {k: v for k, v in est.detail.items() if k not in ("basis", "outcomes")}
        est.basis_model = est.basis_title = est.basis_source = None
    page = client.get(f"/fields/{fid}").text
    assert "this estimate names no other basis" in _section(page, "basis-line")
    assert 'id="model-outcomes"' not in page and 'id="range-parts"' not in page
    options = re.findall(r'<option value="([^"]+)"', page.split('id="basis_model"')[1].split("</select>")[0])
    assert options == ["automatic"]


def test_page_shows_the_basis_its_source_the_line_the_range_parts_and_every_outcome(db, client, fid):
    _give_basis(db, fid, _basis())
    page = client.get(f"/fields/{fid}").text
    assert giip_card(page) == fmt(88.0)
    assert "P90–P10 80.0–97.0" in text_of(page)
    assert _section(page, "basis-line").startswith(
        "Basis: Tank with a Fetkovich pseudo-steady-state aquifer (automatic (the evidence rule)): "
        "water arrives"
    )
    line = text_of(re.search(r'id="line-giip">(.*?)</span>', page).group(1))
    assert line == "Straight p/z line 100.0 (P90–P10 95.0–105.0)"
    assert text_of(re.search(r'id="line-eur">(.*?)</span>', page).group(1)) == "Straight p/z line 80.0"
    assert re.search(r'id="eur">75\.0<', page) and re.search(r'id="remaining">55\.0<', page)
    assert re.search(r'id="rf">85 %<', page) or re.search(r'id="rf">85%<', page)
    parts = _section(page, "range-parts")
    assert (
        "Scatter of the surveys 3.0 36 %" in parts and "Models the data cannot tell apart 4.0 64 %" in parts
    )
    table = page.split('id="model-outcomes"')[1].split("</table>")[0]
    rows = {
        m: text_of(r).strip()
        for m, r in re.findall(r'<tr data-outcome="([^"]+)"[^>]*>(.*?)</tr>', table, re.S)
    }
    assert 'data-outcome="aquifer_fetkovich" class="is-basis"' in table
    assert rows["aquifer_fetkovich"].startswith(
        "Tank with a Fetkovich pseudo-steady-state aquifer (basis) 88.0 84.0–92.0"
    )
    assert "75.0 85.2 % 55.0 determined" in rows["aquifer_fetkovich"] and rows["aquifer_fetkovich"].endswith(
        "0.0"
    )
    # parameters the data do not determine: "not determined", and none of its numbers
    assert "not determined" in rows["aquifer_pot"] and "61.2" not in rows["aquifer_pot"]
    assert "500.0" not in rows["aquifer_pot"]
    assert "no result" in rows["two_tank"] and "not fitted: too little depletion" in rows["two_tank"]
    # the basis choice offers automatic with its recommendation and the models with results
    select_html = page.split('id="basis_model"')[1].split("</select>")[0]
    options = re.findall(r'<option value="([^"]+)"[^>]*>([^<]*)<', select_html)
    assert options == [
        ("automatic", "Automatic (recommended: Tank with a Fetkovich pseudo-steady-state aquifer)"),
        ("single_tank", "Straight p/z line"),
        ("aquifer_fetkovich", "Tank with a Fetkovich pseudo-steady-state aquifer"),
        ("aquifer_pot", "Tank with a pot aquifer"),
    ]
    assert 'id="engineer-choice"' not in page


def test_engineers_choice_shows_beside_the_automatic_recommendation(db, client, fid):
    _give_basis(db, fid, _basis("single_tank", "engineer", engineer_reason="the water is condensed vapour"))
    page = client.get(f"/fields/{fid}").text
    assert (
        _section(page, "engineer-choice")
        == "Engineer's choice: Straight p/z line — the water is condensed vapour"
    )
    assert _section(page, "automatic-recommendation") == (
        "Automatic recommendation: Tank with a Fetkovich pseudo-steady-state aquifer — water arrives at the "
        "wells and the aquifer model is determined"
    )
    assert "(engineer's choice)" in _section(page, "basis-line")


def test_api_field_carries_the_headline_and_the_estimate_its_basis(db, client, fid):
    _give_basis(db, fid, _basis())
    body = client.get(f"/api/fields/{fid}").json()
    head = body["headline"]
    assert (head["model"], head["source"], head["line_best_bscf"]) == (
        "aquifer_fetkovich",
        "automatic",
        100.0,
    )
    assert [p["plus_minus_pct"] for p in head["range_parts"]] == [3.0, 4.0]
    assert [o["model"] for o in head["outcomes"] if o["is_basis"]] == ["aquifer_fetkovich"]
    assert body["detail"]["basis"]["range_parts"][0]["sigma_ln"] == 0.03  # the engine's own record
    est = client.get(f"/api/fields/{fid}/estimate").json()
    assert (est["basis_model"], est["basis_source"], est["line_giip_best_bscf"]) == (
        "aquifer_fetkovich",
        "automatic",
        100.0,
    )
    assert est["giip_best_bscf"] == 88.0


def test_a_refused_field_shows_no_best_fit_in_its_headline(db, client):
    from server.services.jobs import queue as jobs
    from server.services.jobs import runner
    from server.web.templating import DASH
    from tests.factories import add_volumetric_history, make_field

    with db.session() as s:
        f = make_field(s, name="Sparse")
        add_volumetric_history(s, f, survey_every_months=40)  # too few surveys: refused
        jobs.enqueue_field_recompute(s, [f.id], reason="test")
        fid = f.id
    runner.drain(db)
    assert latest(db, fid).status == "refused"
    page = client.get(f"/fields/{fid}").text
    for card in ("giip-best", "eur", "rf", "remaining"):
        assert re.search(rf'id="{card}">{re.escape(DASH)}<', page), card
    assert 'id="basis"' not in page and 'id="line-giip"' not in page and 'id="giip-range"' not in page
    assert "No estimate:" in text_of(page)


def test_choosing_a_model_changes_the_headline_everywhere_and_automatic_restores_it(db, client, fid):
    """The round trip through the JSON API and the page (the browser test drives the form)."""
    before = latest(db, fid)
    other = next(
        o
        for o in before.detail["outcomes"]
        if o["model"] != "single_tank" and o["giip_bscf"] and o["eur_bscf"]
    )
    # a model needs a reason: refused, naming the field, nothing stored
    r = client.patch(f"/api/fields/{fid}/choices", json={"basis_model": other["model"]})
    assert r.status_code == 409 and r.json()["detail"].startswith("basis_reason: Harrow Reach: give a reason")
    assert client.patch(f"/api/fields/{fid}/choices", json={"basis_model": "ocean"}).status_code == 422
    assert latest(db, fid).id == before.id
    r = client.patch(
        f"/api/fields/{fid}/choices",
        json={"basis_model": other["model"], "basis_reason": "core shows a baffle"},
    )
    assert r.status_code == 200, r.text
    est = r.json()["estimate"]
    assert (est["basis_model"], est["basis_source"]) == (other["model"], "engineer")
    assert est["giip_best_bscf"] == other["giip_bscf"] and est["eur_bscf"] == other["eur_bscf"]
    assert est["line_giip_best_bscf"] == before.giip_best_bscf  # the line stays beside it
    assert client.get(f"/api/fields/{fid}/choices").json()["basis_reason"] == "core shows a baffle"
    page = client.get(f"/fields/{fid}").text
    assert giip_card(page) == fmt(other["giip_bscf"])
    assert _section(page, "engineer-choice") == f"Engineer's choice: {other['title']} — core shows a baffle"
    assert _section(page, "automatic-recommendation").startswith(
        "Automatic recommendation: Straight p/z line (volumetric tank) — "
    )
    assert 'id="line-giip"' in page
    row = client.get("/").text.split(f'data-field-id="{fid}"')[1].split("</tr>")[0]
    assert re.search(r'data-col="dynamic_best">' + re.escape(fmt(other["giip_bscf"])) + "<", row)
    assert f"{other['title']} (engineer's choice)" in html.unescape(row)
    history = client.get(f"/api/fields/{fid}/history").json()
    assert len(history) == 2
    # back to automatic: the reason goes, the recommendation is the headline again
    r = client.patch(f"/api/fields/{fid}/choices", json={"basis_model": "automatic"})
    est = r.json()["estimate"]
    assert (est["basis_model"], est["basis_source"], est["giip_best_bscf"]) == (
        "single_tank",
        "automatic",
        before.giip_best_bscf,
    )
    assert r.json()["changed"] == ["basis_model", "basis_reason"]
    page = client.get(f"/fields/{fid}").text
    assert giip_card(page) == fmt(before.giip_best_bscf) and 'id="engineer-choice"' not in page


def test_the_choices_form_requires_a_reason_for_a_model_and_audits_the_choice_in_words(db, client, fid):
    est = latest(db, fid)
    other = next(
        o for o in est.detail["outcomes"] if o["model"] != "single_tank" and o["giip_bscf"] and o["eur_bscf"]
    )
    form = {
        "abandonment_pressure": "1000.0",
        "z_method": "dak",
        "overpressure_mode": "off",
        "ce": "",
        "datum_correction": "true",
        "condensate_correction": "true",
        "use_lab_table": "true",
        "basis_model": other["model"],
        "basis_reason": "   ",
    }
    r = client.post(f"/fields/{fid}/choices", data=form)
    assert r.status_code == 422
    box = text_of(re.search(r'id="choices-problem">(.*?)</div>', r.text, re.S).group(1))
    assert "Nothing was changed" in box and "Harrow Reach: give a reason for basing the headline on" in box
    assert 'aria-invalid="true" autofocus' in r.text.split('id="basis_reason"')[1][:80]
    assert latest(db, fid).id == est.id
    r = client.post(f"/fields/{fid}/choices", data=form | {"basis_reason": "pressure build-up in W-2"})
    text = text_of(r.text)
    assert (
        f"Saved: analysis choices: basis of the headline Automatic (the evidence rule) → {other['title']}; "
        "reason for the basis none → “pressure build-up in W-2”" in text
    )
    assert giip_card(r.text) == fmt(other["giip_bscf"])
    selected = re.search(r'<option value="([^"]+)" selected>', r.text.split('id="basis_model"')[1]).group(1)
    assert selected == other["model"]
    # the audit table of the page gives the before/after in words too
    audit = text_of(r.text.split('class="grid audit"')[1].split("</table>")[0])
    assert "basis of the headline: Automatic (the evidence rule)" in audit
    assert f"basis of the headline: {other['title']}" in audit and "basis_model" not in audit
