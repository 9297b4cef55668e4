"""In Chromium (issue 12, "Done when"): on a demo field, choose another model as the basis of
the headline with a reason through the analysis choices form; the headline changes on the
field page (the engineer's choice beside the automatic recommendation) and in the portfolio
table; choosing automatic again restores the headline. No console errors.

Ivorcombe is a clean volumetric demo field that no other browser test changes; its automatic
basis is the straight line, so the engineer picks another model that has results."""

import re

FIELD = "Ivorcombe"


def _portfolio_row(page, base: str, name: str) -> dict:
    page.goto(base + "/")
    row = page.locator("#portfolio-table tbody tr", has=page.get_by_role("link", name=name, exact=True))
    basis = row.locator('[data-col="basis"]')  # a short name under the field's, the full one on hover
    return {
        "dynamic_best": row.locator('td[data-col="dynamic_best"]').inner_text().strip(),
        "basis": (basis.get_attribute("title") or "").removeprefix("basis of the dynamic GIIP: "),
    }


def _open_field(page, base: str, name: str) -> None:
    page.goto(base + "/")
    page.get_by_role("link", name=name, exact=True).click()
    page.wait_for_selector("#estimate-cards")


def test_choose_a_model_with_a_reason_then_back_to_automatic(
    page, live_server, console_errors, screenshot_dir
):
    before = _portfolio_row(page, live_server, FIELD)
    _open_field(page, live_server, FIELD)
    giip_before = page.locator("#giip-best").inner_text()
    assert giip_before == before["dynamic_best"]
    assert page.locator("#basis-title").inner_text().startswith("Straight p/z line")
    basis = page.get_by_label("Basis of the headline")
    options = basis.locator("option").all_inner_texts()
    assert options[0].startswith("Automatic (recommended: Straight p/z line")
    # a model with results (a GIIP and an EUR) other than the line, whose GIIP differs as shown
    field_id = page.url.rstrip("/").split("/")[-1].split("?")[0].split("#")[0]
    head = page.request.get(f"{live_server}/api/fields/{field_id}").json()["headline"]
    other, title, giip = next(
        (o["model"], o["title"], f"{o['giip_bscf']:,.1f}")
        for o in head["outcomes"]
        if o["has_results"] and o["model"] != "single_tank" and f"{o['giip_bscf']:,.1f}" != giip_before
    )
    assert other in basis.locator("option").evaluate_all("els => els.map(e => e.value)")
    # a model without a reason is refused, the page says why, nothing changes
    basis.select_option(other)
    with page.expect_navigation():
        page.locator("#choices-save").click()
    assert "give a reason" in page.locator("#choices-problem").inner_text()
    assert page.locator("#giip-best").inner_text() == giip_before
    page.get_by_label("Reason for a chosen model").fill("the fault seals at this level (test)")
    page.get_by_label("Basis of the headline").select_option(other)
    with page.expect_navigation():
        page.locator("#choices-save").click()
    page.wait_for_selector("#flash")
    assert page.locator("#giip-best").inner_text() == giip
    assert page.locator("#engineer-choice").inner_text() == (
        f"Engineer's choice: {title} — the fault seals at this level (test)"
    )
    assert (
        page.locator("#automatic-recommendation")
        .inner_text()
        .startswith("Automatic recommendation: Straight p/z line")
    )
    assert re.search(r"Straight p/z line " + re.escape(giip_before), page.locator("#line-giip").inner_text())
    page.locator("#estimate-cards").scroll_into_view_if_needed()
    page.evaluate("window.scrollTo(0, 0)")
    page.screenshot(path=str(screenshot_dir / "basis-engineer-choice.png"), full_page=False)
    chosen = _portfolio_row(page, live_server, FIELD)
    assert chosen == {"dynamic_best": giip, "basis": f"{title} (engineer's choice)"}
    # back to automatic: the recommendation is the headline again, everywhere
    _open_field(page, live_server, FIELD)
    page.get_by_label("Basis of the headline").select_option("automatic")
    with page.expect_navigation():
        page.locator("#choices-save").click()
    page.wait_for_selector("#flash")
    assert page.locator("#giip-best").inner_text() == giip_before
    assert page.locator("#engineer-choice").count() == 0
    assert page.get_by_label("Reason for a chosen model").input_value() == ""
    assert _portfolio_row(page, live_server, FIELD) == before
    # the refused form answers 422 (its page says why); nothing else went wrong
    assert [e for e in console_errors if "status of 422" not in e] == []
