"""The movements dashboard page on both databases: the waterfall, ranking, replacement ratio and
history sections with units, the asset/category/field choices, a review with nothing to compare
with, and bad parameters named. Numbers are worked by hand in movements_case.py."""

import json
import re

import pytest

from server.services.audit import Actor
from tests.services.reserves.movements_case import build_two_years
from tests.web.conftest import make_user


@pytest.fixture
def case(db):
    prep, appr = make_user(db, "engineer", "prep"), make_user(db, "approver", "appr")
    with db.session() as s:
        c = build_two_years(s, Actor(prep, "prep"), Actor(appr, "appr"))
        return {"ye24": c["ye24"].id, "ye25": c["ye25"].id, "fields": c["fields"]}


def _figure(html: str, block: str) -> dict:
    return json.loads(
        re.search(rf'<script type="application/json" id="{block}">(.*?)</script>', html, re.S)[1]
    )


def test_dashboard_page(case, client):
    html = client.get(f"/reserves/{case['ye25']}/movements").text
    assert "Portfolio: 2P from opening to closing (Bscf)" in html
    fall = _figure(html, "waterfall-figure")["data"][0]
    assert (
        fall["type"] == "waterfall"
        and fall["y"][0] == pytest.approx(85.5)
        and fall["y"][-1] == pytest.approx(91.4)
    )
    assert "Reserves replacement ratio (common practice) = reserves added in the period ÷ production" in html
    assert "3.81" in html and "not defined (no production in the period)" in html  # 8 / 2.1; East
    ranking = re.search(r'<table class="grid" id="ranking">(.*?)</table>', html, re.S)[1]
    assert ranking.index("Newdale") < ranking.index("Upland") < ranking.index("Southcombe")
    assert "Newdale: booked 2P over the reviews (Bscf)" in html
    assert "qualified people" in html
    assert "-0.000" not in html  # no negative zero for an empty disposals step
    # an asset, a category and a field
    html = client.get(
        f"/reserves/{case['ye25']}/movements",
        params={"asset": "North", "category": "1P", "field": case["fields"]["Upland"]},
    ).text
    assert "North: 1P from opening to closing (Bscf)" in html
    assert _figure(html, "waterfall-figure")["layout"]["meta"] == {
        "group": "asset North",
        "category": "1P",
        "balances": True,
    }
    hist = _figure(html, "history-figure")["data"]
    assert hist[0]["y"] == [pytest.approx(48.0)] and hist[1]["y"] == [pytest.approx(50.0)]
    assert hist[1]["name"] == "this review (draft)"
    # the review page links to the dashboard
    assert (
        f'/reserves/{case["ye25"]}/movements" id="movements-link"'
        in client.get(f"/reserves/{case['ye25']}").text
    )


def test_no_earlier_review_and_bad_parameters(case, client):
    html = client.get(f"/reserves/{case['ye24']}/movements").text
    assert "There is no earlier approved review to compare with" in html and "chart-waterfall" not in html
    url = f"/reserves/{case['ye25']}/movements"
    for params, name in (
        ({"asset": "Nowhere"}, "asset"),
        ({"field": "x"}, "field"),
        ({"field": "²"}, "field"),
        ({"field": "99999999999"}, "field"),
        ({"category": "4P"}, "category"),
    ):
        r = client.get(url, params=params)
        assert r.status_code == 422 and name in r.text, (params, r.text[-500:])
    assert client.get("/reserves/999/movements").status_code == 404
