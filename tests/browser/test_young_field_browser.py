"""In Chromium: the demo's young field (Dunmarrow: p/z has fallen too little for material balance)
books its volumetric estimate. Its page draws every chart, names the basis with the reason and
keeps the flag; the portfolio names the basis and does not hold it against itself. No console
errors."""


def test_the_young_field_shows_its_volumetric_basis(page, live_server, console_errors):
    page.goto(live_server + "/")
    row = page.locator(
        "#portfolio-table tbody tr", has=page.get_by_role("link", name="Dunmarrow", exact=True)
    )
    assert (row.locator('[data-col="basis"]').get_attribute("title") or "").endswith(
        "Volumetric estimate (too little depletion for material balance)"
    )
    assert row.locator('td[data-col="ratio"]').inner_text().strip() == "–"
    page.get_by_role("link", name="Dunmarrow", exact=True).click()
    page.wait_for_selector("#estimate-cards")
    for chart in ("chart-pz", "chart-pressure", "chart-production"):
        page.wait_for_selector(f"#{chart}[data-drawn='true']")
    assert page.locator("#giip-label").inner_text() == "GIIP from the volumetric estimate"
    basis = page.locator("#basis-line").inner_text()
    assert basis.startswith("Basis: Volumetric estimate (too little depletion for material balance)")
    assert "too little depletion to judge" in basis
    assert page.locator('[data-code="too_little_depletion"]').count() >= 1
    assert page.locator("#refusal").count() == 0
    assert console_errors == []
