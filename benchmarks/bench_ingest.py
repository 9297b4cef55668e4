"""Benchmark: 100,000 monthly production rows from CSV, checked and committed to PostgreSQL,
against PostgreSQL's own COPY of the same rows, both measured in the same run.

Target (issue 5): the upload takes at most 3 times as long as COPY. Both sides write the
same rows into the same table (production_month with its unique key and indexes); COPY is
given the rows already resolved to well ids and pointing at an upload record (as the upload
stores them), so it does none of the upload's work (decoding,
header and unit reading, cell parsing and range checks, name matching, duplicate and
existing-row checks, the upload record, audit event and recompute jobs). A second baseline
COPYs the raw file into an unindexed text table. Each side runs REPEATS times on an
emptied table, alternating; the medians are reported.

    .venv/bin/python benchmarks/bench_ingest.py [--rows 100000] [--repeats 5]
Uses TANKBOOK_TEST_PG_URL (default postgresql+psycopg://postgres@127.0.0.1:5432/test) to
create and drop a scratch database.
"""

from __future__ import annotations

import argparse
import datetime as dt
import io
import os
import statistics
import sys
import time
import uuid
from pathlib import Path

import sqlalchemy as sa

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from server.db.migrate import upgrade  # noqa: E402
from server.db.models import Asset, Field, Fluid, Well  # noqa: E402
from server.db.session import Database  # noqa: E402
from server.services.ingest.service import store_upload  # noqa: E402

ADMIN_URL = os.environ.get("TANKBOOK_TEST_PG_URL", "postgresql+psycopg://postgres@127.0.0.1:5432/test")
TARGET_RATIO = 3.0
WELLS_PER_FIELD = 50


