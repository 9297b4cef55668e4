"""Benchmark: the reserves report of a 200-field review, as PDF (and as a workbook).

Issue 15 asked that a 200-field review renders its PDF within a benchmark budget. Baselines,
measured in the same run on the same review: (a) the same report limited to one field (an
asset holding a single field: cover, summary, reconciliation, one field page, appendix) and
(b) building the report's read model and HTML without the PDF step (about what the review's
page costs). The report gives medians and the ratios; the target is linear growth, i.e. the
200-field PDF costs no more than about 200 x the one-field PDF's marginal cost.

Each field gets an estimate with 12 p/z points, a straight line and a forecast summary (so
every field page draws its p/z chart and its case chart), and 24 months of production;
last year's review is approved, this year's is a draft (the DRAFT mark on every page).

Run: .venv/bin/python -m benchmarks.bench_report [--fields 200] [--repeat 3] [--postgresql] [--save x.pdf]
"""

from __future__ import annotations

import argparse
import datetime as dt
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from benchmarks.bench_portfolio import _temporary_database  # noqa: E402
from server.db.migrate import upgrade  # noqa: E402
from server.db.models import Estimate, ProductionMonth, User  # noqa: E402
from server.db.session import Database  # noqa: E402
from server.services.audit import Actor  # noqa: E402
from server.services.reserves import views, workflow  # noqa: E402
from server.services.reserves_report import content, pdf, workbook  # noqa: E402
from tests.factories import make_field  # noqa: E402


def _estimate(session, field, i: int) -> None:
    giip, pzi = 50.0 + i % 40, 5000.0
    points = [
        {"index": k, "gp_bscf": g, "pz_psia": pzi * (1 - g / giip), "t_days": 16000 + 180 * k}
        for k, g in enumerate(giip * 0.04 * k for k in range(12))
    ]
    eur = (0.6 * giip, 0.7 * giip, 0.8 * giip)
    detail = {
        "basis": {
            "model": "single_tank",
            "title": "Single tank",
            "source": "automatic",
            "giip_bscf": giip,
            "giip_low_bscf": 0.9 * giip,
            "giip_high_bscf": 1.1 * giip,
            "eur_low_bscf": eur[0],
            "eur_bscf": eur[1],
            "eur_high_bscf": eur[2],
        },
        "prepared": {"points": points},
        "pz": {
            "intercept_psia": pzi,
            "giip_bscf": giip,
            "points": [{"index": k, "status": "used"} for k in range(12)],
        },
        "forecast": {
            "basis_model": "single_tank",
            "profiles": [
                {
                    "case": c,
                    "eur_bscf": v,
                    "remaining_bscf": v - 5,
                    "stop_reason": "economic limit",
                    "end_t_days": 3e4,
                }
                for c, v in zip(("low", "best", "high"), eur, strict=True)
            ],
        },
    }
    session.add(
        Estimate(
            field_id=field.id, method="headline", status="ok", message="", flags=[], detail=detail,
            inputs_fingerprint=f"bench-{i}", engine_version="bench", cumulative_gas_bscf=0.0,
        )
    )  # fmt: skip
    well = field.wells[0]
    for m in range(24):
        session.add(ProductionMonth(well=well, month=dt.date(2023 + m // 12, m % 12 + 1, 1), gas_mscf=4e4))


def build(db: Database, n_fields: int):
    with db.session() as s:
        users = []
        for name, role in (("bench-eng", "engineer"), ("bench-appr", "approver")):
            u = User(username=name, display_name=name, role=role, is_active=True, failed_logins=0,
                     password_hash="x", all_assets=True)  # noqa: S106  # fmt: skip
            s.add(u)
            s.flush()
            users.append(Actor(u.id, name))
        for i in range(n_fields):
            asset = "Solo" if i == 0 else f"Asset {1 + i % 6}"
            _estimate(s, make_field(s, name=f"Bench field {i:03d}", asset=asset), i)
        s.flush()
        last = workflow.create_review(s, users[0], "Year-end 2023", dt.date(2023, 12, 31))
        workflow.submit(s, users[0], last)
        workflow.approve(s, users[1], last, "bench")
        review = workflow.create_review(s, users[0], "Year-end 2024", dt.date(2024, 12, 31))
        solo = next(f.asset_id for f in views.review_detail(s, review).fields if f.asset_name == "Solo")
        s.commit()
        return review.id, solo


def _time(fn, repeat: int) -> tuple[float, object]:
    times, out = [], None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times), out


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--fields", type=int, default=200)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--postgresql", action="store_true")
    ap.add_argument("--save", help="write the full PDF here (to look at it)")
    args = ap.parse_args()
    url, drop = _temporary_database(sqlite=not args.postgresql)
    try:
        upgrade(url)
        db = Database(url)
        t = time.perf_counter()
        rid, solo = build(db, args.fields)
        print(f"built {args.fields} fields and two reviews in {time.perf_counter() - t:.1f} s")
        with db.session() as s:
            review = workflow.get_review(s, rid)
            pdf.report_pdf(content.build_report(s, review, {solo}))  # warm up: fonts, templates
            one, one_pdf = _time(lambda: pdf.report_pdf(content.build_report(s, review, {solo})), args.repeat)
            html, _ = _time(lambda: pdf.report_html(content.build_report(s, review)), args.repeat)
            full, full_pdf = _time(lambda: pdf.report_pdf(content.build_report(s, review)), args.repeat)
            xlsx, _ = _time(lambda: workbook.report_xlsx(content.build_report(s, review)), args.repeat)
        import io  # noqa: PLC0415

        import pypdf  # noqa: PLC0415

        if args.save:
            Path(args.save).write_bytes(full_pdf)
        pages = len(pypdf.PdfReader(io.BytesIO(full_pdf)).pages)
        print(f"one-field PDF (baseline a): {one * 1e3:8.0f} ms, {len(one_pdf) / 1e3:.0f} kB")
        print(f"{args.fields}-field read model + HTML (baseline b): {html * 1e3:8.0f} ms")
        print(f"{args.fields}-field PDF: {full:8.2f} s, {pages} pages, {len(full_pdf) / 1e6:.1f} MB")
        print(f"{args.fields}-field workbook: {xlsx * 1e3:8.0f} ms")
        print(f"ratio PDF / one-field PDF: x{full / one:.1f} (fields x{args.fields})")
        print(f"ratio PDF / read model + HTML: x{full / html:.1f}")
        print(f"per field page: {(full - one) / max(args.fields - 1, 1) * 1e3:.0f} ms")
    finally:
        drop()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
