"""The probabilistic aggregate reaches the review's JSON twin and page, apart from the reported
(arithmetic) totals and labelled as not for booking; the numbers are checked in
tests/services/reserves/test_aggregate.py."""

import datetime as dt

import pytest

from tests.factories import make_field
from tests.services.reserves.conftest import add_estimate, add_production


def test_review_shows_the_probabilistic_aggregate_apart_from_the_totals(db, login_as):
    with db.session() as s:
        for name, eur in (("Upland", (40.0, 50.0, 60.0)), ("Lowmoor", (20.0, 25.0, 30.0))):
            f = make_field(s, name=name, asset="North")
            add_estimate(s, f, eur=eur)
            add_production(s, f, dt.date(2024, 1, 1), 12, 1e6 / 12)
    eng = login_as("engineer", username="eng")
    body = eng.post("/api/reserves/reviews", json={"name": "YE24", "effective_date": "2024-12-31"}).json()
    prob = {(t["group"], t["resource_class"]): t for t in body["probabilistic_totals"]}
    port = prob[("portfolio", "reserves")]
    assert port["fields"] == 2 and port["left_out"] == []
    assert port["arithmetic_p50_bscf"] == pytest.approx(49.0 + 24.0, rel=2e-3)
    assert port["p90_bscf"] > 39.0 + 19.0 and port["p10_bscf"] < 59.0 + 29.0  # independent fields
    arithmetic = {(t["group"], t["category"]): t["gas_bscf"] for t in body["totals"]}
    assert arithmetic[("portfolio", "1P")] == pytest.approx(58.0)  # the reported total is unchanged
    page = eng.get(f"/reserves/{body['review']['id']}").text
    block = page.split('id="probabilistic-totals"', 1)[1].split("</section>", 1)[0]
    assert "not for booking" in block and "arithmetic sums" in block
    assert f"{port['p90_bscf']:.3f}" in block and f"{port['p10_bscf']:.3f}" in block
