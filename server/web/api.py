"""The JSON API under /api: read twins of every page, and uploads for scripts."""

from __future__ import annotations

import csv
import io
from typing import Annotated

from fastapi import APIRouter, File, HTTPException, Query, UploadFile
from fastapi.responses import JSONResponse

from ..engine import ENGINE_VERSION
from ..services import jobs
from ..services.ingest.kinds import UPLOAD_KINDS, file_kind
from ..services.ingest.service import commit_upload, validate_upload
from ..services.portfolio import field_detail, portfolio_rows
from ..services.recompute import current_estimate
from .auth import Principal, Public, Reader, Uploader
from .deps import DatabaseDep, SessionDep, SettingsDep
from .schemas import (
    ErrorRead,
    EstimateRead,
    FieldId,
    FieldRead,
    HealthRead,
    PortfolioRowRead,
    UploadResultRead,
    UploadRowsBody,
)

router = APIRouter(prefix="/api")
NOT_FOUND = {404: {"model": ErrorRead, "description": "no such field (or not in your assets)"}}
_REJECTED_OR_INVALID = {
    "anyOf": [
        {"$ref": "#/components/schemas/UploadResultRead"},
        {"$ref": "#/components/schemas/HTTPValidationError"},
    ]
}
UPLOAD_RESPONSES = {
    404: {"model": ErrorRead, "description": "unknown upload kind"},
    409: {"model": UploadResultRead, "description": "warnings need accept_warnings=true"},
    422: {
        "description": "rows rejected (report), or the request itself malformed",
        "content": {"application/json": {"schema": _REJECTED_OR_INVALID}},
    },
}


@router.get("/health", response_model=HealthRead, tags=["meta"], dependencies=[Public])
def health():
    return {"status": "ok", "engine_version": ENGINE_VERSION}


@router.get("/portfolio", response_model=list[PortfolioRowRead], tags=["portfolio"])
def portfolio(session: SessionDep, user: Reader):
    return [_row(r) for r in portfolio_rows(session, user.asset_ids)]


def _row(r) -> dict:
    d = PortfolioRowRead.model_validate(r).model_dump()
    d["dynamic_to_volumetric"] = r.dynamic_to_volumetric
    return d


@router.get("/fields/{field_id}", response_model=FieldRead, tags=["fields"], responses=NOT_FOUND)
def field(field_id: FieldId, session: SessionDep, user: Reader):
    detail = field_detail(session, field_id)
    if detail is None:
        raise HTTPException(status_code=404, detail="no such field")
    out = FieldRead.model_validate(detail).model_dump()
    out["summary"] = _row(detail.summary)
    return out


@router.get("/fields/{field_id}/estimate", response_model=EstimateRead, tags=["fields"], responses=NOT_FOUND)
def field_estimate(field_id: FieldId, session: SessionDep, user: Reader):
    est = current_estimate(session, field_id)
    if est is None:
        raise HTTPException(status_code=404, detail="no estimate for this field")
    return est


def _run_upload(
    session, db, settings, user: Principal, kind, data, filename, dry_run, replace, accept_warnings
):
    if kind not in UPLOAD_KINDS:
        raise HTTPException(status_code=404, detail=f"unknown upload kind {kind!r}")
    plan = validate_upload(
        session,
        kind=kind,
        data=data,
        filename=filename,
        replace=replace,
        atmosphere_psia=settings.atmosphere_psia,
        asset_ids=user.asset_ids,
    )
    body = {"report": plan.report.as_dict(), "preview": plan.preview(), "upload_id": None}
    if not plan.report.ok:
        return JSONResponse({**body, "status": "rejected"}, status_code=422)
    if plan.report.warnings and not accept_warnings:
        status = "dry_run" if dry_run else "needs_confirmation"
        return JSONResponse({**body, "status": status}, status_code=200 if dry_run else 409)
    if dry_run:
        return {**body, "status": "dry_run"}
    upload = commit_upload(
        session, plan, accept_warnings=accept_warnings, user_id=user.user_id, actor=user.username
    )
    session.commit()
    if upload is not None and settings.run_jobs_inline:
        jobs.drain(db)
    return {
        **body,
        "status": "unchanged" if upload is None else "committed",
        "upload_id": None if upload is None else upload.id,
    }


@router.post(
    "/uploads/{kind}",
    response_model=UploadResultRead,
    tags=["uploads"],
    responses=UPLOAD_RESPONSES,
)
async def upload_file(
    kind: str,
    user: Uploader,
    session: SessionDep,
    db: DatabaseDep,
    settings: SettingsDep,
    file: Annotated[UploadFile, File(description="CSV file of the given kind")],
    dry_run: Annotated[bool, Query()] = False,
    replace: Annotated[bool, Query()] = False,
    accept_warnings: Annotated[bool, Query()] = False,
):
    """Upload a CSV file (multipart). Every row is checked; any error rejects the file."""
    data = await file.read()
    return _run_upload(
        session, db, settings, user, kind, data, file.filename or "", dry_run, replace, accept_warnings
    )


@router.post(
    "/uploads/{kind}/rows",
    response_model=UploadResultRead,
    tags=["uploads"],
    responses=UPLOAD_RESPONSES,
)
def upload_rows(
    kind: str,
    body: UploadRowsBody,
    user: Uploader,
    session: SessionDep,
    db: DatabaseDep,
    settings: SettingsDep,
    dry_run: Annotated[bool, Query()] = False,
    replace: Annotated[bool, Query()] = False,
    accept_warnings: Annotated[bool, Query()] = False,
):
    """Upload rows as JSON objects keyed by column name; validated exactly like a file."""
    if kind not in UPLOAD_KINDS:
        raise HTTPException(status_code=404, detail=f"unknown upload kind {kind!r}")
    columns = [c.name for c in file_kind(kind).columns]
    used = [c for c in columns if any(c in r for r in body.rows)]
    extra = sorted({k for r in body.rows for k in r} - set(columns))
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(used + extra)
    for r in body.rows:
        writer.writerow(["" if r.get(c) is None else r.get(c) for c in used + extra])
    return _run_upload(
        session,
        db,
        settings,
        user,
        kind,
        buf.getvalue().encode(),
        body.filename,
        dry_run,
        replace,
        accept_warnings,
    )
