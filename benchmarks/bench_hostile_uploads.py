"""Benchmark: peak memory and time of reading hostile upload files (issue 18, point 6),
against a legitimate upload of 100,000 production rows read in the same run.

Each file is read in a fresh child process (its peak resident memory, VmHWM, reset just before
the read, is its own): the bytes go through ``read_table`` and ``parse_table`` as an upload's check does (the
database is not needed: none of these files gets as far as matching names). Reported per file:
wall time, peak memory above the child's starting memory, the outcome (rows read, or the
refusal), and the ratios of time and memory to the baseline file.

Files (all generated here, nothing is downloaded):
  baseline       a 100,000-row production workbook (XLSX, four columns), what a team uploads
  far_cell       a 4.7 KB sheet: a header and one cell at row 1,000,000
  million_rows   a ~70 KB sheet of a million one-cell rows
  shared_strings ~95 MiB of shared strings (4.5 million unique strings) in a ~10 MB file
  csv_rows       a CSV of a million one-cell rows (the same attack without a workbook)

    .venv/bin/python -m benchmarks.bench_hostile_uploads [--only NAME ...] [--keep DIR]
Target: no hostile file costs more than 5 times the baseline's time or 4 times its peak memory.
The upload budget (1,000,000 rows, 3,000,000 cells by default) is 7.5 times the baseline's cells,
so a legitimate file at the budget may cost that much; before issue 18 the same files took up to
13 times the baseline's memory and ran unbounded.
"""

from __future__ import annotations

import argparse
import datetime as dt
import io
import json
import subprocess
import sys
import tempfile
import time
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
TARGET_TIME_RATIO = 5.0
TARGET_MEMORY_RATIO = 4.0
NS = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"'
HEADER = ("field", "well", "month", "gas_mscf")


def _package(sheet: bytes, shared: bytes | None = None) -> bytes:
    """A minimal but complete XLSX package around one sheet part (and its shared strings)."""
    rels = (
        '<?xml version="1.0" encoding="UTF-8"?><Relationships '
        'xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
        '<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/'
        'relationships/worksheet" Target="worksheets/sheet1.xml"/>'
    )
    if shared is not None:
        rels += (
            '<Relationship Id="rId2" Type="http://schemas.openxmlformats.org/officeDocument/2006/'
            'relationships/sharedStrings" Target="sharedStrings.xml"/>'
        )
    rels += "</Relationships>"
    types = (
        '<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/'
        'package/2006/content-types"><Default Extension="rels" ContentType="application/'
        'vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" '
        'ContentType="application/xml"/><Override PartName="/xl/workbook.xml" ContentType="'
        'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
        '<Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/'
        'vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
        + (
            '<Override PartName="/xl/sharedStrings.xml" ContentType="application/'
            'vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/>'
            if shared is not None
            else ""
        )
        + "</Types>"
    )
    root_rels = (
        '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/'
        'package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/'
        'officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/></Relationships>'
    )
    workbook = (
        f'<?xml version="1.0" encoding="UTF-8"?><workbook {NS} xmlns:r="http://schemas.openxmlformats.org/'
        'officeDocument/2006/relationships"><sheets><sheet name="Data" sheetId="1" r:id="rId1"/>'
        "</sheets></workbook>"
    )
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED, compresslevel=9) as z:
        z.writestr("[Content_Types].xml", types)
        z.writestr("_rels/.rels", root_rels)
        z.writestr("xl/workbook.xml", workbook)
        z.writestr("xl/_rels/workbook.xml.rels", rels)
        z.writestr("xl/worksheets/sheet1.xml", sheet)
        if shared is not None:
            z.writestr("xl/sharedStrings.xml", shared)
    return out.getvalue()


def _header_row() -> str:
    cells = "".join(
        f'<c r="{col}1" t="inlineStr"><is><t>{h}</t></is></c>' for col, h in zip("ABCD", HEADER, strict=True)
    )
    return f'<row r="1">{cells}</row>'


def _sheet(rows: str, dimension: str) -> bytes:
    return (
        f'<?xml version="1.0" encoding="UTF-8"?><worksheet {NS}><dimension ref="{dimension}"/>'
        f"<sheetData>{_header_row()}{rows}</sheetData></worksheet>"
    ).encode()


