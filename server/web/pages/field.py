"""The field page (its forms post to :mod:`.field_work`). Routes stay thin: parse, call a
service, render plain data."""

from __future__ import annotations

from fastapi import APIRouter, HTTPException, Request
from fastapi.responses import HTMLResponse

from ..auth import Reader
from ..deps import SessionDep
from ..display import units_for_request
from ..templating import render
from .field_context import field_context, flash_message

router = APIRouter(include_in_schema=False)


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
