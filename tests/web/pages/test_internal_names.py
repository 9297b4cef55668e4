"""No internal names reach people (issue 12, point 9): every field page of the demo portfolio
and its CSV and XLSX export are scanned for model keys, parameter names, statistic names and
day numbers; the portfolio compares each field's basis, not the straight line, with its
volumetric estimate, and names the basis.

The demo portfolio is the project's own invented set (services/demo.py): the page is scanned
for what a reader sees (text, chart trace names, hover text, axis titles), not for HTML
attributes, which may keep keys for scripts and tests."""

from __future__ import annotations

import csv
import io
import json
import re

import openpyxl
import pytest
from sqlalchemy import select

from server.db.models import Field
from server.engine.aquifer.models import SPECS as AQUIFER_SPECS
from server.engine.headline.types import BASIS_MODELS
from server.services import words
from server.services.demo import load_demo
from server.services.jobs import runner
from tests.web.fieldbench import text_of

# What must never be read: model keys, parameter and statistic names with units glued on,
# the engine's method keys and day numbers. "volumetric" is a key and a plain word of the trade.
INTERNAL = re.compile(
    r"\b(?:"
    + "|".join(
        sorted(
            {*BASIS_MODELS, *AQUIFER_SPECS, *words.PARAMETER_WORDS} - {"red", "volumetric"},
            key=len,
            reverse=True,
        )
    )
    + r"|giip_tank\d+_bscf|transmissibility_tank\d+\w*|rss_psia2|\w+_(?:psia|bscf|frac|per_psi|per_day)\b"
    + r"|pz-(?:ols|wls)[\w-]*|day \d{4,6}"
    + r")"
)


def _chart_words(page: str) -> list[str]:
    """The words a chart shows: trace names, hover text and templates, axis and chart titles."""
    out = []
    for blob in re.findall(r'<script type="application/json" id="[^"]+">(.*?)</script>', page, re.S):
        fig = json.loads(blob)
        for trace in fig.get("data") or []:
            for key in ("name", "hovertemplate", "text", "hovertext"):
                v = trace.get(key)
                out += [str(x) for x in v] if isinstance(v, list) else [str(v)] if v else []
        layout = fig.get("layout") or {}
        for key, v in layout.items():
            if isinstance(v, dict) and "title" in v:
                out.append(json.dumps(v["title"]))
        if "title" in layout:
            out.append(json.dumps(layout["title"]))
    return out


@pytest.fixture
def demo(db):
    with db.session() as s:
        load_demo(s)
    runner.drain(db)
    with db.session() as s:
        return {f.name: f.id for f in s.execute(select(Field)).scalars()}


def test_the_pattern_catches_what_it_should():
    """The scan can fail: each kind of internal name is caught, and plain words are not."""
    for bad in (
        "single_tank",
        "Basis aquifer_fetkovich",
        "giip_tank1_bscf = 58",
        "rss_psia2 is",
        "on day 16773",
        "ce_per_psi",
        "influx_frac_of_gas_pv",
        "pz-ols",
        "connected_tank",
    ):
        assert INTERNAL.search(bad), bad
    for fine in ("Straight p/z line (volumetric tank)", "GIIP of tank 1 [Bscf]", "on 2015-12-04", "red"):
        assert not INTERNAL.search(fine), fine


def test_demo_field_pages_and_exports_show_no_internal_names(db, client, demo):
    found = {}
    for name, fid in demo.items():
        page = client.get(f"/fields/{fid}").text
        for where, text in [("text", text_of(page)), *(("chart", w) for w in _chart_words(page))]:
            for m in INTERNAL.finditer(text):
                found.setdefault(f"{name} ({where})", set()).add(text[max(0, m.start() - 50) : m.end() + 30])
    portfolio = client.get("/").text
    for m in INTERNAL.finditer(text_of(portfolio) + " ".join(_chart_words(portfolio))):
        found.setdefault("portfolio page", set()).add(m.group(0))
    rows = list(csv.reader(io.StringIO(client.get("/portfolio.csv").text)))
    for m in INTERNAL.finditer(" | ".join(" | ".join(r) for r in rows)):
        found.setdefault("CSV", set()).add(m.group(0))
    wb = openpyxl.load_workbook(io.BytesIO(client.get("/portfolio.xlsx").content), read_only=True)
    cells = [
        str(c) for ws in wb.worksheets for row in ws.iter_rows(values_only=True) for c in row if c is not None
    ]
    for m in INTERNAL.finditer(" | ".join(cells)):
        found.setdefault("XLSX", set()).add(m.group(0))
    assert not found, found


def test_portfolio_compares_the_basis_names_it_and_exports_the_line(db, client, demo):
    page = client.get("/").text
    row = page.split(f'data-field-id="{demo["Gorsewick"]}"')[1].split("</tr>")[0]
    cell = re.search(r'data-col="basis"([^>]*)>(.*?)</span>', row, re.S)
    assert text_of(cell.group(2)).strip() == words.model_short("connected_tank")
    assert words.model_title("connected_tank") in cell.group(1)  # the full title on hover
    assert "below the low case" in text_of(re.search(r'data-col="ratio">(.*?)</td>', row, re.S).group(1))
    rows = list(csv.reader(io.StringIO(client.get("/portfolio.csv").text)))
    header = rows[0]
    # volume headers end in their unit and basis ("[Bscf (60 °F, 14.696 psia)]"): key them by name
    header = [h.split(" [")[0] if "GIIP" in h else h for h in header]
    by_name = {r[0]: dict(zip(header, r, strict=False)) for r in rows[1:] if r and r[0] in demo}
    g = by_name["Gorsewick"]
    assert g["basis of the dynamic GIIP"] == words.model_title("connected_tank")
    assert g["dynamic best against volumetric range"] == "below"
    line, best = float(g["straight p/z line GIIP best"]), float(g["dynamic GIIP best"])
    assert best < 0.75 * line  # the connected volume, not the line through both groups
    assert float(g["volumetric GIIP low (P90)"]) > best  # flagged against the mapped volume
    assert by_name["Lowmarsh Deep"]["basis of the dynamic GIIP"] == words.model_title("single_tank")
    assert (
        by_name["Lowmarsh Deep"]["straight p/z line GIIP best"]
        == by_name["Lowmarsh Deep"]["dynamic GIIP best"]
    )
    # too little depletion: the volumetric estimate is the headline, named as such, and is not
    # held against itself
    assert by_name["Dunmarrow"]["basis of the dynamic GIIP"] == words.model_title("volumetric")
    assert by_name["Dunmarrow"]["dynamic best against volumetric range"] == ""
    # totals add the basis values (the dynamic best of each estimated field)
    totals = client.get("/api/portfolio/totals").json()["dynamic"]
    bests = [float(r["dynamic GIIP best"]) for r in by_name.values() if r["dynamic GIIP best"]]
    assert totals["n_fields"] == len(bests)
    assert totals["arithmetic_p50_bscf"] == pytest.approx(sum(bests), abs=0.01 * len(bests))
