"""Validate an upload against the database (dry run) and commit it all or nothing."""

from __future__ import annotations

import datetime as dt
import hashlib
from dataclasses import dataclass, field

from sqlalchemy import select, tuple_
from sqlalchemy.orm import Session

from ...db.models import Field, PressureSurvey, ProductionMonth, Upload, Well
from .. import audit
from ..jobs import enqueue_field_recompute
from .kinds import file_kind, parse_rows
from .report import UploadRejectedError, ValidationReport
from .tabular import TableError, read_csv

SURVEY_MAX_PSIA = 30000.0


@dataclass
class UploadPlan:
    """What committing the upload would do; built by :func:`validate_upload`."""

    kind: str
    filename: str
    sha256: str
    size_bytes: int
    report: ValidationReport
    inserts: list[dict] = field(default_factory=list)
    replacements: list[tuple[object, dict]] = field(default_factory=list)  # (existing row, new values)
    unchanged: int = 0
    field_ids: set[int] = field(default_factory=set)

    def preview(self) -> dict:
        return {
            "kind": self.kind,
            "filename": self.filename,
            "rows_total": self.report.rows_total,
            "to_insert": len(self.inserts),
            "to_replace": len(self.replacements),
            "unchanged": self.unchanged,
            "fields": sorted(self.field_ids),
        }


def validate_upload(
    session: Session,
    *,
    kind: str,
    data: bytes,
    filename: str = "",
    replace: bool = False,
    atmosphere_psia: float = 14.696,
    today: dt.date | None = None,
    asset_ids: frozenset[int] | None = None,
) -> UploadPlan:
    """Parse and check every row; nothing is written. ``plan.report`` lists every problem.

    ``asset_ids`` limits the fields rows may name to those assets (a user's asset access)."""
    spec = file_kind(kind, atmosphere_psia=atmosphere_psia, today=today)
    report = ValidationReport(kind=kind)
    plan = UploadPlan(kind, filename, hashlib.sha256(data).hexdigest(), len(data), report)
    try:
        table = read_csv(data)
    except TableError as exc:
        report.problems.append(exc.problem)
        return plan
    rows = parse_rows(spec, table, report)
    if not rows and report.errors:
        return plan
    wells = _resolve_wells(session, rows, report, asset_ids)
    if kind == "surveys":
        _plan_surveys(session, rows, wells, plan, replace)
    else:
        _plan_production(session, rows, wells, plan, replace)
    if report.rows_total == 0:
        report.add(None, None, None, "the file has a header but no data rows")
    return plan


def _resolve_wells(session: Session, rows: list[dict], report: ValidationReport, asset_ids=None) -> dict:
    names = {r["field"].lower() for r in rows}
    stmt = select(Field) if asset_ids is None else select(Field).where(Field.asset_id.in_(sorted(asset_ids)))
    fields = {f.name.lower(): f for f in session.execute(stmt).scalars() if f.name.lower() in names}
    wells: dict[tuple[str, str], Well] = {}
    if fields:
        for w in session.execute(
            select(Well).where(Well.field_id.in_([f.id for f in fields.values()]))
        ).scalars():
            wells[(w.field.name.lower(), w.name.lower())] = w
    for r in rows:
        f = fields.get(r["field"].lower())
        if f is None:
            unknown = "unknown field" if asset_ids is None else "unknown field (or not in your assets)"
            report.add(r["_row"], "field", r["field"], unknown)
            r["_well"] = None
            continue
        w = wells.get((r["field"].lower(), r["well"].lower()))
        if w is None:
            report.add(r["_row"], "well", r["well"], f"unknown well in field {f.name!r}")
        r["_well"] = w
        r["_field"] = f
    return wells


def _plan_surveys(session, rows, wells, plan: UploadPlan, replace: bool) -> None:
    report = plan.report
    good = [r for r in rows if r.get("_well") is not None]
    existing = {}
    if good:
        keys = [(r["_well"].id, r["survey_date"]) for r in good]
        for s in session.execute(
            select(PressureSurvey).where(tuple_(PressureSurvey.well_id, PressureSurvey.survey_date).in_(keys))
        ).scalars():
            existing[(s.well_id, s.survey_date)] = s
    for r in good:
        p = r["pressure_psia"] if r.get("pressure_psia") is not None else r.get("pressure_psig")
        col = "pressure_psia" if r.get("pressure_psia") is not None else "pressure_psig"
        row = r["_row"]
        if p is None or p <= 0:
            report.add(row, col, p, "absolute pressure must be positive")
            continue
        if p > SURVEY_MAX_PSIA:
            report.add(row, col, p, f"is above {SURVEY_MAX_PSIA:.0f} psia, beyond any gas reservoir")
            continue
        well, fld = r["_well"], r["_field"]
        depth = r.get("gauge_depth_ft")
        if depth is None:
            depth = (
                well.gauge_reference_depth_ft
                if well.gauge_reference_depth_ft is not None
                else fld.datum_depth_ft
            )
        if depth < 0 or depth > 40000:
            report.add(row, "gauge_depth_ft", depth, "must be between 0 and 40,000 ft")
            continue
        if p > fld.initial_pressure_psia * 1.02:
            report.add(
                row,
                col,
                round(p, 2),
                f"is above the field's initial pressure {fld.initial_pressure_psia:.1f} psia",
                severity="warning",
            )
        values = dict(
            well_id=well.id,
            survey_date=r["survey_date"],
            pressure_psia=float(p),
            gauge_depth_ft=float(depth),
            kind=r["kind"],
            quality=r["quality"],
        )
        _place(
            plan,
            existing.get((well.id, r["survey_date"])),
            values,
            row,
            replace,
            compare=("pressure_psia", "gauge_depth_ft", "kind", "quality"),
            what="a survey for this well and date",
        )
        plan.field_ids.add(fld.id)


