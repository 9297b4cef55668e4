"""The reserves report's PDF on both databases: pages, the DRAFT mark, the numbers against the
review's read model (``views.review_detail``), escaping, and the p/z data it draws.

Text is read back with pypdf (an independent PDF parser, not the renderer). Expected numbers
are the review's own service values (``review_detail``), printed with three decimals; the
waterfall's roll-forward closing = opening - production + revisions + extensions + improved
recovery + acquisitions - disposals is the usual reserves reconciliation (common practice).
"""

import copy
import datetime as dt
import io
import re

import pypdf
import pytest

from server.services.reserves import views, workflow
from server.services.reserves_report import content, pdf, svg
from tests.factories import make_field
from tests.services.reserves.conftest import add_estimate

YE24, YE25 = dt.date(2024, 12, 31), dt.date(2025, 12, 31)


def _pages(report) -> list[str]:
    reader = pypdf.PdfReader(io.BytesIO(pdf.report_pdf(report)))
    return [p.extract_text() for p in reader.pages]


def _approved(session, people, name, date):
    r = workflow.create_review(session, people["eng"], name, date)
    workflow.submit(session, people["eng"], r)
    workflow.approve(session, people["appr"], r, "as presented")
    return r


def test_draft_report_has_cover_summary_a_page_per_field_and_draft_on_every_page(
    session, portfolio, people, monkeypatch
):
    monkeypatch.setattr(pdf, "CHUNK_FIELDS", 1)  # every field page laid out on its own, then joined
    monkeypatch.setattr(pdf, "CHUNK_LINES", 4)  # the reconciliation's six lines in two parts
    _approved(session, people, "YE24", YE24)
    r = workflow.create_review(session, people["eng"], "Year-end 2025", YE25)
    report = content.build_report(session, r)
    pages = _pages(report)
    detail = views.review_detail(session, r)
    assert all("DRAFT" in p for p in pages), [i for i, p in enumerate(pages) if "DRAFT" not in p]
    numbered = [bool(re.search(rf"\bpage {i}\b", p)) for i, p in enumerate(pages, start=1)]
    assert numbered == [True] * len(pages)  # numbered on across the parts
    cover = pages[0]
    for text in (
        "Reserves report",
        "Year-end 2025",
        "Effective date",
        "2025-12-31",
        "Approver",
        "not approved",
    ):
        assert text in cover
    # one page (or more) per field, headed by its name, in the review's order
    starts = [i for f in detail.fields for i, p in enumerate(pages) if f"Field: {f.field_name}" in p]
    assert len(starts) == len(detail.fields) == 2 and starts == sorted(starts)
    for f, i in zip(detail.fields, starts, strict=True):
        page = pages[i]
        for v in (f.booked_low_bscf, f.booked_best_bscf, f.booked_high_bscf, f.produced_gas_bscf):
            assert f"{v:,.3f}" in page, (f.field_name, v)
        assert f.inputs_fingerprint in page and "Engine version" in page
    # the summary's portfolio totals are the read model's
    summary = next(p for p in pages if "Summary of booked volumes" in p)
    tot = {(t.group, t.category): t for t in detail.totals}
    assert f"{tot[('portfolio', '2P')].gas_bscf:,.3f}" in summary
    assert f"{tot[('portfolio', '1P')].condensate_stb:,.0f}" in summary
    assert "[Bscf]" in summary and "[stb]" in summary
    # the reconciliation's portfolio line, and the last page's cautions
    rec = "\n".join(p for p in pages if "Reconciliation" in p or "By field" in p)
    p2 = next(t for t in detail.reconciliation_totals if (t.group, t.category) == ("portfolio", "2P"))
    assert f"{p2.opening_bscf:,.3f}" in rec and f"{p2.production_bscf:,.3f}" in rec
    assert "Reconciliation by field [Bscf], continued" in rec, pages
    for ln in detail.reconciliation:  # every field's line is printed, in either part
        row = f"{ln['field_name']} {ln['category']} {ln['opening_bscf']:,.3f} {ln['production_bscf']:,.3f}"
        assert row in rec, (row, pages)
    assert (
        "Methods and cautions" in pages[-1] and "entitled" in pages[-1] and "End of the report" in pages[-1]
    )


def test_waterfall_rolls_opening_forward_to_closing(session, portfolio, people):
    _approved(session, people, "YE24", YE24)
    r = workflow.create_review(session, people["eng"], "YE25", YE25)
    report = content.build_report(session, r)
    for cat in ("1P", "2P", "3P"):
        steps = report.waterfalls[cat]
        assert [s[0] for s in steps][0] == "Opening" and steps[-1][0] == "Closing"
        assert steps[0][1] + sum(v for _, v in steps[1:-1]) == pytest.approx(steps[-1][1])
    # 2P opening: last year's 48 (Upland) + 21.5 (Lowmoor) = 69.5; produced in 2025: 1 + 0.5 Bscf (conftest)
    steps = dict(report.waterfalls["2P"])
    assert steps["Opening"] == pytest.approx(69.5) and steps["Production"] == pytest.approx(-1.5)


