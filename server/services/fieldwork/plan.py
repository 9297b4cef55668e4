"""A field's plan (how it will be produced): read it, check it, change it (audited, then the
field is recomputed), and turn the rows into the engine's :class:`FieldPlan`.

The same checks serve the field page's form, the JSON API and the ``field_plans`` upload
(``services/ingest/forecast.py``), so a value refused in one is refused in all, with the
same words. Values are in stored units: Mscf/d of separator gas, psia, fractions, dates.
"""

from __future__ import annotations

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Field, FieldPlan, PlannedWell, Well, WellTest
from .. import audit
from ..jobs import queue as jobs
from .choices import ChangeOutcome, FieldWorkError, _queue
from .planrules import (  # noqa: F401  (re-exported: the plan's rules live beside, database-free)
    CHOICE_KEYS,
    DATE_KEYS,
    DEFAULT_PLAN,
    EXPONENT_MAX,
    EXPONENT_MIN,
    FORM_WORDS,
    MAX_RATE_MSCF_PER_DAY,
    OPTIONAL_KEYS,
    PLAN_COLUMNS,
    PLAN_KEYS,
    WORDS,
    engine_field_plan,
    parse_plan,
    plan_problems,
    show,
)


def plan_row(session: Session, field_id: int) -> FieldPlan | None:
    return session.execute(select(FieldPlan).where(FieldPlan.field_id == field_id)).scalar_one_or_none()


def stored_plan(row: FieldPlan | None) -> dict:
    """The plan's values as stored (defaults when the field has no plan yet)."""
    if row is None:
        return dict(DEFAULT_PLAN)
    return {k: getattr(row, k) for k in PLAN_KEYS}


def planned_wells(session: Session, field_id: int) -> list[PlannedWell]:
    stmt = select(PlannedWell).where(PlannedWell.field_id == field_id)
    return list(session.execute(stmt.order_by(PlannedWell.start_date, PlannedWell.name)).scalars())


def update_plan(session: Session, actor: audit.Actor, field: Field, values: dict) -> ChangeOutcome:
    """Store the changed plan values (creating the plan the first time), audit them in words
    (old → new) and queue a recompute. Raises :class:`FieldWorkError` (nothing stored)."""
    parsed, problems = parse_plan(values)
    row = plan_row(session, field.id)
    before = stored_plan(row)
    merged = before | parsed
    problems |= {k: v for k, v in plan_problems(field, merged).items() if k not in problems}
    if problems:
        raise FieldWorkError(problems)
    old, new = audit.changed(audit.jsonable(before), audit.jsonable({k: merged[k] for k in parsed}))
    if row is not None and not new:
        return ChangeOutcome((), None, None, "no change")
    jobs.write_first(session)
    created = row is None
    if created:
        row = FieldPlan(field_id=field.id, **merged)
        session.add(row)
    else:
        for key in new:
            setattr(row, key, merged[key])
    session.flush()
    words = ", ".join(f"{WORDS[k]} {show(k, old.get(k))} → {show(k, new[k])}" for k in new)
    summary = (
        ("created the field plan" + (f": {words}" if words else "")) if created else f"field plan: {words}"
    )
    event = audit.record(
        session,
        actor,
        "insert" if created else "update",
        "field_plan",
        row.id,
        before=None if created else old,
        after=audit.jsonable(merged) if created else new,
        field_id=field.id,
        summary=summary,
    )
    session.flush()
    job_id = _queue(session, field, f"field plan changed by {actor.name}")
    return ChangeOutcome(tuple(new) or ("created",), job_id, event.id, summary)


def well_tests_by_well(session: Session, field_id: int) -> dict[str, list[dict]]:
    """The field's multi-rate test rows by well name, oldest first (plain data)."""
    rows = session.execute(
        select(WellTest, Well.name)
        .join(Well)
        .where(Well.field_id == field_id)
        .order_by(Well.name, WellTest.test_date, WellTest.rate_mscf_per_day)
    ).all()
    out: dict[str, list[dict]] = {}
    for t, name in rows:
        out.setdefault(name, []).append(
            {
                "test_date": t.test_date.isoformat(),
                "rate_mscf_per_day": t.rate_mscf_per_day,
                "flowing_bhp_psia": t.flowing_bhp_psia,
                "static_pressure_psia": t.static_pressure_psia,
            }
        )
    return out


def planned_well_rows(session: Session, field_id: int) -> list[dict]:
    return [
        {
            "name": w.name,
            "start_date": w.start_date.isoformat(),
            "compartment": w.compartment,
            "c_mscf_per_day_psi2n": w.c_mscf_per_day_psi2n,
            "n": w.n,
        }
        for w in planned_wells(session, field_id)
    ]