def _plan_production(session, rows, wells, plan: UploadPlan, replace: bool) -> None:
    report = plan.report
    good = [r for r in rows if r.get("_well") is not None]
    existing = {}
    if good:
        keys = [(r["_well"].id, r["month"]) for r in good]
        for m in session.execute(
            select(ProductionMonth).where(tuple_(ProductionMonth.well_id, ProductionMonth.month).in_(keys))
        ).scalars():
            existing[(m.well_id, m.month)] = m
    for r in good:
        row = r["_row"]
        bad = False
        for col in ("gas_mscf", "condensate_stb", "water_stb"):
            if r[col] < 0:
                report.add(row, col, r[col], "volumes cannot be negative")
                bad = True
        if bad:
            continue
        well = r["_well"]
        values = dict(
            well_id=well.id,
            month=r["month"],
            gas_mscf=float(r["gas_mscf"]),
            condensate_stb=float(r["condensate_stb"]),
            water_stb=float(r["water_stb"]),
        )
        _place(
            plan,
            existing.get((well.id, r["month"])),
            values,
            row,
            replace,
            compare=("gas_mscf", "condensate_stb", "water_stb"),
            what="production for this well and month",
        )
        plan.field_ids.add(r["_field"].id)


def _place(plan: UploadPlan, current, values: dict, row: int, replace: bool, *, compare, what) -> None:
    values["_row"] = row
    if current is None:
        plan.inserts.append(values)
        return
    if all(_same(getattr(current, c), values[c]) for c in compare):
        plan.unchanged += 1
        return
    if not replace:
        shown = ", ".join(f"{c}={getattr(current, c)}" for c in compare)
        plan.report.add(
            row, None, None, f"{what} already exists ({shown}); choose 'replace existing' to correct it"
        )
        return
    plan.replacements.append((current, values))


def _same(a, b) -> bool:
    if isinstance(a, float) or isinstance(b, float):
        return abs(float(a) - float(b)) <= 1e-9 * max(1.0, abs(float(a)))
    return a == b


def commit_upload(
    session: Session,
    plan: UploadPlan,
    *,
    user_id: int | None = None,
    actor: str = "system",
    accept_warnings: bool = False,
) -> Upload | None:
    """Write a validated plan in the caller's transaction; raise if it has errors.

    Returns None, writing nothing, when every row is already stored as given.
    """
    if not plan.report.ok or (plan.report.warnings and not accept_warnings):
        raise UploadRejectedError(plan.report)
    if not plan.inserts and not plan.replacements:
        return None
    who = audit.Actor(user_id, actor)
    model = PressureSurvey if plan.kind == "surveys" else ProductionMonth
    upload = Upload(
        kind=plan.kind,
        filename=plan.filename[:255],
        sha256=plan.sha256,
        size_bytes=plan.size_bytes,
        rows_total=plan.report.rows_total,
        rows_inserted=len(plan.inserts),
        rows_unchanged=plan.unchanged,
        rows_replaced=len(plan.replacements),
        uploaded_by_id=user_id,
        summary=plan.preview(),
    )
    session.add(upload)
    session.flush()
    for values in plan.inserts:
        session.add(model(**{k: v for k, v in values.items() if k != "_row"}, upload_id=upload.id))
    for current, values in plan.replacements:
        before = {k: _plain(getattr(current, k)) for k in values if k != "_row"}
        for k, v in values.items():
            if k != "_row":
                setattr(current, k, v)
        current.upload_id = upload.id
        audit.record(
            session,
            who,
            "replace",
            model.__tablename__,
            current.id,
            field_id=current.well.field_id,
            before=before,
            after={k: _plain(v) for k, v in values.items() if k != "_row"},
            summary=f"upload {upload.id} replaced row {values['_row']}",
        )
    _record_upload(session, who, upload, plan)
    session.flush()
    enqueue_field_recompute(session, plan.field_ids, reason=f"upload {upload.id}")
    return upload


def _record_upload(session: Session, who: audit.Actor, upload: Upload, plan: UploadPlan) -> None:
    """One audit event per field touched: what the upload added and replaced there."""
    well_ids = {v["well_id"] for v in plan.inserts} | {c.well_id for c, _ in plan.replacements}
    field_of = dict(session.execute(select(Well.id, Well.field_id).where(Well.id.in_(well_ids))).all())
    counts: dict[int, list[int]] = {}
    for v in plan.inserts:
        counts.setdefault(field_of[v["well_id"]], [0, 0])[0] += 1
    for c, _ in plan.replacements:
        counts.setdefault(field_of[c.well_id], [0, 0])[1] += 1
    for field_id, (added, replaced) in sorted(counts.items()):
        audit.record(
            session,
            who,
            "upload",
            "upload",
            upload.id,
            field_id=field_id,
            after={"kind": plan.kind, "filename": upload.filename, "added": added, "replaced": replaced},
            summary=f"upload {upload.id} ({plan.kind}): {added} added, {replaced} replaced",
        )


def _plain(v):
    return v.isoformat() if isinstance(v, dt.date) else v
