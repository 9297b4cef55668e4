"""`tankbook analyse`: the offline estimate from upload files, end to end (a subprocess)."""

import json
import subprocess
import sys
from pathlib import Path

import pytest

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "analyse"


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


# ── the forecast's inputs (tests/fixtures/analyse/make_fixtures.py writes them) ──


def test_analyse_reads_the_plan_tests_and_planned_wells():
    """The files reach the engine in its units: 20 MMscf/d = 20,000 Mscf/d; dates as days since
    1970-01-01 (Python's datetime); the well test's three rates as written."""
    import datetime as dt

    from server.services.ingest.offline import load_offline_field

    loaded = load_offline_field(
        fields=FIXTURES / "fields.csv",
        fluids=FIXTURES / "fluids.csv",
        surveys=FIXTURES / "surveys.csv",
        production=FIXTURES / "production.csv",
        wells=FIXTURES / "wells.csv",
        field_name="Ashcombe",
        well_tests=FIXTURES / "well_tests.csv",
        plan=FIXTURES / "field_plans.csv",
        planned_wells=FIXTURES / "planned_wells.csv",
        today=dt.date(2026, 12, 1),
    )
    plan = loaded.inputs.plan
    assert plan.plateau_rate_mscf_per_day == pytest.approx(20000.0)
    assert plan.compression_start_t_days == (dt.date(2030, 1, 1) - dt.date(1970, 1, 1)).days
    assert plan.licence_end_t_days == (dt.date(2045, 12, 31) - dt.date(1970, 1, 1)).days
    assert [(w.name, w.n) for w in plan.planned_wells] == [("A-3", 0.8)]
    assert [round(t.rate_mscf_per_day, 2) for t in loaded.inputs.well_tests] == [9418.62, 17463.63, 24748.64]
    ((name, gas),) = loaded.inputs.production_by_well
    assert name == "A-1" and gas.sum() == pytest.approx(loaded.inputs.production_gas_mscf.sum())


def test_analyse_without_a_plan_says_how_to_get_a_forecast():
    code, out = run(*files(), "--field", "ashcombe")
    assert code == 0 and out["forecast"] is None
    assert "--plan" in out["forecast_message"]


def test_analyse_refuses_an_impossible_plan_with_its_row_and_column(tmp_path):
    bad = tmp_path / "plan.csv"
    bad.write_text("field,compression_date\nAshcombe,2030-01-01\n")
    code, out = run(*files(), "--field", "ashcombe", "--plan", str(bad))
    assert code == 2 and out["status"] == "invalid_input"
    (problem,) = out["files"][f"{bad} (checks)"]["problems"]
    assert (problem["row"], problem["column"]) == (2, "compression_min_flowing_pressure")
    assert "compression needs both" in problem["message"]
    code, out = run(*files(), "--field", "ashcombe", "--planned-wells", str(FIXTURES / "planned_wells.csv"))
    assert code == 2 and "--plan" in out["message"]


def test_analyse_takes_volumetrics_and_a_wellstream_gravity(tmp_path):
    # Issue 12, points 7 and 8 through the command itself: the fluid given by its well-stream
    # gravity alone (the fixture's gas is dry, so the same 0.65), and a volumetrics file whose
    # newest estimate (130-180 Bscf) lies wholly above the forward model's 100 Bscf.
    fluids = tmp_path / "fluids.csv"
    fluids.write_text("field,wellstream_gravity\nAshcombe,0.65\n")
    vol = tmp_path / "volumetrics.csv"
    vol.write_text(
        "field,estimate_date,giip_low_bscf,giip_best_bscf,giip_high_bscf\n"
        "Ashcombe,2009-06-30,90,100,115\nAshcombe,2015-06-30,130,150,180\n"
    )
    code, out = run(*files(fluids=str(fluids)), "--volumetrics", str(vol), "--field", "Ashcombe")
    assert code == 0, out
    a = out["analysis"]
    assert a["giip_best_bscf"] == pytest.approx(100.0, rel=1e-4)  # the forward model's tank
    assert a["prepared"]["fluid"]["gas_gravity"] == 0.65
    assert "z uses the well-stream gravity 0.6500 as given" in a["prepared"]["corrections"]
    (flag,) = [f for f in a["flags"] if f["code"] == "dynamic_below_volumetric"]
    assert flag["severity"] == "alert" and "130" in flag["reason"]
