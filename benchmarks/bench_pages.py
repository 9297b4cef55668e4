"""Benchmark: server-side render of the portfolio page (500 fields) and of a field page.

Targets (issue 6): GET / with 500 fields under 300 ms median; GET /fields/{id} of a field
with 20 years of monthly production and about 40 surveys under 200 ms median. The baseline,
measured in the same run through the same app and middleware, is a static file
(/static/app.css); the report gives each page's median, its 90th percentile, and its ratio
to the baseline.

The database is the demo's twelve fields plus a 20-year field, recomputed for real, then
cloned row by row in SQL (fields, fluids, choices, wells, surveys, production, the volumetric
estimate and the current estimate with its stored detail) up to 500 fields: estimates are
copied, not recomputed, which is all the page reads. Requests go through Starlette's
TestClient with a logged-in viewer's session, interleaved so load on the machine affects
all three alike.

Run: .venv/bin/python -m benchmarks.bench_pages [--fields 500] [--repeat 30]
     [--postgresql]  (a temporary PostgreSQL database instead of a temporary SQLite file)
     [--profile]     (cProfile of one portfolio render, top 20 by cumulative time)
     .venv/bin/python -m benchmarks.bench_pages --visits [--rounds 5] [--mbit 20] [--latency-ms 30]
                     (first and second visit of the 20-year field's page in Chromium: page_visits.py)
"""

from __future__ import annotations

import argparse
import cProfile
import dataclasses
import datetime as dt
import pstats
import statistics
import sys
import time
from pathlib import Path

import sqlalchemy as sa

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from benchmarks.bench_portfolio import _temporary_database  # noqa: E402
from server.app import create_app  # noqa: E402
from server.db.base import Base, utcnow  # noqa: E402
from server.db.migrate import upgrade  # noqa: E402
from server.db.models import Field, User  # noqa: E402
from server.db.session import Database  # noqa: E402
from server.services.access import accounts, credentials
from server.services.audit import Actor  # noqa: E402
from server.services.demo import PORTFOLIO, DemoWell, load_demo  # noqa: E402
from server.services.jobs import runner  # noqa: E402
from server.services.portfolio.rows import _total  # noqa: E402

portfolio_totals_cache_clear = _total.cache_clear
from server.settings import Settings  # noqa: E402

PORTFOLIO_TARGET_S = 0.300
FIELD_TARGET_S = 0.200
LONG_FIELD = "Longreach"
PASSWORD = "bench-quartz-lantern-harbour-91"  # noqa: S105 - a throwaway database's user


def long_field():
    """The demo's clean field stretched to 20 years of monthly production, ~40 surveys."""
    start = dt.date(2006, 11, 1)
    wells = tuple(DemoWell(f"LGR-{k}", start) for k in (1, 2, 3))
    return dataclasses.replace(
        PORTFOLIO[0], name=LONG_FIELD, asset="Long Reach", start=start, wells=wells, survey_every_days=540.0
    )


def _copy_rows(conn, table, column: str, old: int, new: int, where=None) -> None:
    """INSERT ... SELECT of ``table``'s rows with ``column`` = old, as rows with ``column`` = new."""
    cols = [c.name for c in table.columns if c.name not in ("id", column)]
    src = sa.select(*[table.c[c] for c in cols], sa.literal(new).label(column)).where(table.c[column] == old)
    if where is not None:
        src = src.where(where)
    conn.execute(sa.insert(table).from_select(cols + [column], src))


