"""The reserves report as a download, shared by the page and its API twin."""

from __future__ import annotations

from fastapi.responses import Response

from ..services.reserves_report import content, pdf, workbook

XLSX = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"


def report_response(report: content.Report, kind: str) -> Response:
    """The report as an attachment (``kind``: "pdf" or "xlsx"); the name holds only safe characters."""
    if kind == "pdf":
        body, media = pdf.report_pdf(report), "application/pdf"
    else:
        body, media = workbook.report_xlsx(report), XLSX
    name = pdf.filename(report, kind)
    return Response(body, media_type=media, headers={"Content-Disposition": f'attachment; filename="{name}"'})
