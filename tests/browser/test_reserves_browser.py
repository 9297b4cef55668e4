"""In Chromium, the annual reserves review end to end on the demo portfolio: an engineer creates
a review, a field gets a newer estimate and is refreshed, its volumes are overridden with a reason
and a justification, a reconciliation line is assigned, every other blocker is resolved through
the field pages and the review is submitted; a different user (a reserves approver: four eyes)
approves it; the approved review shows no form and refuses a direct POST; the approver reopens
it with a reason, which makes a new draft revision."""

import re

from tests.browser.conftest import BROWSER_USERS, log_in

FIELD = "Dunmarrow"  # the demo field without a computed volume: it must be overridden


def _post_status(page, path: str, data: dict) -> int:
    """A form POST made from the page's own session (the form token taken from the page)."""
    return page.evaluate(
        """([path, data]) => {
            const body = new URLSearchParams(data);
            body.set('csrf_token', document.querySelector('input[name=csrf_token]').value);
            return fetch(path, {method: 'POST', body, redirect: 'manual'}).then((r) => r.status);
        }""",
        [path, data],
    )


def _open_field(page, base: str, review_url: str, name: str) -> None:
    page.goto(review_url)
    with page.expect_navigation():
        page.locator("#bookings").get_by_role("link", name=name, exact=True).click()


def test_review_cycle_in_the_browser(page, browser, live_server, console_errors, screenshot_dir):
    # 1. create
    page.goto(live_server + "/reserves")
    page.get_by_label("Name").fill("Browser cycle")
    page.get_by_label("Effective date (as at the end of the day)").fill("2025-12-31")
    with page.expect_navigation():
        page.get_by_role("button", name="Create the review").click()
    assert "created reserves review 'Browser cycle'" in page.locator("#flash").inner_text()
    review_url = page.url.split("?")[0]
    review_id = int(re.search(r"/reserves/(\d+)$", review_url).group(1))
    assert page.locator("#review-status").inner_text() == "draft"
    assert page.locator("#blocker-list li").count() >= 1
    page.screenshot(path=str(screenshot_dir / "reserves-review-draft.png"), full_page=True)

    # 2. a newer estimate of the field (its abandonment pressure changed), then refresh it
    page.goto(live_server + "/")
    page.get_by_role("link", name=FIELD, exact=True).click()
    box = page.locator("#abandonment_pressure")
    box.fill(f"{float(box.input_value().replace(',', '')) + 10:.1f}")
    with page.expect_navigation():
        page.locator("#choices-save").click()
    field_id = int(re.search(r"/fields/(\d+)", page.url).group(1))
    page.goto(review_url + "?show=newer")
    assert page.locator(f"#refresh-{field_id}").count() == 1
    with page.expect_navigation():
        page.locator(f"#refresh-{field_id}").click()
    assert f"{FIELD} refreshed from estimate" in page.locator("#flash").inner_text()

    # 3. override the volumes with a reason, and justify
    _open_field(page, live_server, review_url, FIELD)
    # the young field's computed volumes rest on its volumetric basis; the engineer overrides them
    assert "Volumetric estimate" in page.locator("main").inner_text()
    page.get_by_label("Override of 1P").fill("1.5")
    page.get_by_label("Override of 2P").fill("2.5")
    page.get_by_label("Override of 3P").fill("3.5")
    page.get_by_label("Reason for the override").fill(
        "volumetric range: the p/z data do not yet determine it"
    )
    page.get_by_label("Justification", exact=False).fill(
        "booked from the volumetric estimate until surveys arrive"
    )
    with page.expect_navigation():
        page.get_by_role("button", name="Save the booking").click()
    assert page.locator("#booked-2P").inner_text() == "2.500"
    # sales gas beside it: 2.5 Bscf separator gas times the team's default factor 0.95
    assert page.locator("#sales-2P").inner_text() == "2.375"
    assert "95 % of the separator gas" in page.locator("#sales-gas-factor").inner_text()
    assert page.locator("#field-blocks").count() == 0

    # 4. assign the 2P change: 0.5 to extensions and discoveries, revisions take the remainder
    page.locator("#assign-2P > summary").click()
    page.locator("#line-2P-extensions_discoveries").fill("0.5")
    page.locator("#line-2P-revisions").fill("")
    with page.expect_navigation():
        page.locator("#assign-2P-button").click()
    row = page.locator("#line-2P").inner_text()
    assert "by " + BROWSER_USERS["engineer"] in row and "does not balance" not in row

    # 5. every other field that blocks: write its justification (override where it has no volume)
    for _ in range(30):
        page.goto(review_url + "?show=blocked")
        blocked = page.locator("#bookings tr[data-blocked] a")
        if blocked.count() == 0:
            break
        with page.expect_navigation():
            blocked.first.click()
        if "no computed volume" in page.locator("#field-blocks").inner_text():
            for cat, v in (("1P", "1"), ("2P", "2"), ("3P", "3")):
                page.get_by_label(f"Override of {cat}").fill(v)
            page.get_by_label("Reason for the override").fill("no dynamic volume yet")
        page.locator("#justification").fill("reviewed: flags and basis checked against the data")
        with page.expect_navigation():
            page.get_by_role("button", name="Save the booking").click()
        assert page.locator("#field-blocks").count() == 0, page.locator("#field-blocks").inner_text()
    page.goto(review_url)
    assert page.locator("#no-blockers").count() == 1
    with page.expect_navigation():
        page.locator("#submit-review").click()
    assert page.locator("#review-status").inner_text() == "submitted"
    assert page.locator("#approve-form").count() == 0  # engineers do not approve

    # 6. approve as a different user (four eyes)
    approver_ctx = browser.new_context(viewport={"width": 1280, "height": 900})
    appr = approver_ctx.new_page()
    appr.set_default_timeout(15000)
    log_in(appr, live_server, BROWSER_USERS["approver"])
    appr.goto(review_url)
    appr.get_by_label("Approval comment").fill("agreed with the bookings")
    with appr.expect_navigation():
        appr.get_by_role("button", name="Approve").click()
    assert appr.locator("#review-status").inner_text() == "approved"

    # 7. the approved review: no form, and a direct POST is refused
    _open_field(page, live_server, review_url, FIELD)
    assert page.locator("#review-status").inner_text() == "approved"
    assert page.locator("#booking-form").count() == 0 and page.locator("form[id^=line-form]").count() == 0
    booking = f"/reserves/{review_id}/fields/{field_id}/booking"
    assert _post_status(page, booking, {"class_status": "contingent:development_pending"}) == 409
    assert _post_status(page, f"/reserves/{review_id}/fields/{field_id}/reconciliation/2P", {}) == 409
    page.reload()
    assert page.locator("#booked-2P").inner_text() == "2.500"

    # 8. reopen with a reason: a new draft revision; the approved one stays
    appr.goto(review_url)
    appr.get_by_label("Reason for reopening").fill("a late pressure survey on " + FIELD)
    with appr.expect_navigation():
        appr.get_by_role("button", name="Reopen as a new revision").click()
    assert appr.locator("#review-status").inner_text() == "draft"
    assert "a late pressure survey" in appr.locator(".lede").inner_text()
    assert appr.url.split("?")[0] != review_url
    appr.goto(review_url)
    assert appr.locator("#review-status").inner_text() == "approved"
    page.screenshot(path=str(screenshot_dir / "reserves-field-approved.png"), full_page=True)
    approver_ctx.close()
    # the two refused POSTs above are the only errors the browser reports
    assert [e for e in console_errors if "status of 409" not in e] == []
    assert len(console_errors) == 2
