"""Field and portfolio pages of the demo portfolio show the diagnosis a user needs:
flags with reasons, the ranked models, the model-fit chart data, and flags per field."""

import json
import re

from sqlalchemy import select

from server.db.models import Field
from server.services.demo import load_demo
from server.services.jobs import runner


def _demo(db) -> dict[str, int]:
    with db.session() as s:
        load_demo(s)
    runner.drain(db)
    with db.session() as s:
        return {f.name: f.id for f in s.execute(select(Field)).scalars()}


def test_field_page_shows_flags_model_table_and_chart(db, client):
    ids = _demo(db)
    html = client.get(f"/fields/{ids['Gorsewick']}").text
    flags = re.search(r'<ul class="flags" id="flags".*?</ul>', html, re.S).group(0)
    assert 'data-code="compartment_signature"' in flags and "GRW-3" in flags
    assert re.findall(r'<tr data-model="([a-z_]+)">', html)[0] == "two_tank"
    assert 'id="model-statement">Best fit: Two tanks' in html
    fig = json.loads(re.search(r'id="model-fits-figure">(.*?)</script>', html, re.S).group(1))
    names = [t["name"] for t in fig["data"]]  # surveys, the two-tank fit per compartment, the others
    assert names[1].endswith("(East)") and names[2].endswith("(West)")
    assert len(names) == 3 + 5  # two single-tank and three aquifer models: one line each
    assert 'id="well-agreement"' in html and "reads near initial" in html
    clean = client.get(f"/fields/{ids['Amberlode']}").text
    assert 'id="flags">No flags' in clean


def test_portfolio_page_lists_each_fields_flags(db, client):
    ids = _demo(db)
    html = client.get("/").text

    def row(name):
        return re.search(rf'<tr data-field-id="{ids[name]}">(.*?)</tr>', html, re.S).group(1)

    assert 'data-code="aquifer_signature"' in row("Fallowmere")
    assert 'data-code="compartment_signature"' in row("Gorsewick")
    assert 'data-code="too_little_depletion"' in row("Dunmarrow")
    assert "flag-list" not in row("Amberlode") and "within the range" in row("Amberlode")


def test_aquifer_field_page_shows_the_cole_plot(db, client):
    ids = _demo(db)
    html = client.get(f"/fields/{ids['Fallowmere']}").text
    assert 'data-code="aquifer_signature"' in html
    fig = json.loads(re.search(r'id="cole-figure">(.*?)</script>', html, re.S).group(1))
    names = [t["name"] for t in fig["data"]]
    assert names[0] == "F/Eg" and any(n.startswith("F/Eg trend: ") for n in names)
    assert re.findall(r'<tr data-model="([a-z_]+)">', html)[0].startswith("aquifer_")


def test_portfolio_totals_add_means_not_percentiles(db, client):
    # Check value 34 on the page: for independent fields the total's P90 is above the sum
    # of the P90s and its P10 below the sum of the P10s.
    _demo(db)
    html = client.get("/").text
    row = re.search(r'<tr data-total="volumetric">(.*?)</tr>', html, re.S).group(1)
    cells = re.findall(r'<td class="num">([^<]*)</td>', row)
    n, p90s, _, p10s, _ = (float(c.replace(",", "")) for c in cells[:5])
    t90, _, t10 = (float(x.replace(",", "")) for x in cells[5].split(" / "))
    assert n == 12 and t90 > p90s and t10 < p10s
    assert "independent fields" in row
    assert re.search(r'<tr data-total="dynamic">', html)