def baseline() -> bytes:
    """100,000 production rows: 1,000 wells of 20 fields, 100 months each (strings inline)."""
    parts = []
    r = 2
    for w in range(1000):
        for k in range(100):
            month = dt.date(2010 + k // 12, k % 12 + 1, 1).isoformat()[:7]
            parts.append(
                f'<row r="{r}"><c r="A{r}" t="inlineStr"><is><t>Field {w // 50:03d}</t></is></c>'
                f'<c r="B{r}" t="inlineStr"><is><t>W-{w:04d}</t></is></c>'
                f'<c r="C{r}" t="inlineStr"><is><t>{month}</t></is></c>'
                f'<c r="D{r}"><v>{10000 + w + k * 0.25}</v></c></row>'
            )
            r += 1
    return _package(_sheet("".join(parts), f"A1:D{r - 1}"))


def far_cell() -> bytes:
    return _package(_sheet('<row r="1000000"><c r="A1000000"><v>1</v></c></row>', "A1:D1000000"))


def million_rows() -> bytes:
    rows = "".join(f'<row r="{r}"><c r="A{r}"><v>1</v></c></row>' for r in range(2, 1_000_002))
    return _package(_sheet(rows, "A1:D1000001"))


def shared_strings() -> bytes:
    """About 95 MiB of shared strings (4.5 million short unique strings), used by one cell; the
    table does not declare its size, so a reader must count as it goes."""
    n = 4_500_000
    body = "".join(f"<si><t>{i}</t></si>" for i in range(n))
    sst = f'<?xml version="1.0" encoding="UTF-8"?><sst {NS}>{body}</sst>'
    sheet = _sheet('<row r="2"><c r="A2" t="s"><v>0</v></c></row>', "A1:D2")
    return _package(sheet, sst.encode())


def csv_rows() -> bytes:
    return (",".join(HEADER) + "\n" + "1\n" * 1_000_000).encode()


FILES = {
    "baseline": (baseline, "production"),
    "far_cell": (far_cell, "production"),
    "million_rows": (million_rows, "production"),
    "shared_strings": (shared_strings, "production"),
    "csv_rows": (csv_rows, "production"),
}


def _status_kib(key: str) -> int:
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith(key + ":"):
            return int(line.split()[1])
    raise RuntimeError(f"{key} not in /proc/self/status")


def child(path: str, kind: str) -> None:
    """Read one file as an upload's check does; print time, peak memory and outcome as JSON."""
    sys.path.insert(0, str(ROOT))
    from server.services.ingest.files.tabular import TableError, read_table
    from server.services.ingest.kinds import file_kind
    from server.services.ingest.parse import ReadOptions, parse_table
    from server.services.ingest.report import ValidationReport

    data = Path(path).read_bytes()
    Path("/proc/self/clear_refs").write_text("5")  # Linux: reset the peak (VmHWM) to the current size
    start_kib = _status_kib("VmRSS")
    t0 = time.perf_counter()
    report = ValidationReport(kind)
    try:
        table = read_table(data, filename=Path(path).name)
        parse_table(file_kind(kind), table, ReadOptions(), report, today=dt.date(2026, 12, 1))
        problems = report.errors
        outcome = f"{report.rows_total:,} rows, {report.error_count:,} errors"
        if problems and problems[0].row is None:
            outcome += f": {problems[0].message[:90]}"
    except TableError as exc:
        outcome = f"refused: {str(exc)[:100]}"
    seconds = time.perf_counter() - t0
    peak_kib = _status_kib("VmHWM")
    print(json.dumps({"seconds": seconds, "peak_mib": (peak_kib - start_kib) / 1024, "outcome": outcome}))


def run_all(folder: Path, only) -> tuple[dict, list[str]]:
    """Generate each file in ``folder`` and read it in a child process; print a line each."""
    names = ["baseline", *[n for n in FILES if n != "baseline" and (not only or n in only)]]
    results = {}
    for name in names:
        make, kind = FILES[name]
        path = folder / (name + (".csv" if name.startswith("csv") else ".xlsx"))
        data = make()
        path.write_bytes(data)
        proc = subprocess.run(  # noqa: S603 - this interpreter and this script
            [sys.executable, "-m", "benchmarks.bench_hostile_uploads", "--child", str(path), kind],
            cwd=ROOT,
            capture_output=True,
            text=True,
            check=False,
        )
        if proc.returncode != 0:
            results[name] = {"seconds": float("nan"), "peak_mib": float("nan"), "outcome": proc.stderr[-300:]}
        else:
            results[name] = json.loads(proc.stdout.strip().splitlines()[-1])
        results[name]["size_kib"] = len(data) / 1024
        r = results[name]
        size, secs, peak = r["size_kib"], r["seconds"], r["peak_mib"]
        print(f"{name:15s} {size:9,.1f} KiB {secs:8.2f} s {peak:8.1f} MiB  {r['outcome']}")
    return results, names


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--only", nargs="*", choices=sorted(FILES), help="files to run (baseline always runs)")
    ap.add_argument("--keep", type=Path, help="write the generated files to this folder")
    ap.add_argument("--child", nargs=2, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child:
        child(*args.child)
        return 0
    if args.keep:
        args.keep.mkdir(parents=True, exist_ok=True)
        results, names = run_all(args.keep, args.only)
    else:  # generated files are removed afterwards
        with tempfile.TemporaryDirectory(prefix="tankbook-hostile-bench-") as tmp:
            results, names = run_all(Path(tmp), args.only)
    base = results["baseline"]
    missed = []
    print("\nratios to the baseline (time, memory):")
    for name in names[1:]:
        r = results[name]
        rt, rm = r["seconds"] / base["seconds"], r["peak_mib"] / max(base["peak_mib"], 1.0)
        print(f"  {name:15s} ×{rt:5.2f} time  ×{rm:5.2f} memory")
        if not (rt <= TARGET_TIME_RATIO and rm <= TARGET_MEMORY_RATIO):
            missed.append(name)
    if missed:
        print(f"target (×{TARGET_TIME_RATIO} time, ×{TARGET_MEMORY_RATIO} memory) missed: {missed}")
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
