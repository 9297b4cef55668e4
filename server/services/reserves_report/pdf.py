"""The reserves report as HTML (Jinja, autoescaped) and as PDF (WeasyPrint, no browser)."""

from __future__ import annotations

from jinja2 import Environment, FileSystemLoader, StrictUndefined, select_autoescape

from ...settings import PROJECT_ROOT
from ..reserves.reconcile import ASSIGNABLE
from . import svg
from .content import CONTINGENT, RESERVES, Report

_ENV: Environment | None = None


def _num(value, digits: int = 3) -> str:
    """A number with ``digits`` decimals and thousands separators; "–" for none; no "-0.000"."""
    return "–" if value is None else f"{round(value, digits) + 0.0:,.{digits}f}"


def environment() -> Environment:
    """The report's own template environment (templates/report/), autoescaping HTML."""
    global _ENV
    if _ENV is None:
        env = Environment(
            loader=FileSystemLoader(str(PROJECT_ROOT / "templates" / "report")),
            autoescape=select_autoescape(["html"], default=True),
            undefined=StrictUndefined,
        )
        env.filters["num"] = _num
        env.globals.update(
            waterfall_svg=svg.waterfall_svg,
            pz_svg=svg.pz_svg,
            cases_svg=svg.cases_svg,
            yearly_svg=svg.yearly_svg,
            RESERVES=RESERVES,
            CONTINGENT=CONTINGENT,
            ASSIGNABLE=ASSIGNABLE,
        )
        _ENV = env
    return _ENV


#: Field pages per WeasyPrint document: its layout grows faster than linearly with a document's
#: length (80 field pages cost 6x what 20 do), so the PDF is laid out in parts and joined.
CHUNK_FIELDS = 20
CHUNK_LINES = 120  # reconciliation lines per part (about three pages)


def report_html(report: Report, part: str = "all", field_pages=None, first_page: int = 1, lines=None) -> str:
    """The report's HTML: the whole of it, or one part ("front": cover, summary, reconciliation
    with the first ``lines``; "lines": more reconciliation lines; "fields": the given field
    pages; "back": the appendix) whose pages are numbered from ``first_page``."""
    return (
        environment()
        .get_template("report.html")
        .render(
            r=report,
            d=report.detail,
            part=part,
            field_pages=report.fields if field_pages is None else field_pages,
            recon_lines=report.detail.reconciliation if lines is None else lines,
            first_page=first_page,
        )
    )


def html_to_pdf(html: str) -> bytes:
    return _weasyprint().HTML(string=html, base_url=str(PROJECT_ROOT)).write_pdf()


def _weasyprint():
    import weasyprint  # heavy (Pango through cffi): imported only where a PDF is made

    return weasyprint


def report_pdf(report: Report) -> bytes:
    """The PDF, laid out in parts (at most CHUNK_LINES reconciliation lines or CHUNK_FIELDS field
    pages each), joined and numbered throughout."""
    wp = _weasyprint()
    lines, fields = report.detail.reconciliation, report.fields
    parts = [("front", [], lines[:CHUNK_LINES])]
    parts += [("lines", [], lines[i : i + CHUNK_LINES]) for i in range(CHUNK_LINES, len(lines), CHUNK_LINES)]
    parts += [("fields", fields[i : i + CHUNK_FIELDS], []) for i in range(0, len(fields), CHUNK_FIELDS)]
    parts.append(("back", [], []))
    documents, next_page = [], 1
    for part, pages, part_lines in parts:
        html = report_html(report, part, pages, next_page, part_lines)
        doc = wp.HTML(string=html, base_url=str(PROJECT_ROOT)).render()
        documents.append(doc)
        next_page += len(doc.pages)
    every_page = [p for doc in documents for p in doc.pages]
    return documents[0].copy(every_page).write_pdf()


def filename(report: Report, ext: str) -> str:
    """A download name made of safe characters only: the review's id, date and revision."""
    r = report.detail.review
    return f"reserves-review-{r.id}-{r.effective_date:%Y%m%d}-rev{r.revision}.{ext}"
