"""The JSON API for uploads (multipart files or JSON rows) and background jobs."""

from __future__ import annotations

import asyncio
from collections.abc import AsyncIterator
from typing import Annotated

from fastapi import APIRouter, Depends, File, HTTPException, Path, Query, Request, UploadFile
from fastapi.concurrency import run_in_threadpool
from fastapi.responses import JSONResponse
from fastapi.sse import EventSourceResponse, ServerSentEvent
from pydantic import Field

from ...services.ingest.files.tabular import json_rows_bytes
from ...services.ingest.kinds import UPLOAD_KINDS
from ...services.ingest.plan import UploadPlan
from ...services.ingest.service import check_upload, store_upload
from ...services.jobs import queue as jobs
from ..auth import Analyst, Principal, Reader, Uploader
from ..background import jobs_queued, release, scope
from ..deps import DatabaseDep, SessionDep, SettingsDep, team_settings_for
from ..limits import clean_filename, the_one_file
from ..schemas.common import ErrorRead
from ..schemas.uploads import JobRead, RequestErrorRead, UploadQuery, UploadResultRead, UploadRowsBody

router = APIRouter(prefix="/api")
JobId = Annotated[int, Path(ge=1, le=2**31 - 1, description="a job's id")]

STATUS_CODES = {
    "committed": 200,
    "unchanged": 200,
    "dry_run": 200,
    "rejected": 422,
    "needs_confirmation": 409,
    "changed_since_preview": 409,
}
UPLOAD_RESPONSES = {
    404: {"model": ErrorRead, "description": "unknown kind of file"},
    409: {"model": UploadResultRead, "description": "warnings need accept_warnings, or the data changed"},
    413: {"model": ErrorRead, "description": "the upload is larger than the configured limit"},
    422: {
        "model": UploadResultRead | RequestErrorRead,
        "description": "the file has errors (nothing was written), or the request was not understood",
    },
}
EVENT_INTERVAL_S = 0.5
EVENT_STREAM_MAX_S = 600.0  # the browser reconnects after this
MAX_WATCHED_JOBS = 50
JobIds = Annotated[
    list[Annotated[int, Field(ge=1, le=2**31 - 1)]],
    Query(alias="id", min_length=1, max_length=MAX_WATCHED_JOBS, description="a job's id (repeat for more)"),
]


def result_body(status: str, plan: UploadPlan, upload_id=None, job_ids=()) -> dict:
    return {
        "status": status,
        "upload_id": upload_id,
        "job_ids": list(job_ids),
        "report": plan.report.as_dict(),
        "preview": plan.preview(),
    }


def _check_kind(kind: str) -> None:
    if kind not in UPLOAD_KINDS:
        raise HTTPException(
            status_code=404, detail=f"unknown kind of file {kind!r}; use one of {', '.join(UPLOAD_KINDS)}"
        )


def _run(
    request: Request,
    session,
    db,
    settings,
    user: Principal,
    kind: str,
    data: bytes,
    filename: str,
    q: UploadQuery,
):
    team = team_settings_for(request)
    release(session)
    options = q.read_options(
        atmosphere_psia=team.atmosphere_psia, standard_conditions=team.standard_conditions
    )
    if q.dry_run:
        with db.session() as session:
            plan = check_upload(
                session,
                kind=kind,
                data=data,
                filename=filename,
                options=options,
                replace=q.replace,
                **scope(settings, user),
            )
            session.rollback()
        status = "rejected" if not plan.report.ok else "dry_run"
        return JSONResponse(result_body(status, plan), status_code=STATUS_CODES[status])
    result = store_upload(
        db,
        kind=kind,
        data=data,
        filename=filename,
        options=options,
        replace=q.replace,
        accept_warnings=q.accept_warnings,
        actor=user.actor,
        expected_digest=q.expected_digest,
        **scope(settings, user),
    )
    if result.status == "committed":
        jobs_queued(request)
    body = result_body(result.status, result.plan, result.upload_id, result.job_ids)
    return JSONResponse(body, status_code=STATUS_CODES[result.status])


@router.post("/uploads/{kind}", response_model=UploadResultRead, tags=["uploads"], responses=UPLOAD_RESPONSES)
async def upload_file(
    kind: str,
    request: Request,
    user: Uploader,
    session: SessionDep,
    db: DatabaseDep,
    settings: SettingsDep,
    file: Annotated[
        UploadFile, File(description="CSV (comma, semicolon or tab) or XLSX file of the given kind")
    ],
    q: Annotated[UploadQuery, Query()],
):
    """Upload a file (multipart). Every row is checked; any error rejects the whole file."""
    _check_kind(kind)
    await the_one_file(request)
    data = await file.read()
    return await run_in_threadpool(
        _run, request, session, db, settings, user, kind, data, clean_filename(file.filename), q
    )