def clone_fields(db: Database, n_total: int) -> int:
    """Clone the stored fields (round robin) until there are ``n_total``; returns the count."""
    t = Base.metadata.tables
    field, well, est = t["field"], t["well"], t["estimate"]
    with db.engine.begin() as conn:
        sources = [r.id for r in conn.execute(sa.select(field.c.id).where(field.c.name != LONG_FIELD))]
        have = conn.execute(sa.select(sa.func.count()).select_from(field)).scalar_one()
        newest = dict(
            conn.execute(sa.select(est.c.field_id, sa.func.max(est.c.id)).group_by(est.c.field_id)).all()
        )
        for k in range(n_total - have):
            src = sources[k % len(sources)]
            row = dict(conn.execute(sa.select(field).where(field.c.id == src)).mappings().one())
            row.pop("id")
            row["name"] = f"{row['name']} {k // len(sources) + 2:03d}"
            new = conn.execute(sa.insert(field).values(**row)).inserted_primary_key[0]
            for name in ("fluid", "field_analysis_settings", "volumetric_estimate"):
                _copy_rows(conn, t[name], "field_id", src, new)
            _copy_rows(conn, est, "field_id", src, new, est.c.id == newest[src])
            for w in conn.execute(sa.select(well).where(well.c.field_id == src)).mappings().all():
                values = {c: w[c] for c in w if c != "id"} | {"field_id": new}
                new_well = conn.execute(sa.insert(well).values(**values)).inserted_primary_key[0]
                for name in ("pressure_survey", "production_month"):
                    _copy_rows(conn, t[name], "well_id", w["id"], new_well)
        return conn.execute(sa.select(sa.func.count()).select_from(field)).scalar_one()


def build(url: str, n_fields: int) -> tuple[int, str]:
    """The benchmark database; returns (the long field's id, a viewer's session token)."""
    upgrade(url)
    db = Database(url)
    t0 = time.perf_counter()
    with db.session() as s:
        load_demo(s, PORTFOLIO + (long_field(),))
    runner.drain(db)
    print(f"demo fields and the 20-year field loaded and recomputed in {time.perf_counter() - t0:.1f} s")
    t0 = time.perf_counter()
    total = clone_fields(db, n_fields)
    print(f"cloned to {total} fields in {time.perf_counter() - t0:.1f} s")
    with db.session() as s:
        user = accounts.create_user(
            s, Actor(None, "bench"), username="bench-viewer", role="viewer", password=PASSWORD, now=utcnow()
        )
        s.flush()
        raw, _ = credentials.start_session(s, s.get(User, user.id), now=utcnow())
        long_id = s.execute(sa.select(Field.id).where(Field.name == LONG_FIELD)).scalar_one()
        surveys = s.execute(
            sa.text(
                "SELECT count(*) FROM pressure_survey ps JOIN well w ON ps.well_id = w.id "
                "WHERE w.field_id = :f"
            ),
            {"f": long_id},
        ).scalar_one()
        months = s.execute(
            sa.text(
                "SELECT count(DISTINCT month) FROM production_month pm JOIN well w ON pm.well_id = w.id "
                "WHERE w.field_id = :f"
            ),
            {"f": long_id},
        ).scalar_one()
    print(f"field page: {LONG_FIELD} (id {long_id}), {months} production months, {surveys} surveys")
    db.dispose()
    return long_id, raw


def profile_portfolio(app) -> None:
    """cProfile of the portfolio route called in this thread (TestClient runs it in another)."""
    from types import SimpleNamespace

    from starlette.requests import Request

    from server.services.portfolio.view import PortfolioQuery
    from server.web.pages.portfolio import portfolio_page

    scope = {
        "type": "http",
        "app": app,
        "router": app.router,
        "method": "GET",
        "path": "/",
        "root_path": "",
        "scheme": "http",
        "server": ("127.0.0.1", 8000),
        "headers": [],
        "query_string": b"",
    }
    prof = cProfile.Profile()
    with app.state.db.session() as session:
        for _ in range(2):
            request = Request(scope)
            prof.enable()
            portfolio_page(request, session, SimpleNamespace(asset_ids=None), PortfolioQuery())
            prof.disable()
    pstats.Stats(prof).sort_stats("cumulative").print_stats(30)


