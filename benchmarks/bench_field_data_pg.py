"""Benchmark: a field's data views on a large PostgreSQL database (issue 18, point 9).

Builds a scratch database of 250 fields x 20 wells: 1,000,000 monthly production rows and
100,000 surveys (generated in SQL), then for one field runs every data view of
``services/portfolio/field_data`` (wells, surveys page 1, production page 1 with its totals,
volumetric estimates), each statement of each view EXPLAINed (ANALYZE) to list any sequential
scan of the big tables, and times each view (median of ``--repeat``) against a baseline query in
the same run: the sum of the field's own production read through the (well_id, month) key,
which is the least any view of that field must do. The wells view as it was before (aggregating
the whole tables, then filtering) is timed too.

    .venv/bin/python -m benchmarks.bench_field_data_pg [--wells-per-field 20] [--repeat 15]
Target: every view within 5 times the baseline, and no sequential scan of production_month or
pressure_survey. Uses TANKBOOK_TEST_PG_URL (default postgresql+psycopg://postgres@127.0.0.1:5432/test).
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import sys
import time
import uuid
from pathlib import Path

import sqlalchemy as sa
from sqlalchemy import event, func, select

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from server.db.migrate import upgrade  # noqa: E402
from server.db.models import PressureSurvey, ProductionMonth, Well  # noqa: E402
from server.db.session import Database  # noqa: E402
from server.services.portfolio import field_data  # noqa: E402

ADMIN_URL = os.environ.get("TANKBOOK_TEST_PG_URL", "postgresql+psycopg://postgres@127.0.0.1:5432/test")
FIELDS, MONTHS, SURVEYS_PER_WELL = 250, 200, 20
TARGET_RATIO = 5.0


def build(db: Database, wells_per_field: int) -> int:
    with db.engine.begin() as c:
        c.execute(sa.text("INSERT INTO asset (name, basin) VALUES ('Bench Asset', 'Bench Basin')"))
        c.execute(sa.text(
            "INSERT INTO field (asset_id, name, datum_depth_ft, \"reservoir_temperature_degF\", "
            "initial_pressure_psia, abandonment_pressure_psia, description, created_at, updated_at) "
            "SELECT 1, 'Field ' || g, 9000, 200, 5000, 800, '', now(), now() FROM generate_series(1, :n) g"
        ), {"n": FIELDS})  # fmt: skip
        c.execute(sa.text(
            "INSERT INTO well (field_id, name) SELECT f.id, 'W-' || g FROM field f, generate_series(1, :w) g"
        ), {"w": wells_per_field})  # fmt: skip
        c.execute(sa.text(
            "INSERT INTO production_month (well_id, month, gas_mscf, condensate_stb, water_stb) "
            "SELECT w.id, date '2000-01-01' + make_interval(months => g), 1000 + g, 0, 0 "
            "FROM well w, generate_series(0, :m - 1) g"
        ), {"m": MONTHS})  # fmt: skip
        c.execute(sa.text(
            "INSERT INTO pressure_survey (well_id, survey_date, pressure_psia, gauge_depth_ft, kind, "
            "quality, excluded, created_at) SELECT w.id, date '2000-01-15' + 300 * g, 5000 - 50 * g, "
            "9000, 'static', 'good', false, now() FROM well w, generate_series(0, :s - 1) g"
        ), {"s": SURVEYS_PER_WELL})  # fmt: skip
    with db.engine.connect().execution_options(isolation_level="AUTOCOMMIT") as c:
        c.execute(sa.text("VACUUM ANALYZE"))
    with db.engine.connect() as c:
        return c.execute(sa.text("SELECT id FROM field WHERE name = 'Field 125'")).scalar_one()


def old_wells(session, field_id: int):
    """The wells view before issue 18: whole-table aggregates joined to the field's wells."""
    surveys = (
        select(PressureSurvey.well_id, func.count(PressureSurvey.id).label("n"))
        .group_by(PressureSurvey.well_id)
        .subquery()
    )
    gas = (
        select(ProductionMonth.well_id, func.sum(ProductionMonth.gas_mscf).label("gas"))
        .group_by(ProductionMonth.well_id)
        .subquery()
    )
    stmt = (
        select(Well, surveys.c.n, gas.c.gas)
        .outerjoin(surveys, surveys.c.well_id == Well.id)
        .outerjoin(gas, gas.c.well_id == Well.id)
        .where(Well.field_id == field_id)
    )
    return session.execute(stmt).all()