@router.post(
    "/uploads/{kind}/rows", response_model=UploadResultRead, tags=["uploads"], responses=UPLOAD_RESPONSES
)
def upload_rows(
    kind: str,
    body: UploadRowsBody,
    request: Request,
    user: Uploader,
    session: SessionDep,
    db: DatabaseDep,
    settings: SettingsDep,
    q: Annotated[UploadQuery, Query()],
):
    """Upload rows as JSON objects keyed by column header; checked exactly like a file."""
    _check_kind(kind)
    filename = clean_filename(body.filename, default="")
    return _run(request, session, db, settings, user, kind, json_rows_bytes(body.rows), filename, q)


def existing_job(job_id: JobId, session: SessionDep, user: Reader) -> jobs.JobView:
    """The job's current state, or 404 (checked before a stream starts, which must not hold
    the request's transaction open)."""
    view = jobs.get_job(session, job_id, user.asset_ids)
    release(session)
    if view is None:
        raise HTTPException(status_code=404, detail="no such job")
    return view


def _job_read(view: jobs.JobView) -> JobRead:
    values = {k: getattr(view, k) for k in JobRead.model_fields if k != "progress_frac"}
    return JobRead(**values, progress_frac=view.progress_frac)


@router.get("/jobs", response_model=list[JobRead], tags=["jobs"])
def list_jobs(session: SessionDep, user: Reader, limit: Annotated[int, Query(ge=1, le=200)] = 20):
    return [_job_read(j) for j in jobs.recent_jobs(session, limit, user.asset_ids)]


def existing_jobs(ids: JobIds, session: SessionDep, user: Reader) -> list[jobs.JobView]:
    """The jobs' current states, or 404 when any is unknown or outside the user's assets."""
    views = [jobs.get_job(session, job_id, user.asset_ids) for job_id in dict.fromkeys(ids)]
    release(session)
    if any(v is None for v in views):
        raise HTTPException(status_code=404, detail="no such job")
    return views


@router.get(
    "/jobs/events",
    response_class=EventSourceResponse,
    tags=["jobs"],
    responses={
        404: {
            "description": "a job that does not exist (or is not in your assets)",
            "content": {"application/json": {"schema": {"$ref": "#/components/schemas/ErrorRead"}}},
        }
    },
)
async def jobs_events(
    db: DatabaseDep, views: Annotated[list[jobs.JobView], Depends(existing_jobs)]
) -> AsyncIterator[ServerSentEvent]:
    """Server-sent events with the progress of several jobs (one ``progress`` event per job
    and change) until all have finished: one connection for a page that waits for many."""
    ids = [v.id for v in views]

    def read(unfinished):
        with db.session() as session:
            return [jobs.get_job(session, job_id) for job_id in unfinished]

    last: dict[int, JobRead] = {}
    waited = 0.0
    while True:
        for view in views:
            state = _job_read(view)
            if last.get(view.id) != state:
                yield ServerSentEvent(data=state, event="progress", id=f"{view.id}-{view.progress_done}")
                last[view.id] = state
        unfinished = [i for i in ids if last[i].status not in ("done", "failed")]
        if not unfinished or waited >= EVENT_STREAM_MAX_S:
            return
        await asyncio.sleep(EVENT_INTERVAL_S)
        waited += EVENT_INTERVAL_S
        fresh = await run_in_threadpool(read, unfinished)
        views = [v for v in fresh if v is not None]
        ids = [i for i in ids if i not in unfinished or i in {v.id for v in views}]  # a deleted job: gone


@router.get("/jobs/{job_id}", response_model=JobRead, tags=["jobs"], responses={404: {"model": ErrorRead}})
def job_status(view: Annotated[jobs.JobView, Depends(existing_job)]):
    return _job_read(view)


@router.post("/jobs/recompute-portfolio", response_model=JobRead, status_code=202, tags=["jobs"])
def recompute_portfolio(request: Request, session: SessionDep, db: DatabaseDep, user: Analyst):
    """Queue a recompute of every field (or return the one already queued or running)."""
    release(session)
    with db.session() as session:
        job_id = jobs.enqueue_portfolio_recompute(session, reason=f"requested by {user.username}").id
    jobs_queued(request)
    with db.session() as session:
        return _job_read(jobs.get_job(session, job_id))


@router.get(
    "/jobs/{job_id}/events",
    response_class=EventSourceResponse,
    tags=["jobs"],
    responses={
        404: {
            "description": "no such job (or not in your assets)",
            "content": {"application/json": {"schema": {"$ref": "#/components/schemas/ErrorRead"}}},
        }
    },
)
async def job_events(
    job_id: JobId, db: DatabaseDep, view: Annotated[jobs.JobView, Depends(existing_job)]
) -> AsyncIterator[ServerSentEvent]:
    """Server-sent events with the job's progress until it finishes."""

    def read():
        with db.session() as session:
            return jobs.get_job(session, job_id)

    waited = 0.0
    last = None
    while True:
        state = _job_read(view)
        if state != last:
            yield ServerSentEvent(data=state, event="progress", id=f"{view.progress_done}")
            last = state
        if view.finished or waited >= EVENT_STREAM_MAX_S:
            return
        await asyncio.sleep(EVENT_INTERVAL_S)
        waited += EVENT_INTERVAL_S
        view = await run_in_threadpool(read)
