"""In Chromium: the reserves movements dashboard of a draft review (issue 15), reached from the
review page. The waterfall is drawn by plotly, the asset and category are switched and a field is
picked for the 2P history, with no console errors. The reviews are the invented two years of
tests/services/reserves/movements_case.py (numbers worked by hand there), on a server of their own."""

import pytest

from server.db.base import utcnow
from server.db.migrate import upgrade
from server.db.session import Database
from server.services.access import accounts
from server.services.audit import Actor
from tests.services.reserves.movements_case import build_two_years
from tests.web.conftest import TEST_PASSWORD
from tests.web.live import serving

from .conftest import log_in


@pytest.fixture(scope="module")
def reserves_server(tmp_path_factory):
    url = f"sqlite:///{tmp_path_factory.mktemp('movements') / 'mv.sqlite3'}"
    upgrade(url)
    db = Database(url)
    with db.session() as s:
        made = {
            name: accounts.create_user(
                s, Actor(None, "test"), username=name, role=role, password=TEST_PASSWORD, now=utcnow()
            )
            for name, role in (("mv-prep", "engineer"), ("mv-appr", "approver"), ("mv-viewer", "viewer"))
        }
        s.flush()
        case = build_two_years(s, Actor(made["mv-prep"].id, "mv-prep"), Actor(made["mv-appr"].id, "mv-appr"))
        ids = {"ye25": case["ye25"].id, "fields": case["fields"]}
    db.dispose()
    with serving(url, "m") as base_url:
        yield base_url, ids


def _drawn(page, chart: str) -> dict:
    """What plotly drew: the first trace's x and y, the title and each trace's name."""
    return page.evaluate(
        """(id) => {
            const el = document.getElementById(id);
            return {x: el.data[0].x, y: el.data[0].y, type: el.data[0].type,
                    names: el.data.map((t) => t.name), title: el.layout.title.text,
                    bars: el.querySelectorAll('.waterfalllayer .point path, .scatterlayer .point').length};
        }""",
        chart,
    )


def _show(page) -> None:
    with page.expect_navigation():
        page.get_by_role("button", name="Show these movements").click()
    page.wait_for_selector("#chart-waterfall[data-drawn='true']")
    page.wait_for_selector("#chart-history[data-drawn='true']")


def test_dashboard_switch_asset_category_and_field(
    anon_page, reserves_server, console_errors, screenshot_dir
):
    base, ids = reserves_server
    page = anon_page
    log_in(page, base, "mv-viewer")
    page.goto(f"{base}/reserves/{ids['ye25']}")
    page.get_by_role("link", name="The year’s movements").click()
    page.wait_for_selector("#chart-waterfall[data-drawn='true']")
    assert "status draft" in page.locator(".lede").inner_text()
    fall = _drawn(page, "chart-waterfall")
    # portfolio 2P by hand: 85.5 - 2.1 - 1 + 6 + 2 + 1 - 0 = 91.4 (movements_case.py)
    assert fall["type"] == "waterfall" and fall["bars"] == 8
    assert fall["x"][0] == "opening" and fall["x"][-1] == "closing"
    assert fall["y"] == pytest.approx([85.5, -2.1, -1.0, 6.0, 2.0, 1.0, 0.0, 91.4])
    assert fall["title"].startswith("Portfolio: 2P")
    first = page.locator("#ranking tbody tr").first.inner_text()
    assert "Newdale" in first and "+6.000" in first and "extensions and discoveries" in first
    assert "not defined (no production in the period)" in page.locator("#rrr").inner_text()  # East
    # the history starts on the largest change; this review is marked as a draft
    assert _drawn(page, "chart-history")["names"] == ["approved reviews", "this review (draft)"]
    # another asset and category, and another field for the history
    page.get_by_label("Asset").select_option(label="North")
    page.get_by_label("Category").select_option("1P")
    page.get_by_label("Field for the 2P history").select_option(label="Upland (North)")
    _show(page)
    fall = _drawn(page, "chart-waterfall")
    # North 1P: Upland 38 -> 39 and Lowmoor 17.5 -> 17, with 1.5 produced and +2 default revisions
    assert fall["title"].startswith("North: 1P")
    assert fall["y"][0] == pytest.approx(55.5) and fall["y"][-1] == pytest.approx(56.0)
    assert fall["y"][1:3] == pytest.approx([-1.5, 2.0])
    assert page.get_by_label("Asset").input_value() == "North"
    assert [r.split("\t")[1] for r in page.locator("#ranking tbody tr").all_inner_texts()] == [
        "Upland",
        "Lowmoor",
    ]
    hist = _drawn(page, "chart-history")
    assert hist["title"].startswith("Upland") and hist["y"] == pytest.approx([48.0])
    assert page.locator("#history-table tbody tr.this-review").inner_text().split("\t")[-1] == "50.000"
    page.screenshot(path=str(screenshot_dir / "reserves-movements.png"), full_page=True)
    assert console_errors == []
