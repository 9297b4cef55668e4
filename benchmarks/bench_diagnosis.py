"""Benchmark: full diagnosis of one field with 20 years of monthly production and 40 surveys.

Target (issue 17): under 0.1 s median on the 2-core machine (issue 4: 0.5 s). Three fields are timed (a
volumetric tank, a tank with a hidden neighbour, an aquifer-supported tank), each made
by the forward simulator (tests/engine/twenty_year.py builds them, for the tests as well).
"Full" is what a recompute runs: ``analyse_field`` (prepare,
the p/z estimate with its bootstrap, every model, the comparison and the flags). The
baseline, measured in the same run, is the stage every analysis pays anyway: preparing
the p/z points and fitting the single-tank line; the ratio says what the rest adds.

Run: .venv/bin/python benchmarks/bench_diagnosis.py [--repeats 15] [--compiled]
"""

from __future__ import annotations

import argparse
import statistics
import time

from server.engine.analysis import analyse_field
from server.engine.prepare.points import prepare
from server.engine.tank.pz_estimate import fit_pz_line
from tests.engine.twenty_year import CASES, twenty_year_field

TARGET_S = 0.1  # issue 17 (issue 4 asked for 0.5 s)
#: The cases' names as this script has always printed them.
LABELS = {"aquifer": "aquifer (Fetkovich)"}


def timed(fn, repeats: int, clock=time.perf_counter) -> list[float]:
    out = []
    for _ in range(repeats):
        t0 = clock()
        fn()
        out.append(clock() - t0)
    return out


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=15)
    ap.add_argument(
        "--compiled", action="store_true", help="with the engine's compiled kernels, as a worker runs it"
    )
    args = ap.parse_args()
    if args.compiled:
        from server.engine.warm import warm

        warm()  # switches the compiled kernels on and loads them before the clock starts
    print(f"diagnosis of a field with 240 months and 40 surveys, median of {args.repeats} runs")
    print(f"{'case':22s} {'baseline s':>11s} {'full s':>12s} {'ratio':>7s} {'full cpu s':>11s}  models")
    medians = []
    for case in CASES:
        name, inputs = LABELS.get(case, case), twenty_year_field(case)

        def baseline(inputs=inputs):
            _, gp, pz, w = prepare(inputs).arrays()
            fit_pz_line(gp, pz, w)

        def full(inputs=inputs):
            analyse_field(inputs)

        full()  # warm caches (imports, the potential table's code path)
        base = statistics.median(timed(baseline, args.repeats))
        diag = statistics.median(timed(full, args.repeats))
        # Processor time of this process: less disturbed than wall time on a shared machine.
        cpu = statistics.median(timed(full, args.repeats, time.process_time))
        d = analyse_field(inputs).diagnosis
        medians.append(diag)
        models = ", ".join(f.name for f in d.models) + (f"; skipped {len(d.skipped)}" if d.skipped else "")
        print(f"{name:22s} {base:11.4f} {diag:12.4f} {diag / base:7.1f} {cpu:11.4f}  {models}")
    worst = max(medians)
    verdict = "met" if worst < TARGET_S else "NOT met"
    print(f"worst median {worst:.3f} s against the target {TARGET_S} s: {verdict}")
    return 0 if worst < TARGET_S else 1


if __name__ == "__main__":
    raise SystemExit(main())
