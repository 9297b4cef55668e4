"""Server-rendered pages (the portfolio page: portfolio_pages.py). Routes stay thin: parse, call a
service, render plain data."""

from __future__ import annotations

import dataclasses

from fastapi import APIRouter, HTTPException, Request
from fastapi.responses import HTMLResponse

from ..services.audit import field_events
from ..services.portfolio import field_detail
from .auth import Reader
from .charts import cole_figure, model_fits_figure, pz_figure
from .deps import SessionDep

router = APIRouter(include_in_schema=False)


def render(request: Request, template: str, context: dict, status_code: int = 200) -> HTMLResponse:
    """Render a page (the logged-in user and the session's form token come from ``app.py``)."""
    response = request.app.state.templates.TemplateResponse(
        request, template, context, status_code=status_code
    )
    response.headers["Cache-Control"] = "no-store"
    return response


@router.get("/fields/{field_id}", response_class=HTMLResponse, name="field_page")
def field_page(request: Request, field_id: int, session: SessionDep, user: Reader):
    detail = field_detail(session, field_id)
    if detail is None:
        raise HTTPException(status_code=404, detail="no such field")
    vol = dataclasses.asdict(detail.summary.volumetric) if detail.summary.volumetric else None
    figure = pz_figure(detail.detail, vol)
    dg = detail.detail.get("diagnosis")
    cole = (dg or {}).get("cole_plots")
    context = {
        "f": detail,
        "pz_figure": figure,
        "dg": dg,
        "model_fits_figure": model_fits_figure(dg) if dg else None,
        "cole_figure": cole_figure(cole) if cole else None,
        "title": detail.summary.name,
        "audit_events": field_events(session, field_id),
    }
    return render(request, "field.html", context)