def test_approved_report_carries_no_draft_mark_and_names_the_approver(session, portfolio, people):
    r = _approved(session, people, "YE24", YE24)
    pages = _pages(content.build_report(session, r))
    assert not any("DRAFT" in p for p in pages)
    assert "appr-a" in pages[0] and "as presented" in pages[0] and "Approved" in pages[0]


def test_markup_in_names_and_texts_is_escaped(session, people):
    f = make_field(session, name='<b>Tor & "Co"</b>', asset="<i>North</i>")
    add_estimate(
        session, f, flags=[{"code": "x", "severity": "alert", "title": "<img src=x>", "reason": "r"}]
    )
    r = workflow.create_review(session, people["eng"], "<script>alert(1)</script>", YE24)
    report = content.build_report(session, r)
    html = pdf.report_html(report)
    assert "<b>Tor" not in html and "<script>" not in html and "<img" not in html and "<i>North" not in html
    assert "&lt;b&gt;Tor &amp; &#34;Co&#34;&lt;/b&gt;" in html and "&lt;script&gt;alert(1)" in html
    text = "\n".join(_pages(report))
    assert '<b>Tor & "Co"</b>' in text and "<script>alert(1)</script>" in text  # shown as typed


def test_pz_chart_points_come_from_the_frozen_estimate_only_while_it_is_unchanged(session, people):
    # p/z = (p/z)_i (1 - Gp/G) for a volumetric tank (Craft & Hawkins 1959, the gas material balance)
    f = make_field(session, name="Linefield", asset="North")
    e = add_estimate(session, f)
    pzi, giip = 5000.0, 70.0
    gps = [0.0, 5.0, 10.0, 15.0]
    e.detail = {
        **e.detail,
        "prepared": {
            "points": [
                {"index": i, "gp_bscf": g, "pz_psia": pzi * (1 - g / giip), "t_days": 19000 + 365 * i}
                for i, g in enumerate(gps)
            ]
        },
        "pz": {
            "intercept_psia": pzi,
            "giip_bscf": giip,
            "points": [{"index": i, "status": "outlier" if i == 2 else "used"} for i in range(len(gps))],
        },
    }
    session.flush()
    r = workflow.create_review(session, people["eng"], "YE24", YE24)
    fb = views.review_detail(session, r).fields[0]
    data = content.pz_data(session, fb)
    assert [p[0] for p in data.points] == gps and (data.surveys_used, data.surveys_set_aside) == (3, 1)
    assert data.line_giip_bscf == giip and data.first_survey == dt.date(1970, 1, 1) + dt.timedelta(days=19000)
    drawn = svg.pz_svg(data.points, data.line_intercept_psia, data.line_giip_bscf, 70.0, 0.0)
    assert drawn.count("<circle") == 3 and drawn.count("<path") == 2  # one cross, one basis marker
    e.inputs_fingerprint = "changed"  # not the estimate the review froze any more
    session.flush()
    data = content.pz_data(session, fb)
    assert data.points == [] and "no p/z chart" in data.source


def test_nice_ticks_cover_the_range_with_round_steps():
    assert svg.nice_ticks(0.0, 72.5) == [0, 20, 40, 60, 80]
    assert svg.nice_ticks(-1.5, 8.0) == [-2, 0, 2, 4, 6, 8]
    ticks = svg.nice_ticks(0.0, 0.0)  # a flat range still gets an axis
    assert ticks[0] <= 0.0 < ticks[-1]


def test_forecast_years_are_drawn_when_the_snapshot_holds_them(session, portfolio, people):
    """A review frozen with the forecast's yearly rows draws them per case (a polyline per case
    through (year, gas) in the plot's coordinates); one frozen without them draws the cases."""
    e = add_estimate(session, portfolio["low"], eur=(20.0, 25.0, 30.0), forecast_eur=(18.0, 22.0, 27.0))
    detail = copy.deepcopy(e.detail)
    for p, scale in zip(detail["forecast"]["profiles"], (0.5, 1.0, 1.5), strict=True):
        p["yearly"] = [{"year": y, "gas_bscf": scale * g} for y, g in ((2026, 2.0), (2027, 1.5), (2028, 1.0))]
    e.detail = detail
    session.flush()
    text = "\n".join(
        _pages(content.build_report(session, workflow.create_review(session, people["eng"], "Y", YE25)))
    )
    assert "Separator gas forecast per calendar year and case" in text
    drawn = svg.yearly_svg(
        {c: p["yearly"] for c, p in zip(("low", "best", "high"), detail["forecast"]["profiles"])}
    )
    lines = re.findall(r'<polyline points="([^"]+)"', str(drawn))
    assert len(lines) == 3
    xy = [[tuple(map(float, pt.split(","))) for pt in line.split()] for line in lines]
    # same years, so the same x for every case; higher cases lie higher (smaller SVG y)
    assert [x for x, _ in xy[0]] == [x for x, _ in xy[1]] == [x for x, _ in xy[2]]
    assert all(lo[1] > mid[1] > hi[1] for lo, mid, hi in zip(*xy, strict=True))
    assert "2,026" not in str(drawn) and ">2026<" in str(drawn)
    assert str(svg.yearly_svg({"low": [], "best": []})) == ""
