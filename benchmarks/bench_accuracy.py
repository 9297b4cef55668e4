"""Accuracy benchmark: invented fields with known answers through the engine's full analysis.

Issue 12, point 10. Each case of ``benchmarks/accuracy_cases.py`` is built for several seeds
from the project's forward models, analysed as the app analyses a field (``analyse_field``
on ``FieldInputs`` with the volumetric estimate, default choices) and compared with the
truth. One row per field: truth, headline GIIP and its error, the low-high range and
whether it holds the truth, the basis the headline rests on, the flags raised, whether the
expected flags are there and which raised flags are false alarms, and whether the row
meets its target. The headline is ``giip_best_bscf``; once ``FieldAnalysis.basis`` exists
that is the evidence-led basis (``basis.model`` names it) and ``line_giip_best_bscf`` the
straight line, shown beside it.

Run: .venv/bin/python -m benchmarks.bench_accuracy [--seeds N] [--cases a,b] [--json out.json]

It is a benchmark, not a test: the exit status is 0 whatever the result; the last line
says how many rows met their targets.
"""

from __future__ import annotations

import argparse
import json
import math
import statistics
import sys
import time
from dataclasses import dataclass, field

from benchmarks.accuracy_cases import CASE_BY_NAME, CASES, Case, with_systematic_errors
from server.engine.analysis import analyse_field


@dataclass
class Row:
    case: str
    seed: int
    truth_bscf: float
    total_bscf: float
    produced_frac: float
    mechanism: str
    status: str
    headline_bscf: float | None
    line_bscf: float | None
    low_bscf: float | None
    high_bscf: float | None
    basis: str
    flags: list[str]
    target: str
    tolerance_frac: float | None
    error_frac: float | None = None
    total_error_frac: float | None = None  # against every tank (differs from error_frac only when split)
    inside: bool | None = None
    giip_ok: bool = False
    expected_ok: bool = False
    false_flags: list[str] = field(default_factory=list)
    top_model: str = ""  # the diagnosis' best-ranked model (AICc), for comparison with the basis
    top_model_error_frac: float | None = None
    seconds: float = 0.0
    message: str = ""

    @property
    def flags_ok(self) -> bool:
        return self.expected_ok and not self.false_flags

    @property
    def met(self) -> bool:
        return self.giip_ok and self.flags_ok


def basis_name(result) -> str:
    """The model the headline rests on: ``result.basis.model`` when the engine has a basis,
    else the straight line (with its method)."""
    basis = getattr(result, "basis", None)
    model = getattr(basis, "model", None) if basis is not None else None
    if model is not None:
        return str(model)
    if result.status != "ok":
        return "none (refused)"
    return f"line ({result.method})"


def evaluate(case: Case, seed: int, systematic: bool = False) -> Row:
    built = case.build(seed)
    inputs = with_systematic_errors(built.inputs, seed) if systematic else built.inputs
    t0 = time.perf_counter()
    result = analyse_field(inputs)
    seconds = time.perf_counter() - t0
    truth = built.truth
    has_basis = getattr(result, "basis", None) is not None
    line = getattr(result, "line_giip_best_bscf", None) if has_basis else result.giip_best_bscf
    keys = [f.code for f in result.flags]
    row = Row(
        case=case.name,
        seed=seed,
        truth_bscf=truth.giip_bscf,
        total_bscf=truth.total_giip_bscf,
        produced_frac=truth.produced_frac,
        mechanism=truth.mechanism,
        status=result.status,
        headline_bscf=result.giip_best_bscf,
        line_bscf=line,
        low_bscf=result.giip_low_bscf,
        high_bscf=result.giip_high_bscf,
        basis=basis_name(result),
        flags=keys,
        target=case.target,
        tolerance_frac=case.tolerance_frac,
        expected_ok=case.expected_met(keys),
        false_flags=case.false_alarms(keys),
        seconds=seconds,
        message=result.message if result.status != "ok" else "",
    )
    if row.headline_bscf is not None:
        row.error_frac = row.headline_bscf / truth.giip_bscf - 1.0
        row.total_error_frac = row.headline_bscf / truth.total_giip_bscf - 1.0
    cmp = result.diagnosis.comparison if getattr(result, "diagnosis", None) is not None else None
    if cmp is not None and cmp.rows:
        row.top_model = cmp.rows[0].name
        if cmp.rows[0].giip_bscf is not None:
            row.top_model_error_frac = cmp.rows[0].giip_bscf / truth.giip_bscf - 1.0
    if row.low_bscf is not None or row.high_bscf is not None:
        low = row.low_bscf if row.low_bscf is not None else 0.0
        high = row.high_bscf if row.high_bscf is not None else math.inf  # unbounded above
        row.inside = low <= truth.giip_bscf <= high
    if case.target == "error":
        row.giip_ok = row.error_frac is not None and abs(row.error_frac) <= case.tolerance_frac
    else:
        row.giip_ok = bool(row.inside)
    return row


def _f(x, fmt="{:.1f}", none="-"):
    return none if x is None else fmt.format(x)


def _target_text(case: Case) -> str:
    return f"±{100 * case.tolerance_frac:g} %" if case.target == "error" else "truth in range"


