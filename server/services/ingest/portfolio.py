"""Fields, wells, fluid descriptions, lab tables and volumetric estimates."""

from __future__ import annotations

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import (
    Asset,
    Field,
    FieldAnalysisSettings,
    Fluid,
    FluidLabPoint,
    VolumetricEstimate,
    Well,
)
from .. import audit
from ..audit import Actor
from .files.names import Lookalikes, differing
from .parse import Parsed
from .plan import Change, Names, UploadPlan, place, plain
from .rowchecks import check_fluid_row, check_volumetric_row, lab_points
from .write import replace_row

FIELD_COLUMNS = (
    ("datum_depth_ft", "datum_depth"),
    ("reservoir_temperature_degF", "reservoir_temperature"),
    ("initial_pressure_psia", "initial_pressure"),
    ("abandonment_pressure_psia", "abandonment_pressure"),
    ("description", "description"),
)


def _present(parsed: Parsed, pairs) -> tuple[str, ...]:
    return tuple(stored for stored, col in pairs if col in parsed.columns)


def lookalike(report, row: int, column: str, value: str, seen: Lookalikes, what: str) -> bool:
    """Report ``value`` when it looks like another name in ``seen`` (UTS #39 skeleton): an error
    when either name has a character outside ASCII (a homoglyph from another script), else a
    warning (``1``/``l``, ``0``/``O`` are confusable but both plausible names). True: refused."""
    twin = seen.twin(value)
    seen.add(value)
    if twin is None:
        return False
    if value.isascii() and twin.isascii():
        report.add(
            row, column, value, f"looks like the {what} {twin!r}; check that it is a different one", "warning"
        )
        return False
    report.add(
        row,
        column,
        value,
        f"looks the same as the {what} {twin!r} but is written with other characters "
        f"({differing(value, twin)}); use the existing name or one that reads differently",
    )
    return True


TAKEN_NAME = (
    "this name cannot be given to a new field: field names are unique in the whole database "
    "(one may exist where you have no access); choose another name"
)


