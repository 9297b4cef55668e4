"""Upload pages (check → preview → confirm), file templates, and the jobs pages."""

from __future__ import annotations

from typing import Annotated

from fastapi import APIRouter, File, Form, HTTPException, Request, UploadFile
from fastapi.concurrency import run_in_threadpool
from fastapi.responses import HTMLResponse, RedirectResponse, Response

from ...engine.units import standard_conditions
from ...services.ingest.files.export import report_csv
from ...services.ingest.kinds import UPLOAD_KINDS, file_kind
from ...services.ingest.parse import ReadOptions
from ...services.ingest.plan import UploadPlan
from ...services.ingest.service import check_upload, store_upload
from ...services.ingest.staging import REPORT, StagingFullError, discard, load_staged, stage
from ...services.ingest.templates import template_csv, template_xlsx
from ...services.ingest.units import FORM_UNIT_CHOICES, quantities
from ...services.jobs import queue as jobs
from ...services.portfolio.field_data import field_names
from ..auth import Analyst, Reader, Uploader
from ..background import jobs_queued, release, scope, staging_quota
from ..deps import DatabaseDep, SessionDep, SettingsDep, TeamDep
from ..display import units_for_request
from ..limits import clean_filename, the_one_file
from ..schemas.uploads import DECIMAL_NAMES, DELIMITER_NAMES
from ..templating import render
from .upload_display import display_preview

router = APIRouter(include_in_schema=False)
XLSX_TYPE = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"


def _unit_choices(team) -> list[dict]:
    q = quantities(team.atmosphere_psia, standard_conditions(team.standard_conditions))
    return [{"quantity": k, "label": q[k].name, "units": list(q[k].choices)} for k in FORM_UNIT_CHOICES]


def _context(team, **values) -> dict:
    """The upload page's full context: every key the template reads, with defaults.
    ``team``: the team settings (atmosphere for gauge pressures, storage basis)."""
    base = {
        "title": "Upload data",
        "kinds": [file_kind(k) for k in UPLOAD_KINDS],
        "unit_choices": _unit_choices(team),
        "atmosphere_psia": team.atmosphere_psia,
        "standard_conditions": standard_conditions(team.standard_conditions).label,
        "kind": "surveys",
        "form": {},
        "report": None,
        "preview": None,
        "token": "",
        "filename": "",
        "replace": False,
        "outcome": None,
        "staging_problem": None,
    }
    return {**base, **values}


@router.get("/upload", response_class=HTMLResponse, name="upload_page")
def upload_page(request: Request, team: TeamDep, user: Uploader, kind: str = "surveys"):
    return render(request, "upload.html", _context(team, kind=kind if kind in UPLOAD_KINDS else "surveys"))


def _options(team, form: dict) -> ReadOptions:
    units = {q: form.get(f"{q}_unit", "") for q in FORM_UNIT_CHOICES}
    try:
        atmosphere = float(form.get("atmosphere_psia") or team.atmosphere_psia)
    except ValueError:
        atmosphere = -1.0  # reported by check_options as out of range
    return ReadOptions(
        units={q: u for q, u in units.items() if u},
        atmosphere_psia=atmosphere,
        standard_conditions=team.standard_conditions,
        delimiter=DELIMITER_NAMES.get(form.get("delimiter", "")),
        decimal=DECIMAL_NAMES.get(form.get("decimal", "")),
        date_order=form.get("date_order") or "iso",
        encoding={"utf-8": "utf-8", "windows-1252": "cp1252"}.get(form.get("encoding", "")),
    )


@router.post("/upload", response_class=HTMLResponse, name="upload_check")
async def upload_check(
    request: Request,
    user: Uploader,
    request_session: SessionDep,
    db: DatabaseDep,
    settings: SettingsDep,
    team: TeamDep,
    kind: Annotated[str, Form()],
    file: Annotated[UploadFile, File()],
    replace: Annotated[bool, Form()] = False,
):
    """Check the file against the database, keep it server-side, and show what would change."""
    if kind not in UPLOAD_KINDS:
        raise HTTPException(status_code=422, detail=f"unknown kind of file {kind!r}")
    await the_one_file(request)
    data = await file.read()
    form = {k: v for k, v in (await request.form()).items() if isinstance(v, str) and k != "csrf_token"}
    filename = clean_filename(file.filename)
    actor = user.actor

    def work():
        options = _options(team, form)
        token, staging_problem = "", None
        with db.session() as session:
            plan = check_upload(
                session,
                kind=kind,
                data=data,
                filename=filename,
                options=options,
                replace=replace,
                **scope(settings, user),
            )
            # Only a file that can be committed is kept; a rejected file keeps its problem report
            # (for the download), never its bytes; a file that changes nothing keeps nothing.
            keep = data if plan.report.ok and plan.changes_anything else None
            if not plan.report.ok and data:
                keep = full_report_csv(plan)
            if keep is not None:
                try:
                    token = stage(
                        session,
                        kind=kind,
                        data=keep,
                        filename=filename,
                        options=options,
                        replace=replace,
                        digest=plan.digest(),
                        actor=actor,
                        quota=staging_quota(settings),
                        content="file" if plan.report.ok else REPORT,
                    )
                except StagingFullError as exc:
                    staging_problem = str(exc)
        return plan, token, staging_problem

    await run_in_threadpool(release, request_session)
    plan, token, staging_problem = await run_in_threadpool(work)
    context = _context(
        team,
        kind=kind,
        form=form,
        report=plan.report.as_dict(),
        preview=display_preview(plan.preview(), units_for_request(request)),
        token=token,
        filename=filename,
        replace=replace,
        staging_problem=staging_problem,
    )
    return render(request, "upload.html", context, status_code=200 if plan.report.ok else 422)