def make_rows(n_rows: int):
    """(field, well, month) keys and volumes: 50 wells a field, 100 months a well."""
    months_per_well = 100
    n_wells = max(1, n_rows // months_per_well)
    rows = []
    for w in range(n_wells):
        field, well = f"Field {w // WELLS_PER_FIELD:03d}", f"W-{w:04d}"
        for k in range(months_per_well):
            if len(rows) == n_rows:
                break
            month = dt.date(2010 + k // 12, k % 12 + 1, 1)
            rows.append((field, well, month, 10000.0 + w + k * 0.25, 50.0 + k * 0.5, 3.0 + (w % 7)))
    return rows


def csv_bytes(rows) -> bytes:
    out = io.StringIO()
    out.write("field,well,month,gas_mscf,condensate_stb,water_stb\n")
    for f, w, m, g, c, wat in rows:
        out.write(f"{f},{w},{m.isoformat()[:7]},{g!r},{c!r},{wat!r}\n")
    return out.getvalue().encode()


def seed(db: Database, rows) -> dict[str, int]:
    with db.session() as s:
        asset = Asset(name="Bench Asset", basin="Bench Basin")
        s.add(asset)
        fields = {}
        for f, *_ in rows:
            if f not in fields:
                fields[f] = Field(
                    asset=asset,
                    name=f,
                    datum_depth_ft=10000,
                    reservoir_temperature_degF=200,
                    initial_pressure_psia=5000,
                    abandonment_pressure_psia=800,
                )
                s.add(fields[f])
                s.add(Fluid(field=fields[f], gas_gravity=0.65))
        wells = {}
        for f, w, *_ in rows:
            if w not in wells:
                wells[w] = Well(field=fields[f], name=w)
                s.add(wells[w])
        s.flush()
        return {w: well.id for w, well in wells.items()}


def empty(db: Database) -> None:
    with db.engine.begin() as c:
        for table in ("production_month", "job", "audit_event", "upload", "raw_production"):
            c.execute(sa.text(f"DELETE FROM {table}"))  # noqa: S608 - fixed table names
    with db.engine.connect().execution_options(isolation_level="AUTOCOMMIT") as c:
        c.execute(sa.text("VACUUM ANALYZE production_month"))


UPLOAD_ROW = (
    "INSERT INTO upload (kind, filename, sha256, size_bytes, rows_total, rows_inserted, rows_unchanged, "
    "rows_replaced, created_at, summary) VALUES ('production', 'copy', '', 0, 0, 0, 0, 0, now(), '{}') "
    "RETURNING id"
)
COPY_RESOLVED = (
    "COPY production_month (well_id, month, gas_mscf, condensate_stb, water_stb, upload_id) "
    "FROM STDIN WITH (FORMAT csv)"
)


def copy_resolved(db: Database, rows, well_ids) -> float:
    """COPY the rows as the table stores them (well ids, and an upload record they point to);
    only the COPY is timed, not the building of its input."""
    with db.engine.begin() as conn:
        upload_id = conn.execute(sa.text(UPLOAD_ROW)).scalar_one()
    text = "".join(
        f"{well_ids[w]},{m.isoformat()},{g!r},{c!r},{wat!r},{upload_id}\n" for _, w, m, g, c, wat in rows
    ).encode()
    t0 = time.perf_counter()
    with db.engine.begin() as conn:
        raw = conn.connection.dbapi_connection
        with raw.cursor() as cur, cur.copy(COPY_RESOLVED) as copy:
            copy.write(text)
    return time.perf_counter() - t0


def copy_raw(db: Database, data: bytes) -> float:
    t0 = time.perf_counter()
    with db.engine.begin() as conn:
        raw = conn.connection.dbapi_connection
        with (
            raw.cursor() as cur,
            cur.copy("COPY raw_production FROM STDIN WITH (FORMAT csv, HEADER true)") as copy,
        ):
            copy.write(data)
    return time.perf_counter() - t0


def upload(db: Database, data: bytes, n_rows: int) -> float:
    t0 = time.perf_counter()
    result = store_upload(db, kind="production", data=data, filename="bench.csv")
    elapsed = time.perf_counter() - t0
    if result.status != "committed" or len(result.plan.inserts) != n_rows:
        raise SystemExit(f"upload did not commit every row: {result.status} {result.plan.report.as_dict()}")
    return elapsed


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=100_000)
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    name = f"tb_bench_{uuid.uuid4().hex[:10]}"
    admin = sa.create_engine(ADMIN_URL, isolation_level="AUTOCOMMIT")
    with admin.connect() as c:
        c.execute(sa.text(f'CREATE DATABASE "{name}"'))
    url = sa.engine.make_url(ADMIN_URL).set(database=name).render_as_string(hide_password=False)
    db = None
    try:
        upgrade(url)
        db = Database(url)
        with db.engine.begin() as c:
            c.execute(
                sa.text(
                    "CREATE TABLE raw_production (field text, well text, month text, gas_mscf text, "
                    "condensate_stb text, water_stb text)"
                )
            )
        rows = make_rows(args.rows)
        data = csv_bytes(rows)
        well_ids = seed(db, rows)
        print(
            f"{len(rows):,} rows, {len(data) / 2**20:.1f} MiB of CSV, {len(well_ids)} wells; "
            f"{args.repeats} runs each, alternating"
        )
        copies, raws, ours = [], [], []
        for _ in range(args.repeats):
            empty(db)
            copies.append(copy_resolved(db, rows, well_ids))
            empty(db)
            raws.append(copy_raw(db, data))
            empty(db)
            ours.append(upload(db, data, len(rows)))
        t_copy, t_raw, t_ours = (statistics.median(x) for x in (copies, raws, ours))
        ratio = t_ours / t_copy
        print(
            f"PostgreSQL COPY into production_month (ids resolved): median {t_copy:.3f} s  "
            f"(runs: {', '.join(f'{x:.3f}' for x in copies)})"
        )
        print(f"PostgreSQL COPY of the raw file into a text table:   median {t_raw:.3f} s")
        print(
            f"Tankbook upload (check + commit, one transaction):    median {t_ours:.3f} s  "
            f"(runs: {', '.join(f'{x:.3f}' for x in ours)})"
        )
        print(
            f"ratio upload / COPY = {ratio:.2f} (target <= {TARGET_RATIO:.0f}); "
            f"upload / raw COPY = {t_ours / t_raw:.2f}"
        )
        print("target met" if ratio <= TARGET_RATIO else "TARGET MISSED")
        return 0 if ratio <= TARGET_RATIO else 1
    finally:
        if db is not None:
            db.dispose()
        with admin.connect() as c:
            c.execute(sa.text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
        admin.dispose()


if __name__ == "__main__":
    raise SystemExit(main())
