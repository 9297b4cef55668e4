"""Server-rendered pages (the portfolio page: portfolio_pages.py). Routes stay thin: parse, call a
service, render plain data."""

from __future__ import annotations

from fastapi import APIRouter, HTTPException, Request
from fastapi.responses import HTMLResponse

from .auth import Reader
from .deps import SessionDep
from .display import units_for_request
from .field_context import field_context, flash_message

router = APIRouter(include_in_schema=False)


def render(request: Request, template: str, context: dict, status_code: int = 200) -> HTMLResponse:
    """Render a page (the logged-in user and the session's form token come from ``app.py``)."""
    response = request.app.state.templates.TemplateResponse(
        request, template, context, status_code=status_code
    )
    response.headers["Cache-Control"] = "no-store"
    return response


@router.get("/fields/{field_id}", response_class=HTMLResponse, name="field_page")
def field_page(
    request: Request,
    field_id: int,
    session: SessionDep,
    user: Reader,
    changed: str = "",
    noted: str = "",
):
    audit_id = int(changed) if changed.isdigit() and len(changed) < 10 else None
    flash = flash_message(session, field_id, audit_id) if audit_id else ("Note added." if noted else "")
    context = field_context(session, field_id, units_for_request(request), flash=flash)
    if context is None:
        raise HTTPException(status_code=404, detail="no such field")
    return render(request, "field.html", context)
