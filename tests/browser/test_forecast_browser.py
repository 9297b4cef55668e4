"""In Chromium: a field's forecast on its page, then its plan edited through the form (compression
added) and the profile and EUR seen to change, with the stop reason in words and no console
errors. Needs the forecast engine (engine/forecast/build.py) to have made the demo's forecasts."""

import importlib.util
import json
import re

import pytest

pytestmark = pytest.mark.skipif(
    importlib.util.find_spec("server.engine.forecast.build") is None,
    reason="waits for the forecast engine (engine/forecast/build.py, branch h13e): no forecasts without it",
)


def _drawn_best(page) -> dict:
    """The best case's rate trace as plotly drew it (x: months, y: display rates)."""
    return page.evaluate(
        """() => {
            const t = document.getElementById('chart-forecast').data.find(
                (d) => d.name === 'best (P50)' && d.yaxis !== 'y2');
            return {x: t.x, y: t.y};
        }"""
    )


def test_add_compression_and_see_the_profile_and_eur_change(
    page, live_server, console_errors, screenshot_dir
):
    page.goto(live_server + "/")
    page.get_by_role("link", name="Juniper Knoll").click()
    page.wait_for_selector("#chart-forecast[data-drawn='true']")
    eur_before = float(page.locator("#forecast-eur-best").inner_text().replace(",", ""))
    best_before = _drawn_best(page)
    stops = page.locator("#forecast-stops").inner_text()
    assert "In the best case production stops on" in stops and "because" in stops
    assert "qualified engineers" in page.locator("#forecast-caution").inner_text()
    # the plan form (folded once a plan exists), found by its labels as a screen reader announces them
    page.locator("#plan-fold > summary").click()
    page.get_by_label("Compression from (YYYY-MM-DD)").fill("2027-01-01")
    page.get_by_label("Minimum flowing pressure with compression (psia)").fill("250")
    with page.expect_navigation():
        page.get_by_role("button", name="Save plan and recompute").click()
    page.wait_for_selector("#chart-forecast[data-drawn='true']")
    flash = page.locator("#flash").inner_text()
    assert "compression start none → 2027-01-01" in flash
    assert "minimum flowing pressure with compression none → 250.0 psia" in flash
    eur_after = float(page.locator("#forecast-eur-best").inner_text().replace(",", ""))
    assert eur_after > eur_before  # a lower flowing pressure can only produce more gas
    best_after = _drawn_best(page)
    assert best_after != best_before
    # from 2027 on the field delivers at least as much each month (the same tank, a larger drawdown)
    before = dict(zip(best_before["x"], best_before["y"], strict=True))
    later = [
        (m, q)
        for m, q in zip(best_after["x"], best_after["y"], strict=True)
        if m >= "2027-02" and m in before
    ]
    assert later and all(q >= before[m] - 1e-9 for m, q in later)
    assert any(q > before[m] + 1e-6 for m, q in later)
    assert page.locator("#plan-read").inner_text().count("2027-01-01") == 1
    yearly = page.locator("#forecast-yearly tbody tr")
    assert yearly.count() >= 1
    page.screenshot(path=str(screenshot_dir / "field-forecast.png"), full_page=True)
    # the JSON twin carries the same stored EUR
    field_id = re.search(r"/fields/(\d+)", page.url).group(1)
    text = page.evaluate(
        "(u) => fetch(u).then((r) => r.text())", f"{live_server}/api/fields/{field_id}/forecast"
    )
    data = json.loads(text)
    best = next(p for p in data["profiles"] if p["case"] == "best")
    assert round(best["eur_bscf"], 1) == pytest.approx(eur_after, abs=0.051)
    assert console_errors == []