def baseline(session, field_id: int):
    return session.execute(
        sa.text(
            "SELECT sum(gas_mscf) FROM production_month "
            "WHERE well_id IN (SELECT id FROM well WHERE field_id = :f)"
        ),
        {"f": field_id},
    ).scalar_one()


def views(field_id: int) -> dict:
    flt = field_data.ListFilter()
    return {
        "baseline: the field's production sum": lambda s: baseline(s, field_id),
        "wells": lambda s: field_data.wells(s, field_id),
        "wells, before issue 18": lambda s: old_wells(s, field_id),
        "surveys, page 1": lambda s: field_data.surveys(s, field_id, flt, 1, 50),
        "production, page 1 and totals": lambda s: field_data.production(s, field_id, flt, 1, 50),
        "volumetric estimates": lambda s: field_data.volumetrics(s, field_id),
    }


def seq_scans(db: Database, fn) -> list[str]:
    """Run ``fn`` capturing its statements, then EXPLAIN ANALYZE each; the big tables it scans."""
    captured = []

    def grab(conn, cursor, statement, parameters, context, executemany):
        if statement.lstrip().upper().startswith("SELECT"):
            captured.append((statement, parameters))

    event.listen(db.engine, "before_cursor_execute", grab)
    try:
        with db.session() as s:
            fn(s)
    finally:
        event.remove(db.engine, "before_cursor_execute", grab)
    found = []
    with db.engine.connect() as c:
        for statement, parameters in captured:
            plan = c.exec_driver_sql("EXPLAIN (ANALYZE, FORMAT JSON) " + statement, parameters).scalar_one()
            plan = plan if isinstance(plan, list) else json.loads(plan)
            stack = [plan[0]["Plan"]]
            while stack:
                node = stack.pop()
                stack.extend(node.get("Plans", ()))
                if node["Node Type"] == "Seq Scan" and node.get("Relation Name") in (
                    "production_month",
                    "pressure_survey",
                ):
                    found.append(f"{node['Relation Name']} ({node['Actual Rows']:,} rows)")
    return found


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--wells-per-field", type=int, default=20)
    ap.add_argument("--repeat", type=int, default=15)
    args = ap.parse_args()
    name = f"tb_bench_{uuid.uuid4().hex[:10]}"
    admin = sa.create_engine(ADMIN_URL, isolation_level="AUTOCOMMIT")
    with admin.connect() as c:
        c.execute(sa.text(f'CREATE DATABASE "{name}"'))
    url = sa.engine.make_url(ADMIN_URL).set(database=name).render_as_string(hide_password=False)
    db = Database(url)
    try:
        upgrade(url)
        t0 = time.perf_counter()
        field_id = build(db, args.wells_per_field)
        with db.session() as s:
            n_prod = s.execute(select(func.count()).select_from(ProductionMonth)).scalar_one()
        print(f"built {n_prod:,} production rows in {time.perf_counter() - t0:.1f} s; field id {field_id}")
        timings: dict[str, list[float]] = {k: [] for k in views(field_id)}
        for _ in range(args.repeat):  # interleaved, so load on the machine falls on all alike
            for label, fn in views(field_id).items():
                with db.session() as s:
                    t = time.perf_counter()
                    fn(s)
                    timings[label].append(time.perf_counter() - t)
        base = statistics.median(timings["baseline: the field's production sum"])
        missed = []
        for label, ts in timings.items():
            med = statistics.median(ts)
            scans = [] if label.startswith("baseline") else seq_scans(db, views(field_id)[label])
            ratio = med / base
            note = f"  seq scans: {', '.join(scans)}" if scans else ""
            print(f"{label:32s} {med * 1000:9.2f} ms  ×{ratio:7.1f}{note}")
            if not label.startswith(("baseline", "wells, before")) and (ratio > TARGET_RATIO or scans):
                missed.append(label)
        if missed:
            print(f"target missed: {', '.join(missed)}")
            return 1
        return 0
    finally:
        db.dispose()
        with admin.connect() as c:
            c.execute(sa.text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
        admin.dispose()


if __name__ == "__main__":
    sys.exit(main())
