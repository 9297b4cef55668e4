"""Pressure surveys and monthly production: check against stored rows, then write."""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy import select, tuple_
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import Field, PressureSurvey, ProductionMonth, Well
from ..audit import Actor
from .parse import Parsed
from .plan import Change, Names, UploadPlan, place
from .rowchecks import INITIAL_PRESSURE_MARGIN, check_cumulatives
from .write import bulk_insert, replace_row


@dataclass(frozen=True)
class WellRef:
    """A matched well with the attributes the planners read (ORM attribute access is slow)."""

    field: Field
    well: Well
    field_id: int
    field_name: str
    well_id: int
    well_name: str


def _wells(session: Session, parsed: Parsed, plan: UploadPlan) -> list[tuple[dict, WellRef]]:
    names = Names(session, {r["field"] for r in parsed.records}, plan.report, plan.asset_ids)
    out = []
    refs: dict[tuple[str, str], WellRef | None] = {}
    for r in parsed.records:
        key = (r["field"], r["well"])
        if key in refs:
            ref = refs[key]
            if ref is None:  # report the row too, as the first one was
                f = names.field(r["field"], r["_row"])
                if f is not None:
                    names.well(f, r["well"], r["_row"])
                continue
        else:
            f = names.field(r["field"], r["_row"])
            w = names.well(f, r["well"], r["_row"]) if f is not None else None
            ref = refs[key] = None if w is None else WellRef(f, w, f.id, f.name, w.id, w.name)
            if ref is None:
                continue
        out.append((r, ref))
    return out


def plan_surveys(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    report = plan.report
    rows = _wells(session, parsed, plan)
    existing = {}
    keys = [(ref.well_id, r["survey_date"]) for r, ref in rows]
    for chunk in _chunks(keys, 500):
        stmt = select(PressureSurvey).where(
            tuple_(PressureSurvey.well_id, PressureSurvey.survey_date).in_(chunk)
        )
        for s in session.execute(stmt).scalars():
            existing[(s.well_id, s.survey_date)] = s
    compare = tuple(
        c
        for c, col in (
            ("pressure_psia", "pressure"),
            ("gauge_depth_ft", "gauge_depth"),
            ("kind", "kind"),
            ("quality", "quality"),
        )
        if col in parsed.columns
    )
    defaulted = 0
    for r, ref in rows:
        f, w = ref.field, ref.well
        depth = r.get("gauge_depth")
        if depth is None:
            defaulted += 1
            depth = w.gauge_reference_depth_ft if w.gauge_reference_depth_ft is not None else f.datum_depth_ft
        p = r["pressure"]
        if p > f.initial_pressure_psia * INITIAL_PRESSURE_MARGIN:
            report.add(
                r["_row"],
                "pressure",
                round(p, 2),
                f"is above the field's initial pressure {f.initial_pressure_psia:,.1f} psia",
                "warning",
            )
        values = dict(
            well_id=w.id,
            survey_date=r["survey_date"],
            pressure_psia=float(p),
            gauge_depth_ft=float(depth),
            kind=r["kind"],
            quality=r["quality"],
        )
        label = f"{f.name} / {w.name} / {r['survey_date'].isoformat()}"
        change = Change("pressure_survey", r["_row"], label, values, f.name)
        place(
            plan,
            change,
            existing.get((w.id, r["survey_date"])),
            compare,
            replace,
            "a survey for this well and date",
        )
        plan.field_ids.add(f.id)
    if defaulted:
        report.note(
            f"{defaulted} survey(s) without a gauge depth take the well's reference depth "
            "(or the field's datum when the well has none)"
        )


def write_surveys(session: Session, plan: UploadPlan, upload_id: int, actor: Actor) -> None:
    now = utcnow()
    bulk_insert(
        session,
        PressureSurvey.__table__,
        [
            {
                **c.values,
                "excluded": False,
                "exclusion_reason": None,
                "upload_id": upload_id,
                "created_at": now,
            }
            for c in plan.inserts
        ],
    )
    for c in plan.replacements:
        replace_row(session, c, upload_id=upload_id, actor=actor, field_id=c.current.well.field_id)


def plan_production(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    rows = _wells(session, parsed, plan)
    by_well: dict[int, list[dict]] = {}
    for r, ref in rows:
        by_well.setdefault(ref.well_id, []).append(r)
    check_cumulatives(by_well.values(), parsed.columns, plan.report)
    existing = {}
    if rows:
        ids = sorted(by_well)
        lo = min(r["month"] for r, _ in rows)
        hi = max(r["month"] for r, _ in rows)
        for chunk in _chunks(ids, 500):
            stmt = select(ProductionMonth).where(
                ProductionMonth.well_id.in_(chunk), ProductionMonth.month >= lo, ProductionMonth.month <= hi
            )
            for m in session.execute(stmt).scalars():
                existing[(m.well_id, m.month)] = m
    compare = tuple(
        c
        for c, col in (("gas_mscf", "gas"), ("condensate_stb", "condensate"), ("water_stb", "water"))
        if col in parsed.columns
    )
    inserts = plan.inserts
    month_text: dict = {}
    for r, ref in rows:
        month = r["month"]
        text = month_text.get(month) or month_text.setdefault(month, f"{month:%Y-%m}")
        values = {
            "well_id": ref.well_id,
            "month": month,
            "gas_mscf": float(r["gas"]),
            "condensate_stb": float(r["condensate"]),
            "water_stb": float(r["water"]),
        }
        change = Change(
            "production_month",
            r["_row"],
            f"{ref.field_name} / {ref.well_name} / {text}",
            values,
            ref.field_name,
        )
        current = existing.get((ref.well_id, month)) if existing else None
        if current is None:
            inserts.append(change)  # the common case, without place()'s comparisons
        else:
            place(plan, change, current, compare, replace, "production for this well and month")
    plan.field_ids.update({ref.field_id for _, ref in rows})


def write_production(session: Session, plan: UploadPlan, upload_id: int, actor: Actor) -> None:
    bulk_insert(
        session, ProductionMonth.__table__, [{**c.values, "upload_id": upload_id} for c in plan.inserts]
    )
    for c in plan.replacements:
        replace_row(session, c, upload_id=upload_id, actor=actor, field_id=c.current.well.field_id)


def _chunks(items: list, n: int):
    for i in range(0, len(items), n):
        yield items[i : i + n]
