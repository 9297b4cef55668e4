"""Benchmark: forecasts of a 200-field portfolio on two cores, against the analysis of the same fields.

Target (issue 13): the forecast adds less than the analysis costs. The portfolio is the
demo's twelve field stories varied in size, rate and noise (``bench_portfolio.variants``),
built without a database (``tests/engine/cases.demo_field_inputs``). Each field gets a plan
(its plateau, 95 % uptime, an economic limit of 3 % of the plateau, compression on every
third field, a planned well on every fifth, a licence end on every seventh). Two worker
processes share the fields; each times, per field, ``analyse_field`` without a plan (the
baseline: prepare, p/z estimate, diagnosis of every model, headline basis) and then the
forecast from that analysis (``analysis.with_forecast``: deliverability, the basis model's
stepper and the low/best/high profiles). The report gives both totals (elapsed and processor
time of the worker, which a shared machine disturbs less), their ratio, the wall time, the
months stepped and the stop reasons.

Run: .venv/bin/python -m benchmarks.bench_forecast [--fields 200] [--workers 2]
"""

from __future__ import annotations

import argparse
import dataclasses
import time
from collections import Counter
from concurrent.futures import ProcessPoolExecutor

from benchmarks.bench_portfolio import variants
from server.engine.analysis import analyse_field, screened_data, with_forecast
from server.engine.plan import FieldPlan, PlannedWell
from tests.engine.cases import demo_field_inputs


def _plan(i: int, spec, t_last: float) -> FieldPlan:
    plateau = spec.plateau_mmscf_d * 1e3
    return FieldPlan(
        plateau_rate_mscf_per_day=plateau,
        uptime_frac=0.95,
        economic_limit_mscf_per_day=0.03 * plateau,
        compression_start_t_days=t_last + 3 * 365.25 if i % 3 == 0 else None,
        compression_min_flowing_bhp_psia=0.5 * spec.abandonment_psia if i % 3 == 0 else None,
        planned_wells=(PlannedWell("P-1", t_last + 365.25, None, 0.01, 0.8),) if i % 5 == 0 else (),
        licence_end_t_days=t_last + 8 * 365.25 if i % 7 == 0 else None,
    )


def _share(items):
    out = []
    for i, spec in items:
        inputs = demo_field_inputs(spec.name, spec=spec, seed=5000 + i)
        t0, c0 = time.perf_counter(), time.process_time()
        a = analyse_field(inputs)
        t1, c1 = time.perf_counter(), time.process_time()
        months, reasons = 0, []
        if a.basis is not None:
            planned = dataclasses.replace(
                inputs, plan=_plan(i, spec, float(inputs.production_end_t_days[-1]))
            )
            screened = screened_data(a.prepared, a.pz) if a.pz is not None else a.prepared
            f = with_forecast(planned, screened, a, a.diagnosis, a.basis).forecast
            if f is not None:
                months = sum(p.gas_bscf.size for p in f.profiles)
                reasons = [p.stop_reason for p in f.profiles]
        t2, c2 = time.perf_counter(), time.process_time()
        out.append((t1 - t0, t2 - t1, months, reasons, a.basis is not None, c1 - c0, c2 - c1))
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--fields", type=int, default=200)
    ap.add_argument("--workers", type=int, default=2)
    args = ap.parse_args()
    specs = list(enumerate(variants(args.fields)))
    shares = [specs[k :: args.workers] for k in range(args.workers)]
    t0 = time.perf_counter()
    with ProcessPoolExecutor(args.workers) as pool:
        rows = [r for part in pool.map(_share, shares) for r in part]
    wall = time.perf_counter() - t0
    analysis = sum(r[0] for r in rows)
    forecast = sum(r[1] for r in rows)
    months = sum(r[2] for r in rows)
    reasons = Counter(x for r in rows for x in r[3])
    with_basis = sum(r[4] for r in rows)
    print(f"fields: {len(rows)} ({with_basis} with a basis) on {args.workers} workers; wall {wall:.1f} s")
    n = len(rows)
    print(
        f"analysis (baseline): {analysis:8.2f} s summed in the workers, {1e3 * analysis / n:6.1f} ms a field"
    )
    print(
        f"forecast:            {forecast:8.2f} s summed in the workers, {1e3 * forecast / n:6.1f} ms a field"
    )
    cpu_a, cpu_f = sum(r[5] for r in rows), sum(r[6] for r in rows)
    print(f"processor time:      analysis {cpu_a:8.2f} s, forecast {cpu_f:8.2f} s summed in the workers")
    print(f"forecast / analysis: {forecast / analysis:.2f}   ({months} months stepped over all cases)")
    print("stop reasons:", dict(reasons))
    ok = forecast < analysis
    print(f"target (forecast adds less than the analysis costs): {'met' if ok else 'MISSED'}")
    raise SystemExit(0 if ok else 1)


if __name__ == "__main__":
    main()