def print_table(rows: list[Row], out=sys.stdout) -> None:
    head = (
        f"{'case':22s} {'seed':>4s} {'Gp/G':>5s} {'truth':>7s} {'headline':>8s} {'err %':>7s} "
        f"{'low-high':>15s} {'in':>3s} {'line':>7s} {'basis':22s} {'exp':>3s} {'met':>3s} "
        f"{'top-ranked model, err %':30s} flags [false alarms]"
    )
    print(head, file=out)
    print("-" * len(head), file=out)
    for r in rows:
        rng = f"{_f(r.low_bscf)}-{_f(r.high_bscf, none='inf') if r.low_bscf is not None else '-'}"
        flags = ",".join(r.flags) or "none"
        false = f" [{','.join(r.false_flags)}]" if r.false_flags else ""
        top_err = "" if r.top_model_error_frac is None else f" {100 * r.top_model_error_frac:+.1f}"
        top = f"{r.top_model[:22]}{top_err}" if r.top_model else "-"
        print(
            f"{r.case:22s} {r.seed:4d} {r.produced_frac:5.2f} {r.truth_bscf:7.1f} {_f(r.headline_bscf):>8s} "
            f"{_f(None if r.error_frac is None else 100 * r.error_frac, '{:+.1f}'):>7s} {rng:>15s} "
            f"{'-' if r.inside is None else ('yes' if r.inside else 'no'):>3s} {_f(r.line_bscf):>7s} "
            f"{r.basis[:22]:22s} {'yes' if r.expected_ok else 'no':>3s} {'yes' if r.met else 'no':>3s} "
            f"{top:30s} {flags}{false}",
            file=out,
        )


def print_summary(rows: list[Row], cases: list[Case], out=sys.stdout) -> None:
    print("", file=out)
    print(
        f"{'case':22s} {'target':>15s} {'GIIP ok':>8s} {'flags ok':>8s} {'met':>5s} {'median |err| %':>15s} "
        f"{'truth in range':>14s}",
        file=out,
    )
    for c in cases:
        rs = [r for r in rows if r.case == c.name]
        errs = [abs(r.error_frac) for r in rs if r.error_frac is not None]
        med = statistics.median(errs) if errs else None
        print(
            f"{c.name:22s} {_target_text(c):>15s} {sum(r.giip_ok for r in rs):>5d}/{len(rs):<2d} "
            f"{sum(r.flags_ok for r in rs):>5d}/{len(rs):<2d} {sum(r.met for r in rs):>2d}/{len(rs):<2d} "
            f"{_f(None if med is None else 100 * med):>15s} "
            f"{sum(bool(r.inside) for r in rs):>11d}/{len(rs):<2d}",
            file=out,
        )
    print("", file=out)
    print("false alarms per case: every raised flag except the expected and neutral ones:", file=out)
    for c in cases:
        exp = " and ".join("|".join(g) for g in c.expected) or "none"
        print(f"  {c.name:22s} expected: {exp}; neutral: {', '.join(c.neutral) or 'none'}", file=out)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seeds", type=int, default=5, help="seeds 1..N of each case (default 5)")
    ap.add_argument("--first-seed", type=int, default=1, help="first seed (default 1)")
    ap.add_argument("--cases", default="", help="comma-separated case names (default: all)")
    ap.add_argument("--json", default="", help="also write the rows to this JSON file")
    ap.add_argument(
        "--compiled",
        action="store_true",
        help="with the engine's compiled kernels, as worker processes run it (default: numpy, as "
        "`tankbook analyse`)",
    )
    ap.add_argument(
        "--systematic",
        action="store_true",
        help="add the systematic errors the range claims to cover (metered gas, gauge offset, z "
        "factor, drawn at the team defaults) to every field: a test of the range's coverage",
    )
    args = ap.parse_args(argv)
    if args.compiled:
        from server.engine import accel

        accel.enable()
    names = [n.strip() for n in args.cases.split(",") if n.strip()]
    unknown = [n for n in names if n not in CASE_BY_NAME]
    if unknown:
        print(f"unknown case(s) {unknown}; choose from {[c.name for c in CASES]}", file=sys.stderr)
        return 0
    cases = [CASE_BY_NAME[n] for n in names] if names else list(CASES)
    seeds = range(args.first_seed, args.first_seed + args.seeds)
    t0 = time.perf_counter()
    rows = [evaluate(c, s, args.systematic) for c in cases for s in seeds]
    wall = time.perf_counter() - t0
    print_table(rows)
    print_summary(rows, cases)
    analysis = sum(r.seconds for r in rows)
    print(f"\n{len(rows)} fields in {wall:.1f} s ({analysis:.1f} s in analyse_field)")
    if args.json:
        with open(args.json, "w", encoding="utf-8") as fh:
            json.dump(
                [r.__dict__ | {"met": r.met, "flags_ok": r.flags_ok} for r in rows],
                fh,
                indent=1,
                default=lambda x: None if isinstance(x, float) and not math.isfinite(x) else str(x),
            )
    print(f"met {sum(r.met for r in rows)} of {len(rows)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
