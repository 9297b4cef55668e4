"""In Chromium: every drawn chart has the toolbar Tankbook configures (download image, zoom,
reset; no logo, nothing that sends the figure to an online service), and every numeric axis has
round ticks (issue 16, points 4 and 12)."""

from __future__ import annotations

import math

import pytest

TOOLBAR = ["Download plot as a PNG", "Zoom", "Reset axes"]


def _visit(page, url: str) -> None:
    response = page.goto(url)
    assert response.ok, f"{url}: {response.status}"


def _charts(page) -> list[str]:
    page.wait_for_load_state("load")
    # charts inside folded sections (the forecast's deliverability fits) are checked too
    page.eval_on_selector_all("details", "ds => ds.forEach(d => { d.open = true; })")
    ids = page.eval_on_selector_all("[data-chart]", "els => els.map(e => e.id)")
    for chart in ids:
        page.wait_for_selector(f"#{chart}[data-drawn='true']")
    return ids


def _field_urls(page, base: str) -> list[str]:
    page.goto(base + "/")
    hrefs = page.eval_on_selector_all("#portfolio-table tbody th a", "els => els.map(a => a.href)")
    assert len(hrefs) == 12  # the demo portfolio
    return hrefs


def test_chart_toolbars_offer_only_image_zoom_and_reset(page, live_server, console_errors):
    urls = [live_server + "/", *_field_urls(page, live_server)[:2]]
    fields = page.eval_on_selector_all("#portfolio-table tbody tr", "rs => rs.map(r => r.dataset.fieldId)")
    urls.append(f"{live_server}/fields/{fields[0]}/fluid")
    seen = 0
    for url in urls:
        _visit(page, url)
        for chart in _charts(page):
            bar = page.locator(f"#{chart} .modebar")
            titles = bar.locator(".modebar-btn").evaluate_all("bs => bs.map(b => b.dataset.title)")
            assert titles == TOOLBAR, f"{url} #{chart}: {titles}"
            assert bar.locator("a, [data-title*='hare'], .modebar-btn--logo").count() == 0
            context = page.evaluate(f"document.getElementById('{chart}')._context")
            assert context["showSendToCloud"] is False and context["plotlyServerURL"] == ""
            assert context["displaylogo"] is False
            seen += 1
    assert seen >= 8
    assert console_errors == []


def _round(value: float, dtick: float) -> bool:
    return abs(value / dtick - round(value / dtick)) < 1e-6


def _mantissa_ok(dtick: float) -> bool:
    m = dtick / 10 ** math.floor(math.log10(dtick))
    return any(abs(m - k) < 1e-9 for k in (1.0, 2.0, 2.5, 5.0))


@pytest.mark.parametrize("width", [1440])
def test_every_numeric_axis_of_every_field_has_round_ticks(page, live_server, width):
    bad, checked = [], 0
    for url in _field_urls(page, live_server):
        _visit(page, url)
        for chart in _charts(page):
            axes = page.evaluate(
                """(id) => { const fl = document.getElementById(id)._fullLayout; const out = [];
                    for (const k of Object.keys(fl)) {
                        if (!/^[xy]axis\\d*$/.test(k) || fl[k].type !== 'linear' || !fl[k].visible) continue;
                        const ticks = (fl[k]._vals || []).map(v => v.x);
                        out.push({axis: k, dtick: Number(fl[k].dtick), ticks: ticks});
                    }
                    return out; }""",
                chart,
            )
            for a in axes:
                if not a["ticks"]:
                    continue
                checked += 1
                if not (_mantissa_ok(a["dtick"]) and all(_round(t, a["dtick"]) for t in a["ticks"])):
                    bad.append(f"{url} #{chart} {a['axis']}: {a['ticks'][:6]}")
    assert bad == []
    assert checked > 12 * 8  # p/z, pressure, production (two or three axes), history... of 12 fields
