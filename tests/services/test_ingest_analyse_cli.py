"""`tankbook analyse`: the offline estimate from upload files, end to end (a subprocess)."""

import json
import subprocess
import sys
from pathlib import Path

import pytest

FIXTURES = Path(__file__).resolve().parents[1] / "fixtures" / "analyse"


def run(*args):
    cmd = [sys.executable, "-m", "server.cli", "analyse", *args]
    done = subprocess.run(cmd, capture_output=True, text=True, timeout=120, check=False)
    return done.returncode, json.loads(done.stdout)


def files(**over):
    paths = {
        name: str(FIXTURES / f"{name}.csv") for name in ("fields", "fluids", "surveys", "production", "wells")
    }
    paths.update(over)
    out = []
    for k, v in paths.items():
        if v is not None:
            out += [f"--{k.replace('_', '-')}", v]
    return out


def test_analyse_recovers_the_forward_models_giip():
    code, out = run(*files(), "--field", "ashcombe")
    assert code == 0, out
    assert out["field"] == "Ashcombe" and out["status"] == "ok"
    a = out["analysis"]
    # Truth: the forward tank simulator's 100 Bscf volumetric tank (make_fixtures.py); the
    # files carry pressures to 0.01 psi, so the straight line recovers it to about 1e-5.
    assert a["giip_best_bscf"] == pytest.approx(100.0, rel=1e-4)
    # 84 months at 20,000 Mscf/d x 30.4375 d, written in MMscf to 4 decimals (exact here)
    assert out["summary"]["cumulative_gas_bscf"] == pytest.approx(84 * 20000 * 30.4375 / 1e6, rel=1e-12)
    assert out["summary"]["giip_best_bscf"] == a["giip_best_bscf"]
    points = a["prepared"]["points"]
    assert len(points) == 14 and {p["well"] for p in points} == {"A-1"}
    # gauge pressures came in psig with decimal commas: the first survey is 4939,62 psig
    assert points[0]["p_gauge_psia"] == pytest.approx(4939.62 + 14.696, abs=1e-9)
    readings = out["files"][str(FIXTURES / "surveys.csv")]
    assert "semicolon-separated" in readings["notes"][0]
    assert "caution" in out and "qualified reservoir engineers" in out["caution"]


def test_analyse_needs_a_field_when_files_hold_several():
    code, out = run(*files())
    assert code == 2 and "several fields (Ashcombe, Brackley)" in out["message"]


def test_analyse_reports_bad_files_with_rows(tmp_path):
    bad = tmp_path / "surveys.csv"
    bad.write_text("field,well,survey_date,pressure_psia\nAshcombe,A-1,2011-02-30,4000\n")
    code, out = run(*files(surveys=str(bad)), "--field", "Ashcombe")
    assert code == 2
    problem = out["files"][str(bad)]["problems"][0]
    assert (problem["row"], problem["column"], problem["message"]) == (
        2,
        "survey_date",
        "is not a real calendar date",
    )
    stray = tmp_path / "stray.csv"
    stray.write_text("field,well,survey_date,pressure_psia\nAshcombe,Z-9,2011-02-01,4000\n")
    code, out = run(*files(surveys=str(stray)), "--field", "Ashcombe")
    assert code == 2 and "wells file does not list" in out["message"]


def test_analyse_refuses_with_too_few_surveys(tmp_path):
    one = tmp_path / "surveys.csv"
    one.write_text("field,well,survey_date,pressure_psia\nAshcombe,A-1,2011-02-01,4000\n")
    code, out = run(*files(surveys=str(one)), "--field", "Ashcombe")
    assert code == 3 and out["status"] == "refused" and out["analysis"]["message"]


def test_analyse_prints_the_diagnosis_models_comparison_and_flags(tmp_path):
    # The demo's Gorsewick (two compartments across a leaky fault, the late well GRW-3 near
    # initial pressure), written as upload files: the JSON carries every model, the ranked
    # comparison with its statement, the Cole plot and the flags with their reasons.
    from server.services.demo import PORTFOLIO, build_field_history

    i, spec = next((i, s) for i, s in enumerate(PORTFOLIO) if s.name == "Gorsewick")
    hist = build_field_history(spec, seed=1000 + i)
    (tmp_path / "fields.csv").write_text(
        "field,asset,datum_depth_ft,reservoir_temperature_degF,initial_pressure_psia,abandonment_pressure_psia\n"
        f"Gorsewick,South,{spec.datum_ft},{spec.t_degF},{spec.pi_psia},{spec.abandonment_psia}\n"
    )
    (tmp_path / "fluids.csv").write_text(f"field,gas_gravity\nGorsewick,{spec.gravity}\n")
    (tmp_path / "wells.csv").write_text(
        "field,well,compartment,gauge_reference_depth_ft\n"
        + "".join(f"Gorsewick,{w.name},{w.compartment or ''},{spec.datum_ft}\n" for w in spec.wells)
    )
    (tmp_path / "surveys.csv").write_text(
        "field,well,survey_date,pressure_psia,gauge_depth_ft,kind,quality\n"
        + "".join(f"Gorsewick,{w},{d.isoformat()},{p},{g},{k},{q}\n" for w, d, p, g, k, q in hist["surveys"])
    )
    (tmp_path / "production.csv").write_text(
        "field,well,month,gas_mscf,condensate_stb,water_stb\n"
        + "".join(
            f"Gorsewick,{w},{m:%Y-%m},{g:.1f},{c:.1f},{wat:.1f}\n" for w, m, g, c, wat in hist["production"]
        )
    )
    paths = {n: str(tmp_path / f"{n}.csv") for n in ("fields", "fluids", "surveys", "production", "wells")}
    code, out = run(*files(**paths))
    assert code == 0, out
    a = out["analysis"]
    d = a["diagnosis"]
    assert {m["name"] for m in d["models"]} == {
        "single_tank", "tank_ce", "two_tank", "aquifer_pot", "aquifer_fetkovich", "aquifer_veh_radial",
    }  # fmt: skip
    cmp = d["comparison"]
    assert cmp["preferred"] == "two_tank" and cmp["rows"][0]["name"] == "two_tank"
    assert cmp["statement"].startswith("Best fit: Two tanks")
    assert {"aicc", "delta_aicc", "support", "giip_low_bscf", "runs"} <= set(cmp["rows"][0])
    assert d["cole_plots"]
    codes = {f["code"]: f for f in a["flags"]}
    assert set(codes) == {"compartment_signature"} and "GRW-3" in codes["compartment_signature"]["reason"]
    assert codes["compartment_signature"]["numbers"]
