"""`tankbook analyse` starts fast because it imports no database, workbook, chart or
scipy.stats code (issue 17: these imports were 90 % of its 4-5 s). A subprocess, so the
test sees a fresh interpreter's modules; the time itself is measured by
benchmarks/bench_startup.py, never here."""

import json
import subprocess
import sys
from pathlib import Path

HEAVY = ("sqlalchemy", "openpyxl", "plotly", "scipy.stats", "scipy.signal", "fastapi", "server.db")
FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "analyse"

PROBE = """
import contextlib, io, json, sys
from server import cli
with contextlib.redirect_stdout(io.StringIO()):
    code = cli.main(sys.argv[1:])
print(json.dumps({"code": code, "modules": sorted(sys.modules)}))
"""


def test_analyse_imports_no_heavy_module():
    args = []
    for kind in ("fields", "fluids", "surveys", "production", "wells"):
        args += [f"--{kind}", str(FIXTURES / f"{kind}.csv")]
    done = subprocess.run(
        [sys.executable, "-c", PROBE, "analyse", *args, "--field", "ashcombe"],
        capture_output=True,
        text=True,
        timeout=120,
        check=True,
    )
    out = json.loads(done.stdout.strip().splitlines()[-1])
    assert out["code"] == 0
    loaded = [m for m in out["modules"] if any(m == h or m.startswith(h + ".") for h in HEAVY)]
    assert loaded == []
    assert "scipy.optimize" in out["modules"]  # the probe did run the fits
