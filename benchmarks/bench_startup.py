"""Benchmark: `tankbook analyse` of one field, a whole process from start to JSON.

Target (issue 17): under 1.5 s median wall time. Rows, each the median of ``--repeats``
fresh processes run in turn (so machine load falls on every row alike):

* baseline: an interpreter that imports numpy and the scipy parts the engine needs
  (``scipy.optimize``, ``scipy.interpolate``, ``scipy.linalg``, ``scipy.special``), the
  floor of any process that fits a model;
* ``tankbook analyse`` on the fixture field of tests/fixtures/analyse (7 years, 3 wells);
* the same without bytecode files, as every process ran before issue 17 (the Dockerfile
  set PYTHONDONTWRITEBYTECODE and nothing compiled at install): PYTHONPYCACHEPREFIX points
  at an empty directory that PYTHONDONTWRITEBYTECODE keeps empty, so every module is
  compiled from source.

Run: .venv/bin/python benchmarks/bench_startup.py [--repeats 7]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
FIXTURES = ROOT / "tests" / "fixtures" / "analyse"
TARGET_S = 1.5
BASELINE = "import numpy, scipy.optimize, scipy.interpolate, scipy.linalg, scipy.special"


def analyse_command() -> list[str]:
    cmd = [sys.executable, "-m", "server.cli", "analyse", "--field", "ashcombe"]
    for kind in ("fields", "fluids", "surveys", "production", "wells"):
        cmd += [f"--{kind}", str(FIXTURES / f"{kind}.csv")]
    return cmd


def wall(cmd: list[str], env: dict) -> float:
    t0 = time.perf_counter()
    subprocess.run(cmd, cwd=ROOT, env=env, stdout=subprocess.DEVNULL, check=True)  # noqa: S603 - this interpreter
    return time.perf_counter() - t0


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=7)
    args = ap.parse_args()
    env = dict(os.environ)
    with tempfile.TemporaryDirectory(prefix="tb_nopyc_") as empty:
        cold = env | {"PYTHONPYCACHEPREFIX": empty, "PYTHONDONTWRITEBYTECODE": "1"}
        rows = {
            "baseline (numpy + scipy parts)": ([sys.executable, "-c", BASELINE], env),
            "tankbook analyse": (analyse_command(), env),
            "analyse, no bytecode files": (analyse_command(), cold),
        }
        times = {name: [] for name in rows}
        for cmd, e in rows.values():  # warm the file cache once
            wall(cmd, e)
        for _ in range(args.repeats):
            for name, (cmd, e) in rows.items():
                times[name].append(wall(cmd, e))
    base = statistics.median(times["baseline (numpy + scipy parts)"])
    print(f"`tankbook analyse` of one field, median of {args.repeats} processes")
    print(f"{'row':34s} {'median s':>9s} {'ratio':>7s}")
    for name, ts in times.items():
        m = statistics.median(ts)
        print(f"{name:34s} {m:9.3f} {m / base:7.2f}")
    analyse = statistics.median(times["tankbook analyse"])
    verdict = "met" if analyse < TARGET_S else "NOT met"
    print(f"analyse median {analyse:.2f} s against the target {TARGET_S} s: {verdict}")
    return 0 if analyse < TARGET_S else 1


if __name__ == "__main__":
    raise SystemExit(main())
