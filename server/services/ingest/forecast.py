"""Well tests, field plans and planned wells: check against stored rows, then write.

A field plan row is checked by the same rules as the field page's plan form
(``services/fieldwork/plan.py``), so the upload and the form refuse the same values with
the same words, here with the row and column."""

from __future__ import annotations

from sqlalchemy import select, tuple_
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import FieldPlan, PlannedWell, Well, WellTest
from ..audit import Actor
from ..fieldwork.plan import stored_plan
from ..fieldwork.planrules import PLAN_COLUMNS, plan_problems
from .history import INITIAL_PRESSURE_MARGIN, _chunks, _wells
from .parse import Parsed
from .plan import Change, Names, UploadPlan, place
from .portfolio import _write_rows
from .write import bulk_insert, replace_row

_COLUMN_OF = dict(PLAN_COLUMNS)


def plan_well_tests(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    report = plan.report
    rows = _wells(session, parsed, plan)
    existing = {}
    keys = [(ref.well_id, r["test_date"]) for r, ref in rows]
    for chunk in _chunks(sorted(set(keys)), 500):
        stmt = select(WellTest).where(tuple_(WellTest.well_id, WellTest.test_date).in_(chunk))
        for t in session.execute(stmt).scalars():
            existing[(t.well_id, t.test_date, round(t.rate_mscf_per_day, 6))] = t
    compare = tuple(
        c
        for c, col in (("flowing_bhp_psia", "flowing_pressure"), ("static_pressure_psia", "static_pressure"))
        if col in parsed.columns
    )
    rates: dict[tuple[int, object], list[int]] = {}
    for r, ref in rows:
        f = ref.field
        if r["flowing_pressure"] >= r["static_pressure"]:
            report.add(
                r["_row"],
                "flowing_pressure",
                round(r["flowing_pressure"], 2),
                f"must be below the static pressure ({r['static_pressure']:,.1f} psia): a well flows only "
                "when its bottom-hole pressure is below the reservoir's",
            )
            continue
        if r["static_pressure"] > f.initial_pressure_psia * INITIAL_PRESSURE_MARGIN:
            report.add(
                r["_row"],
                "static_pressure",
                round(r["static_pressure"], 2),
                f"is above the field's initial pressure {f.initial_pressure_psia:,.1f} psia",
                "warning",
            )
        rates.setdefault((ref.well_id, r["test_date"]), []).append(r["_row"])
        values = dict(
            well_id=ref.well_id,
            test_date=r["test_date"],
            rate_mscf_per_day=float(r["rate"]),
            flowing_bhp_psia=float(r["flowing_pressure"]),
            static_pressure_psia=float(r["static_pressure"]),
        )
        label = (
            f"{ref.field_name} / {ref.well_name} / {r['test_date'].isoformat()} at {r['rate']:,.0f} Mscf/d"
        )
        current = existing.get((ref.well_id, r["test_date"], round(float(r["rate"]), 6)))
        place(
            plan,
            Change("well_test", r["_row"], label, values, ref.field_name),
            current,
            compare,
            replace,
            "a flow period of this well, date and rate",
        )
        plan.field_ids.add(ref.field_id)
    single = sorted(rows_[0] for rows_ in rates.values() if len(rows_) == 1)
    if single:
        shown = ", ".join(map(str, single[:10])) + (" …" if len(single) > 10 else "")
        report.note(
            f"{len(single)} test(s) have a single rate (rows {shown}): they give C with the plan's "
            "exponent n, not n itself"
        )


def write_well_tests(session: Session, plan: UploadPlan, upload_id: int, actor: Actor) -> None:
    now = utcnow()
    bulk_insert(
        session,
        WellTest.__table__,
        [{**c.values, "upload_id": upload_id, "created_at": now} for c in plan.inserts],
    )
    for c in plan.replacements:
        replace_row(session, c, upload_id=upload_id, actor=actor, field_id=c.current.well.field_id)


def plan_field_plans(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    """One row per field. Columns left out of the file keep the stored (or default) values."""
    report = plan.report
    names = Names(session, {r["field"] for r in parsed.records}, report, plan.asset_ids)
    present = tuple(stored for stored, col in PLAN_COLUMNS if col in parsed.columns)
    for r in parsed.records:
        f = names.field(r["field"], r["_row"])
        if f is None:
            continue
        current = session.execute(select(FieldPlan).where(FieldPlan.field_id == f.id)).scalar_one_or_none()
        values = stored_plan(current) | {stored: r.get(_COLUMN_OF[stored]) for stored in present}
        problems = plan_problems(f, values)
        for key, message in problems.items():
            column = _COLUMN_OF[key]
            report.add(r["_row"], column, r.get(column), message)
        if problems:
            continue
        change = Change("field_plan", r["_row"], f"plan of {f.name}", {"field_id": f.id, **values}, f.name)
        place(plan, change, current, present, replace, f"the plan of field {f.name!r}")
        plan.field_ids.add(f.id)


write_field_plans = _write_rows(FieldPlan)


def plan_planned_wells(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    report = plan.report
    names = Names(session, {r["field"] for r in parsed.records}, report, plan.asset_ids)
    matched = [(r, names.field(r["field"], r["_row"])) for r in parsed.records]
    ids = sorted({f.id for _, f in matched if f is not None})
    stored: dict[tuple[int, str], PlannedWell] = {}
    drilled: set[tuple[int, str]] = set()
    for chunk in _chunks(ids, 500):
        for w in session.execute(select(PlannedWell).where(PlannedWell.field_id.in_(chunk))).scalars():
            stored[(w.field_id, w.name.casefold())] = w
        for fid, name in session.execute(select(Well.field_id, Well.name).where(Well.field_id.in_(chunk))):
            drilled.add((fid, name.casefold()))
    compare = tuple(
        c
        for c, col in (
            ("start_date", "start_date"),
            ("compartment", "compartment"),
            ("c_mscf_per_day_psi2n", "c_mscf_per_day_psi2n"),
            ("n", "n"),
        )
        if col in parsed.columns
    )
    for r, f in matched:
        if f is None:
            continue
        if (f.id, r["well"].casefold()) in drilled:
            report.add(
                r["_row"],
                "well",
                r["well"],
                f"is an existing well of field {f.name!r}; a planned well needs a name of its own",
            )
            continue
        values = dict(
            field_id=f.id,
            name=r["well"],
            start_date=r["start_date"],
            compartment=r.get("compartment"),
            c_mscf_per_day_psi2n=float(r["c_mscf_per_day_psi2n"]),
            n=float(r["n"]),
        )
        place(
            plan,
            Change("planned_well", r["_row"], f"{f.name} / {r['well']} (planned)", values, f.name),
            stored.get((f.id, r["well"].casefold())),
            compare,
            replace,
            f"planned well {r['well']!r}",
        )
        plan.field_ids.add(f.id)


write_planned_wells = _write_rows(PlannedWell)
