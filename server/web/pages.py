"""Server-rendered pages. Routes stay thin: parse, call a service, render plain data."""

from __future__ import annotations

import base64
import binascii
import dataclasses
from typing import Annotated

from fastapi import APIRouter, File, Form, HTTPException, Request, UploadFile
from fastapi.responses import HTMLResponse

from ..services import jobs
from ..services.audit import field_events
from ..services.ingest.kinds import UPLOAD_KINDS, file_kind
from ..services.ingest.service import commit_upload, validate_upload
from ..services.portfolio import field_detail, portfolio_rows
from .auth import Reader, Uploader
from .charts import pz_figure
from .deps import DatabaseDep, SessionDep, SettingsDep

router = APIRouter(include_in_schema=False)


def render(request: Request, template: str, context: dict, status_code: int = 200) -> HTMLResponse:
    """Render a page (the logged-in user and the session's form token come from ``app.py``)."""
    response = request.app.state.templates.TemplateResponse(
        request, template, context, status_code=status_code
    )
    response.headers["Cache-Control"] = "no-store"
    return response


@router.get("/", response_class=HTMLResponse, name="portfolio")
def portfolio_page(request: Request, session: SessionDep, user: Reader):
    rows = portfolio_rows(session, user.asset_ids)
    return render(request, "portfolio.html", {"rows": rows, "title": "Portfolio"})


@router.get("/fields/{field_id}", response_class=HTMLResponse, name="field_page")
def field_page(request: Request, field_id: int, session: SessionDep, user: Reader):
    detail = field_detail(session, field_id)
    if detail is None:
        raise HTTPException(status_code=404, detail="no such field")
    vol = dataclasses.asdict(detail.summary.volumetric) if detail.summary.volumetric else None
    figure = pz_figure(detail.detail, vol)
    context = {
        "f": detail,
        "pz_figure": figure,
        "title": detail.summary.name,
        "audit_events": field_events(session, field_id),
    }
    return render(request, "field.html", context)


@router.get("/upload", response_class=HTMLResponse, name="upload_page")
def upload_page(request: Request, user: Uploader):
    return render(request, "upload.html", _upload_context())


def _upload_context(**values) -> dict:
    """The upload page's full context: every key the template reads, with defaults."""
    base = {
        "kinds": _kinds(),
        "title": "Upload",
        "plan": None,
        "report": None,
        "preview": None,
        "kind": "surveys",
        "replace": False,
        "filename": "",
        "staged": "",
        "committed": None,
    }
    return {**base, **values}


def _kinds():
    return [file_kind(k) for k in UPLOAD_KINDS]


@router.post("/upload", response_class=HTMLResponse)
async def upload_submit(
    request: Request,
    user: Uploader,
    session: SessionDep,
    db: DatabaseDep,
    settings: SettingsDep,
    kind: Annotated[str, Form()],
    action: Annotated[str, Form()] = "preview",
    replace: Annotated[bool, Form()] = False,
    accept_warnings: Annotated[bool, Form()] = False,
    file: Annotated[UploadFile | None, File()] = None,
    staged: Annotated[str, Form()] = "",
    filename: Annotated[str, Form()] = "",
):
    if kind not in UPLOAD_KINDS:
        raise HTTPException(status_code=422, detail=f"unknown upload kind {kind!r}")
    if file is not None and file.filename:
        data = await file.read()
        filename = file.filename
    else:
        try:
            data = base64.b64decode(staged.encode(), validate=True)
        except (binascii.Error, ValueError):
            raise HTTPException(status_code=422, detail="choose a file to upload") from None
    if not data:
        raise HTTPException(status_code=422, detail="the file is empty")
    plan = validate_upload(
        session,
        kind=kind,
        data=data,
        filename=filename,
        replace=replace,
        atmosphere_psia=settings.atmosphere_psia,
        asset_ids=user.asset_ids,
    )
    context = {
        "kinds": _kinds(),
        "title": "Upload",
        "plan": plan,
        "report": plan.report.as_dict(),
        "preview": plan.preview(),
        "kind": kind,
        "replace": replace,
        "filename": filename,
        "staged": base64.b64encode(data).decode(),
        "committed": None,
    }
    if action == "commit" and plan.report.ok and (accept_warnings or not plan.report.warnings):
        upload = commit_upload(
            session, plan, accept_warnings=accept_warnings, user_id=user.user_id, actor=user.username
        )
        session.commit()
        if settings.run_jobs_inline:
            jobs.drain(db)
        context["committed"] = upload
    status = 200 if plan.report.ok else 422
    return render(request, "upload.html", context, status_code=status)