@router.post("/upload/commit", response_class=HTMLResponse, name="upload_commit")
def upload_commit(
    request: Request,
    user: Uploader,
    request_session: SessionDep,
    db: DatabaseDep,
    settings: SettingsDep,
    team: TeamDep,
    token: Annotated[str, Form()],
    accept_warnings: Annotated[bool, Form()] = False,
):
    """Store exactly what the preview showed, or say what changed since."""
    release(request_session)
    actor = user.actor
    with db.session() as session:
        staged = load_staged(session, token, actor)
        if staged is None:
            raise HTTPException(
                status_code=410, detail="the checked file has expired or was already stored; choose it again"
            )
        kind, data, filename, replace, digest = (
            staged.kind,
            staged.data,
            staged.filename,
            staged.replace,
            staged.digest,
        )
        options = ReadOptions.from_dict(staged.options)
    result = store_upload(
        db,
        kind=kind,
        data=data,
        filename=filename,
        options=options,
        replace=replace,
        accept_warnings=accept_warnings,
        actor=actor,
        expected_digest=digest,
        **scope(settings, user),
    )
    if result.status in ("committed", "unchanged"):
        with db.session() as session:
            discard(session, token)
        if result.status == "committed":
            jobs_queued(request)
    outcome = {
        "status": result.status,
        "upload_id": result.upload_id,
        "job_ids": list(result.job_ids),
        "recomputes": _recomputes(db, result.job_ids, user),
    }
    context = _context(
        team,
        kind=kind,
        report=result.plan.report.as_dict(),
        preview=display_preview(result.plan.preview(), units_for_request(request)),
        token="" if result.status in ("committed", "unchanged") else token,
        filename=filename,
        replace=replace,
        outcome=outcome,
    )
    status = {"committed": 200, "unchanged": 200, "rejected": 422}.get(result.status, 409)
    return render(request, "upload.html", context, status_code=status)


def _recomputes(db, job_ids, user) -> list[dict]:
    """The recomputes an upload queued, with the field each one brings up to date."""
    with db.session() as session:
        views = [jobs.get_job(session, job_id, user.asset_ids) for job_id in job_ids]
        names = field_names(session, {v.field_id for v in views if v is not None and v.field_id})
    return [
        {"job": v, "field_id": v.field_id, "field": names.get(v.field_id, "every field")}
        for v in views
        if v is not None
    ]


def full_report_csv(plan: UploadPlan) -> bytes:
    """Every kept problem of a check as CSV (text that looks like a formula is neutralised)."""
    report = plan.report.as_dict()
    report["problems"] = [
        {"row": p.row, "column": p.column, "value": p.value, "message": p.message, "severity": p.severity}
        for p in sorted(plan.report.problems, key=lambda p: (p.row or 0, p.severity))
    ]
    return report_csv(report)


@router.get("/upload/report/{token}.csv", name="upload_report_csv")
def upload_report(token: str, session: SessionDep, settings: SettingsDep, user: Uploader):
    """Every problem of a checked file as CSV: kept as such for a rejected file, or from a new
    check of a file waiting for confirmation."""
    saved = load_staged(session, token, user.actor, content=REPORT)
    staged = saved or load_staged(session, token, user.actor)
    if staged is None:
        raise HTTPException(status_code=404, detail="the checked file has expired; choose it again")
    if saved is not None:
        body = saved.data
    else:
        plan = check_upload(
            session,
            kind=staged.kind,
            data=staged.data,
            filename=staged.filename,
            options=ReadOptions.from_dict(staged.options),
            replace=staged.replace,
            **scope(settings, user),
        )
        body = full_report_csv(plan)
    return Response(
        body,
        media_type="text/csv; charset=utf-8",
        headers={"Content-Disposition": f'attachment; filename="{staged.kind}-problems.csv"'},
    )


@router.get("/upload/templates/{name}", name="upload_template")
def upload_template(name: str, user: Reader):
    """An empty file of a kind, with units in the header and two invented example rows."""
    stem, _, ext = name.rpartition(".")
    if stem not in UPLOAD_KINDS or ext not in ("csv", "xlsx"):
        raise HTTPException(status_code=404, detail="no such template")
    kind = file_kind(stem)
    if ext == "csv":
        return Response(
            template_csv(kind),
            media_type="text/csv; charset=utf-8",
            headers={"Content-Disposition": f'attachment; filename="tankbook-{stem}.csv"'},
        )
    return Response(
        template_xlsx(kind),
        media_type=XLSX_TYPE,
        headers={"Content-Disposition": f'attachment; filename="tankbook-{stem}.xlsx"'},
    )


@router.get("/jobs", response_class=HTMLResponse, name="jobs_page")
def jobs_page(request: Request, session: SessionDep, user: Reader):
    context = {"title": "Jobs", "jobs": jobs.recent_jobs(session, 30, user.asset_ids)}
    return render(request, "jobs.html", context)


@router.post("/jobs/recompute", name="jobs_recompute")
def jobs_recompute(request: Request, request_session: SessionDep, db: DatabaseDep, user: Analyst):
    """Queue a recompute of every field and show its progress."""
    release(request_session)
    with db.session() as session:
        job_id = jobs.enqueue_portfolio_recompute(session, reason=f"requested by {user.username}").id
    jobs_queued(request)
    return RedirectResponse(request.url_for("job_page", job_id=job_id), status_code=303)


@router.get("/jobs/{job_id}", response_class=HTMLResponse, name="job_page")
def job_page(request: Request, job_id: int, session: SessionDep, user: Reader):
    view = jobs.get_job(session, job_id, user.asset_ids)
    if view is None:
        raise HTTPException(status_code=404, detail="no such job")
    return render(request, "job.html", {"title": f"Job {job_id}", "job": view})