def _time(client, path: str) -> float:
    t0 = time.perf_counter()
    r = client.get(path)
    dt_s = time.perf_counter() - t0
    if r.status_code != 200:
        raise SystemExit(f"GET {path} answered {r.status_code}: {r.text[:300]}")
    return dt_s


def _summary(name: str, times: list[float], base: float, target: float | None) -> bool:
    med = statistics.median(times)
    p90 = statistics.quantiles(times, n=10)[-1] if len(times) >= 10 else max(times)
    verdict = ""
    ok = True
    if target is not None:
        ok = med < target
        verdict = f"  target {target * 1e3:.0f} ms: {'met' if ok else 'NOT met'}"
    line = f"{name:<34} median {med * 1e3:8.1f} ms  p90 {p90 * 1e3:8.1f} ms  x{med / base:7.1f} baseline"
    print(line + verdict)
    return ok


def main() -> int:
    from fastapi.testclient import TestClient

    from server.web.auth import SESSION_COOKIE

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--fields", type=int, default=500)
    ap.add_argument("--repeat", type=int, default=30)
    ap.add_argument("--postgresql", action="store_true", help="use a temporary PostgreSQL database")
    ap.add_argument("--profile", action="store_true")
    ap.add_argument("--visits", action="store_true", help="first and second visits in Chromium")
    ap.add_argument("--rounds", type=int, default=5)
    ap.add_argument("--mbit", type=float, default=20.0)
    ap.add_argument("--latency-ms", type=float, default=30.0)
    args = ap.parse_args()
    url, drop = _temporary_database(sqlite=not args.postgresql)
    if args.visits:
        from benchmarks.page_visits import run_visits

        try:
            long_id, token = build(url, len(PORTFOLIO) + 1)  # the demo and the 20-year field
            link = {"mbit": args.mbit, "latency_ms": args.latency_ms}
            ok = run_visits(url, token, long_id, rounds=args.rounds, **link)
        finally:
            drop()
        return 0 if ok else 1
    try:
        long_id, token = build(url, args.fields)
        settings = Settings(environment="test", secret_key="p" * 40, database_url=url, job_runner="external")
        paths = {"static": "/static/app.css", "portfolio": "/", "field": f"/fields/{long_id}"}
        times: dict[str, list[float]] = {k: [] for k in (*paths, "cold_totals")}
        with TestClient(create_app(settings), base_url="http://127.0.0.1:8000") as client:
            client.cookies.set(SESSION_COOKIE, token, domain="127.0.0.1")
            t0 = time.perf_counter()
            rows = client.get("/").text.count("<tr data-field-id=")
            first_ms = 1e3 * (time.perf_counter() - t0)
            print(f"portfolio page lists {rows} fields on its first page (first request {first_ms:.0f} ms)")
            first = {k: _time(client, p) for k, p in paths.items()}  # cold: first request of each
            for _ in range(3):
                for p in paths.values():
                    _time(client, p)
            for _ in range(args.repeat):
                for k, p in paths.items():
                    times[k].append(_time(client, p))
                portfolio_totals_cache_clear()
                times["cold_totals"].append(_time(client, "/"))
            if args.profile:
                profile_portfolio(client.app)
    finally:
        drop()
    base = statistics.median(times["static"])
    print(
        f"\n{args.repeat} interleaved requests each ({url.split('://')[0]}); first requests: "
        + ", ".join(f"{k} {v * 1e3:.0f} ms" for k, v in first.items())
    )
    _summary("baseline GET /static/app.css", times["static"], base, None)
    ok_p = _summary(f"portfolio GET / ({args.fields} fields)", times["portfolio"], base, PORTFOLIO_TARGET_S)
    _summary("  the same, totals not cached", times["cold_totals"], base, PORTFOLIO_TARGET_S)
    ok_f = _summary("field GET /fields/{id} (20 years)", times["field"], base, FIELD_TARGET_S)
    return 0 if ok_p and ok_f else 1


if __name__ == "__main__":
    raise SystemExit(main())