def plan_fields(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    report = plan.report
    names = Names(session, {r["field"] for r in parsed.records}, report, plan.asset_ids)
    assets = {a.name.casefold(): a for a in session.execute(select(Asset)).scalars()}
    new_assets: dict[str, str] = {}
    visible = select(Field.name)
    if plan.asset_ids is not None:  # only names the user can see: no oracle for other assets' fields
        visible = visible.where(Field.asset_id.in_(plan.asset_ids))
    field_names = Lookalikes(session.execute(visible).scalars())
    asset_names = Lookalikes(
        a.name for a in assets.values() if plan.asset_ids is None or a.id in plan.asset_ids
    )
    basins = Lookalikes(a.basin for a in assets.values() if a.basin)
    for r in parsed.records:
        refused = lookalike(report, r["_row"], "field", r["field"], field_names, "field")
        refused |= lookalike(report, r["_row"], "asset", r["asset"], asset_names, "asset")
        if r["basin"]:
            refused |= lookalike(report, r["_row"], "basin", r["basin"], basins, "basin")
        if refused:
            continue
        if r["abandonment_pressure"] >= r["initial_pressure"]:
            report.add(
                r["_row"],
                "abandonment_pressure",
                round(r["abandonment_pressure"], 2),
                f"must be below the initial pressure ({r['initial_pressure']:,.1f} psia)",
            )
            continue
        f = names.field(r["field"], r["_row"], required=False)
        if f is None and r["field"].casefold() in names.hidden:
            # A field the user may not see reads as unknown (no oracle): planned like a new
            # field; storing it is refused (see TAKEN_NAME), as any name already taken is.
            plan.extra.setdefault("taken_names", {})[r["_row"]] = r["field"]
        asset = assets.get(r["asset"].casefold())
        if plan.asset_ids is not None and (asset is None or asset.id not in plan.asset_ids):
            report.add(
                r["_row"],
                "asset",
                r["asset"],
                "is not one of your assets; new assets are created by users with access to every asset",
            )
            continue
        if asset is None:
            new_assets.setdefault(r["asset"].casefold(), r["asset"])
        values = {stored: r[col] for stored, col in FIELD_COLUMNS}
        values.update(asset_name=asset.name if asset else r["asset"], basin=r["basin"], name=r["field"])
        change = Change("field", r["_row"], r["field"], values, r["field"])
        if f is None:
            plan.inserts.append(change)
            continue
        compare = _present(parsed, FIELD_COLUMNS)
        if asset is None or asset.id != f.asset_id:
            report.add(
                r["_row"],
                "asset",
                r["asset"],
                f"field {f.name!r} belongs to asset {f.asset.name!r}; moving a field between assets "
                "is done by an administrator, not by an upload",
            )
            continue
        place(plan, change, f, compare, replace, f"field {f.name!r}")
        plan.field_ids.add(f.id)
    if new_assets:
        report.note(f"new asset(s) will be created: {', '.join(sorted(new_assets.values()))}")
    plan.extra["new_assets"] = new_assets


def write_fields(session: Session, plan: UploadPlan, upload_id: int, actor: Actor) -> None:
    assets = {a.name.casefold(): a for a in session.execute(select(Asset)).scalars()}
    for c in plan.inserts:
        v = c.values
        asset = assets.get(v["asset_name"].casefold())
        if asset is None:
            asset = assets[v["asset_name"].casefold()] = Asset(name=v["asset_name"], basin=v["basin"])
            session.add(asset)
        f = Field(asset=asset, name=v["name"], **{k: v[k] for k, _ in FIELD_COLUMNS})
        session.add(f)
        session.add(FieldAnalysisSettings(field=f))
        session.flush()
        plan.field_ids.add(f.id)
        _audit_insert(session, actor, upload_id, "field", f.id, f.id, c)
    for c in plan.replacements:
        replace_row(session, c, upload_id=upload_id, actor=actor, field_id=c.current.id)


def plan_wells(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    names = Names(session, {r["field"] for r in parsed.records}, plan.report, plan.asset_ids)
    compare = _present(
        parsed, (("compartment", "compartment"), ("gauge_reference_depth_ft", "gauge_reference_depth"))
    )
    wells: dict[int, Lookalikes] = {}
    compartments: dict[int, Lookalikes] = {}
    for (field_id, _), stored in names.wells.items():
        for w in stored:
            wells.setdefault(field_id, Lookalikes()).add(w.name)
            if w.compartment:
                compartments.setdefault(field_id, Lookalikes()).add(w.compartment)
    for r in parsed.records:
        f = names.field(r["field"], r["_row"])
        if f is None:
            continue
        if lookalike(plan.report, r["_row"], "well", r["well"], wells.setdefault(f.id, Lookalikes()), "well"):
            continue
        label = r.get("compartment")
        seen = compartments.setdefault(f.id, Lookalikes())
        if label and lookalike(plan.report, r["_row"], "compartment", label, seen, "compartment"):
            continue
        found = names.wells.get((f.id, r["well"].casefold()), [])
        current = next((w for w in found if w.name == r["well"]), found[0] if len(found) == 1 else None)
        values = dict(
            field_id=f.id,
            name=r["well"],
            compartment=r.get("compartment"),
            gauge_reference_depth_ft=r.get("gauge_reference_depth"),
        )
        place(
            plan,
            Change("well", r["_row"], f"{f.name} / {r['well']}", values, f.name),
            current,
            compare,
            replace,
            f"well {r['well']!r}",
        )
        plan.field_ids.add(f.id)


def _write_rows(model):
    """A writer for a kind whose rows are one ``model`` row each, carrying ``field_id``."""

    def write(session: Session, plan: UploadPlan, upload_id: int, actor: Actor) -> None:
        for c in plan.inserts:
            row = model(**c.values)
            session.add(row)
            session.flush()
            _audit_insert(session, actor, upload_id, model.__tablename__, row.id, row.field_id, c)
        for c in plan.replacements:
            replace_row(session, c, upload_id=upload_id, actor=actor, field_id=c.current.field_id)

    return write


write_wells = _write_rows(Well)


FLUID_COLUMNS = (
    ("gas_gravity", "gas_gravity"),
    ("wellstream_gravity", "wellstream_gravity"),
    ("y_co2_frac", "co2"),
    ("y_h2s_frac", "h2s"),
    ("y_n2_frac", "n2"),
    ("condensate_api", "condensate_api"),
)


def plan_fluids(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    report = plan.report
    names = Names(session, {r["field"] for r in parsed.records}, report, plan.asset_ids)
    for r in parsed.records:
        if not check_fluid_row(r, report):
            continue
        f = names.field(r["field"], r["_row"])
        if f is None:
            continue
        values = {stored: r[col] for stored, col in FLUID_COLUMNS}
        values["field_id"] = f.id
        place(
            plan,
            Change("fluid", r["_row"], f.name, values, f.name),
            f.fluid,
            _present(parsed, FLUID_COLUMNS),
            replace,
            f"the fluid of field {f.name!r}",
        )
        plan.field_ids.add(f.id)


write_fluids = _write_rows(Fluid)


def plan_lab_table(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    """Each field's rows are its whole table: identical is unchanged, different replaces it."""
    report = plan.report
    names = Names(session, {r["field"] for r in parsed.records}, report, plan.asset_ids)
    tables: dict[int, tuple[Field, list[dict]]] = {}
    for r in parsed.records:
        f = names.field(r["field"], r["_row"])
        if f is None:
            continue
        if f.fluid is None:
            report.add(
                r["_row"],
                "field",
                r["field"],
                "the field has no fluid description; upload a fluids file first",
            )
            continue
        tables.setdefault(f.id, (f, []))[1].append(r)
    for f, rows in tables.values():
        points = lab_points(f.name, rows, report)
        if points is None:
            continue
        first = min(r["_row"] for r in rows)
        old = [
            {"pressure_psia": p.pressure_psia, "z_factor": p.z_factor, "bg_rcf_per_scf": p.bg_rcf_per_scf}
            for p in f.fluid.lab_points
        ]
        change = Change(
            "fluid_lab_point",
            first,
            f"lab table of {f.name} ({len(points)} pressures)",
            {"points": points},
            f.name,
        )
        plan.field_ids.add(f.id)
        if not old:
            plan.inserts.append(change)
        elif _same_points(old, points):
            plan.unchanged += len(points)
        elif not replace:
            report.add(
                first,
                None,
                None,
                f"field {f.name!r} already has a different lab table ({len(old)} "
                "pressures); choose 'replace existing' to replace it",
            )
        else:
            change.current, change.before = (
                f.fluid,
                {"points": [{k: plain(v) for k, v in p.items()} for p in old]},
            )
            plan.replacements.append(change)


def _same_points(a: list[dict], b: list[dict]) -> bool:
    from .plan import same

    return len(a) == len(b) and all(same(x[k], y[k]) for x, y in zip(a, b, strict=True) for k in x)


def write_lab_table(session: Session, plan: UploadPlan, upload_id: int, actor: Actor) -> None:
    for c in plan.inserts + plan.replacements:
        f = session.execute(select(Field).where(Field.name == c.field_name)).scalar_one()
        fluid = f.fluid
        if c.current is not None:
            fluid.lab_points.clear()
            session.flush()
        for p in c.values["points"]:
            fluid.lab_points.append(FluidLabPoint(**p))
        session.flush()
        audit.record(
            session,
            actor,
            "replace" if c.current is not None else "insert",
            "fluid_lab_point",
            fluid.id,
            field_id=f.id,
            before=c.before,
            after={"points": [{k: plain(v) for k, v in p.items()} for p in c.values["points"]]},
            summary=f"upload {upload_id}, row {c.row}: {c.label}",
        )


VOLUMETRIC_COLUMNS = (
    ("author", "author"),
    ("giip_low_bscf", "giip_low"),
    ("giip_best_bscf", "giip_best"),
    ("giip_high_bscf", "giip_high"),
    ("method", "method"),
    ("inputs", "inputs"),
)


def plan_volumetrics(session: Session, parsed: Parsed, plan: UploadPlan, replace: bool) -> None:
    report = plan.report
    names = Names(session, {r["field"] for r in parsed.records}, report, plan.asset_ids)
    for r in parsed.records:
        row = r["_row"]
        checked = check_volumetric_row(r, report)
        if checked is None:
            continue
        method, inputs = checked
        f = names.field(r["field"], row)
        if f is None:
            continue
        values = dict(
            field_id=f.id,
            estimate_date=r["estimate_date"],
            author=r["author"],
            giip_low_bscf=r["giip_low"],
            giip_best_bscf=r["giip_best"],
            giip_high_bscf=r["giip_high"],
            method=method,
            inputs=inputs,
        )
        current = session.execute(
            select(VolumetricEstimate)
            .where(
                VolumetricEstimate.field_id == f.id, VolumetricEstimate.estimate_date == r["estimate_date"]
            )
            .order_by(VolumetricEstimate.id)
            .limit(1)
        ).scalar_one_or_none()
        compare = tuple(s for s, c in VOLUMETRIC_COLUMNS if c in parsed.columns or s in ("method", "inputs"))
        place(
            plan,
            Change(
                "volumetric_estimate", row, f"{f.name} / {r['estimate_date'].isoformat()}", values, f.name
            ),
            current,
            compare,
            replace,
            "a volumetric estimate for this field and date",
        )
        plan.field_ids.add(f.id)


write_volumetrics = _write_rows(VolumetricEstimate)


def _audit_insert(
    session, actor: Actor, upload_id: int, entity: str, entity_id: int, field_id, c: Change
) -> None:
    audit.record(
        session,
        actor,
        "insert",
        entity,
        entity_id,
        field_id=field_id,
        after={k: plain(v) for k, v in c.values.items() if k != "points"},
        summary=f"upload {upload_id}, row {c.row}: {c.label}",
    )
