"""Check an upload against the database (dry run) and store it all or nothing.

Checking has two stages: :func:`read_upload` reads the file and checks every cell and row
without the database (the slow part, bounded by the upload budget), and :func:`plan_upload`
checks the rows against what is stored. :func:`check_upload` does both and writes nothing.
:func:`store_upload` reads the file first, *outside* any lock, then opens its own transaction,
takes the ingest lock (an advisory lock on PostgreSQL; SQLite's write lock, taken by a first
write before any read), plans against what is stored *now*, and writes it with its upload
record, history and recompute jobs, or nothing. Writers therefore serialise only for the
planning and the writing: a small upload never waits behind a slow file's parsing, concurrent
uploads of the same rows store them once, and a repeat of a stored file changes nothing.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import hashlib
import logging
from dataclasses import dataclass

from sqlalchemy import select, text
from sqlalchemy.exc import IntegrityError, OperationalError
from sqlalchemy.orm import Session

from ...db.models import Field, Upload
from ...db.session import Database
from .. import audit
from ..audit import SYSTEM, Actor
from ..jobs.queue import enqueue_field_recompute
from . import forecast, history, portfolio
from .files.table import ReadLimits
from .files.tabular import TableError, read_table
from .kinds import file_kind
from .parse import Parsed, ReadOptions, check_options, parse_table
from .plan import UploadPlan, check_repeated_keys
from .report import ValidationReport
from .staging import purge_expired

log = logging.getLogger(__name__)
INGEST_LOCK_KEY = 7284  # arbitrary, next to the migration lock (7283)
RETRIES = 3

PLANNERS = {
    "fields": (portfolio.plan_fields, portfolio.write_fields),
    "wells": (portfolio.plan_wells, portfolio.write_wells),
    "fluids": (portfolio.plan_fluids, portfolio.write_fluids),
    "lab_table": (portfolio.plan_lab_table, portfolio.write_lab_table),
    "surveys": (history.plan_surveys, history.write_surveys),
    "production": (history.plan_production, history.write_production),
    "volumetrics": (portfolio.plan_volumetrics, portfolio.write_volumetrics),
    "well_tests": (forecast.plan_well_tests, forecast.write_well_tests),
    "field_plans": (forecast.plan_field_plans, forecast.write_field_plans),
    "planned_wells": (forecast.plan_planned_wells, forecast.write_planned_wells),
}


@dataclass(frozen=True)
class ReadUpload:
    """A file read and checked cell by cell and row by row, before any database read."""

    kind: str
    filename: str
    sha256: str
    size_bytes: int
    options: ReadOptions
    report: ValidationReport  # the file's own problems; each plan gets a copy
    parsed: Parsed | None  # None when the file could not be read or has no usable rows

    def fresh_report(self) -> ValidationReport:
        r = self.report
        return dataclasses.replace(r, problems=list(r.problems), columns=list(r.columns), notes=list(r.notes))


def read_upload(
    *,
    kind: str,
    data: bytes,
    filename: str = "",
    options: ReadOptions | None = None,
    today: dt.date | None = None,
    xlsx_limits: ReadLimits | None = None,
) -> ReadUpload:
    """Read and check the file itself: bytes, header, units, every cell, repeated keys. No
    database is touched, so this runs before any lock is taken."""
    spec = file_kind(kind)
    options = options or ReadOptions()
    report = ValidationReport(kind=kind)

    def done(parsed: Parsed | None = None) -> ReadUpload:
        digest = hashlib.sha256(data).hexdigest()
        return ReadUpload(kind, filename, digest, len(data), options, report, parsed)

    for problem in check_options(options):
        report.add(None, None, None, problem)
    if report.error_count:
        return done()
    if not data:
        report.add(None, None, None, "the file is empty")
        return done()
    try:
        table = read_table(
            data,
            filename=filename,
            delimiter=options.delimiter,
            limits=xlsx_limits,
            encoding=options.encoding,
        )
    except TableError as exc:
        report.add(None, None, None, exc.problem.message)
        return done()
    parsed = parse_table(spec, table, options, report, today=today or dt.date.today())
    del table  # the cells are no longer needed; only the typed rows are
    if report.rows_total == 0 and not report.error_count:
        report.add(None, None, None, "the file has a header but no data rows")
    if not parsed.records:
        return done()
    parsed.records = check_repeated_keys(spec, parsed.records, report)
    return done(parsed)


def plan_upload(
    session: Session, read: ReadUpload, *, replace: bool = False, asset_ids: frozenset[int] | None = None
) -> UploadPlan:
    """Check the read rows against the database: what committing would add, replace or refuse.
    ``asset_ids`` limits the fields rows may name to those assets (a user's asset access)."""
    report = read.fresh_report()
    plan = UploadPlan(read.kind, read.filename, read.sha256, read.size_bytes, report, read.options)
    plan.asset_ids = asset_ids
    if read.parsed is not None and read.parsed.records:
        planner, _ = PLANNERS[read.kind]
        planner(session, read.parsed, plan, replace)
    return plan


def check_upload(
    session: Session,
    *,
    kind: str,
    data: bytes,
    filename: str = "",
    options: ReadOptions | None = None,
    replace: bool = False,
    today: dt.date | None = None,
    xlsx_limits: ReadLimits | None = None,
    asset_ids: frozenset[int] | None = None,
) -> UploadPlan:
    """Parse and check every row; nothing is written. ``plan.report`` lists every problem."""
    read = read_upload(
        kind=kind, data=data, filename=filename, options=options, today=today, xlsx_limits=xlsx_limits
    )
    return plan_upload(session, read, replace=replace, asset_ids=asset_ids)


@dataclass
class StoreResult:
    status: str  # committed | unchanged | rejected | needs_confirmation | changed_since_preview
    plan: UploadPlan
    upload_id: int | None = None
    job_ids: tuple[int, ...] = ()


def take_ingest_lock(session: Session) -> None:
    """Serialise writers of uploads (the transaction's first statement); clear expired staging."""
    if session.get_bind().dialect.name == "postgresql":
        session.execute(text("SELECT pg_advisory_xact_lock(:k)"), {"k": INGEST_LOCK_KEY})
    purge_expired(session)


def store_upload(
    db: Database,
    *,
    kind: str,
    data: bytes,
    filename: str = "",
    options: ReadOptions | None = None,
    replace: bool = False,
    accept_warnings: bool = False,
    actor: Actor = SYSTEM,
    expected_digest: str | None = None,
    today: dt.date | None = None,
    xlsx_limits: ReadLimits | None = None,
    asset_ids: frozenset[int] | None = None,
) -> StoreResult:
    """Read the file (no lock held), then plan and write it in one transaction under the ingest
    lock; write nothing unless it is clean and, with ``expected_digest``, unchanged since the
    preview."""
    read = read_upload(
        kind=kind, data=data, filename=filename, options=options, today=today, xlsx_limits=xlsx_limits
    )
    if not read.report.ok:  # the file's own errors: no lock and no database needed
        with db.session() as session:
            return StoreResult("rejected", plan_upload(session, read, replace=replace, asset_ids=asset_ids))
    for attempt in range(1, RETRIES + 1):
        try:
            with db.session() as session:
                take_ingest_lock(session)
                plan = plan_upload(session, read, replace=replace, asset_ids=asset_ids)
                result = _decide(plan, accept_warnings, expected_digest) or _taken_names(plan)
                if result is not None:
                    session.rollback()
                    return result
                return _write(session, plan, actor)
        except (IntegrityError, OperationalError) as exc:
            # Another writer got there first (a unique key, or SQLite busy): check again.
            if attempt == RETRIES:
                raise
            log.info("upload retried after %s", type(exc).__name__)
    raise AssertionError("unreachable")


def _decide(plan: UploadPlan, accept_warnings: bool, expected_digest: str | None) -> StoreResult | None:
    if not plan.report.ok:
        return StoreResult("rejected", plan)
    if expected_digest is not None and expected_digest != plan.digest():
        return StoreResult("changed_since_preview", plan)
    if plan.report.warning_count and not accept_warnings:
        return StoreResult("needs_confirmation", plan)
    if not plan.changes_anything:
        return StoreResult("unchanged", plan)
    return None


def _taken_names(plan: UploadPlan) -> StoreResult | None:
    """New fields whose names exist outside the user's assets: the preview read them as unknown
    (no oracle); storing them would break the names' uniqueness, so it is refused here."""
    taken = plan.extra.get("taken_names")
    if not taken:
        return None
    for row, name in sorted(taken.items()):
        plan.report.add(row, "field", name, portfolio.TAKEN_NAME)
    return StoreResult("rejected", plan)


def _write(session: Session, plan: UploadPlan, actor: Actor) -> StoreResult:
    upload = Upload(
        kind=plan.kind,
        filename=plan.filename[:255],
        sha256=plan.sha256,
        size_bytes=plan.size_bytes,
        rows_total=plan.report.rows_total,
        rows_inserted=len(plan.inserts),
        rows_unchanged=plan.unchanged,
        rows_replaced=len(plan.replacements),
        uploaded_by_id=actor.user_id,
        summary={k: v for k, v in plan.preview().items() if k not in ("changes",)},
    )
    session.add(upload)
    session.flush()
    _, writer = PLANNERS[plan.kind]
    writer(session, plan, upload.id, actor)
    session.flush()
    _record_upload(session, actor, upload, plan)
    jobs = enqueue_field_recompute(session, plan.field_ids, reason=f"upload {upload.id}")
    return StoreResult("committed", plan, upload.id, tuple(j.id for j in jobs))


def _record_upload(session: Session, actor: Actor, upload: Upload, plan: UploadPlan) -> None:
    """One audit event per field touched (shown in the field's history): what the upload did there."""
    counts: dict[str, list[int]] = {}
    for c in plan.inserts:
        counts.setdefault(c.field_name, [0, 0])[0] += 1
    for c in plan.replacements:
        counts.setdefault(c.field_name, [0, 0])[1] += 1
    ids = dict(session.execute(select(Field.name, Field.id).where(Field.name.in_(sorted(counts)))).all())
    for name, (added, replaced) in sorted(counts.items()):
        audit.record(
            session,
            actor,
            "upload",
            "upload",
            upload.id,
            field_id=ids.get(name),
            after={"kind": plan.kind, "filename": upload.filename, "added": added, "replaced": replaced},
            summary=f"upload {upload.id} ({plan.kind}): {added} added, {replaced} replaced in {name}",
        )
