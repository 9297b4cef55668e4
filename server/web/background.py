"""What pages and the API share about background work: queued jobs, the request's own
transaction, and the limits an upload runs under."""

from __future__ import annotations

from fastapi import Request

from ..services.ingest.files.table import ReadLimits
from ..services.ingest.staging import StagingQuota
from ..services.jobs import runner
from .auth import Principal

RUN_NOW_WAIT_SECONDS = 60.0


def scope(settings, user: Principal) -> dict:
    """The limits and asset access every check and store of a request's upload runs under."""
    return {"xlsx_limits": xlsx_limits(settings), "asset_ids": user.asset_ids}


def xlsx_limits(settings) -> ReadLimits:
    """The upload budget (rows, cells) and the XLSX archive limits, from the settings."""
    return ReadLimits(
        settings.xlsx_max_uncompressed_bytes,
        settings.xlsx_max_members,
        settings.upload_max_rows,
        settings.upload_max_cells,
    )


def staging_quota(settings) -> StagingQuota:
    return StagingQuota(settings.staging_max_bytes_per_user, settings.staging_max_bytes_total)


def release(session) -> None:
    """End the request session's transaction before this route opens its own: what the
    authentication wrote (a session's last-seen time) is committed, and on SQLite its write
    lock is not held while the route's transaction waits for it."""
    session.commit()


def jobs_queued(request: Request) -> None:
    """Run or wake the job runner after a request queued jobs."""
    if request.app.state.settings.job_runner == "inline":
        runner.drain(request.app.state.db)
    elif getattr(request.app.state, "worker", None) is not None:
        request.app.state.worker.wake()


def recompute_now(request: Request, job_id: int | None) -> None:
    """Bring the field's estimate up to date before answering, so the page (or the API
    answer) shows the new result: inline runners drain the queue; a worker thread's app runs
    the job here (or waits for the worker that took it); external workers are left to it."""
    if job_id is None:
        return
    mode = request.app.state.settings.job_runner
    if mode == "inline":
        runner.drain(request.app.state.db)
    elif mode == "thread":
        runner.run_now(request.app.state.db, job_id, wait_seconds=RUN_NOW_WAIT_SECONDS)
