"""How the accuracy benchmark scores a row: the targets and flag rules of issue 12, point 10
(headline within the case's tolerance, or the truth inside the range when depletion is
small; the expected flags present and no false one), on stand-in analysis results."""

from __future__ import annotations

from types import SimpleNamespace

import pytest

from benchmarks import bench_accuracy
from benchmarks.accuracy_cases import CASE_BY_NAME, KNOWN_FLAGS


def _result(best, low, high, flags=(), basis=None, line=None, status="ok"):
    r = SimpleNamespace(
        status=status,
        method="pz-ols",
        message="refused: too little depletion" if status != "ok" else "ok",
        giip_best_bscf=best,
        giip_low_bscf=low,
        giip_high_bscf=high,
        flags=tuple(SimpleNamespace(code=c) for c in flags),
    )
    if basis is not None:
        r.basis = SimpleNamespace(model=basis)
        r.line_giip_best_bscf = line
    return r


@pytest.fixture
def score(monkeypatch):
    def run(name, seed, result):
        monkeypatch.setattr(bench_accuracy, "analyse_field", lambda inputs: result)
        return bench_accuracy.evaluate(CASE_BY_NAME[name], seed)

    return run


def test_headline_within_tolerance_and_no_flags_meets_the_volumetric_target(score):
    truth = CASE_BY_NAME["volumetric"].build(1).truth.giip_bscf
    row = score("volumetric", 1, _result(truth * 1.029, truth * 0.9, truth * 1.1))
    assert row.giip_ok and row.flags_ok and row.met
    assert row.error_frac == pytest.approx(0.029)
    assert row.basis == "line (pz-ols)" and row.line_bscf == row.headline_bscf
    row = score("volumetric", 1, _result(truth * 1.031, truth * 0.9, truth * 1.1))
    assert not row.giip_ok and not row.met
    row = score("volumetric", 1, _result(truth, truth * 0.9, truth * 1.1, flags=("data_outliers",)))
    assert row.giip_ok and row.false_flags == ["data_outliers"] and not row.met


def test_little_depletion_needs_the_truth_inside_the_range_and_its_flag(score):
    truth = CASE_BY_NAME["little_depletion"].build(1).truth.giip_bscf
    flag = ("too_little_depletion",)
    assert score("little_depletion", 1, _result(truth * 2, truth * 0.5, None, flag)).met  # unbounded high
    assert not score("little_depletion", 1, _result(truth * 2, truth * 1.2, truth * 3, flag)).met
    assert not score("little_depletion", 1, _result(truth, truth * 0.5, truth * 2)).met  # flag missing
    refused = score("little_depletion", 1, _result(None, None, None, flag, status="refused"))
    assert refused.inside is None and not refused.met and refused.basis == "none (refused)"


def test_the_basis_is_the_headline_when_the_engine_names_one(score):
    truth = CASE_BY_NAME["strong_aquifer_dry"].build(2).truth.giip_bscf
    res = _result(
        truth * 1.1, truth * 0.9, truth * 1.3, ("aquifer_signature",), "aquifer_veh_radial", truth * 1.8
    )
    row = score("strong_aquifer_dry", 2, res)
    assert row.basis == "aquifer_veh_radial" and row.line_bscf == pytest.approx(truth * 1.8)
    assert row.met


def test_flag_expectations_per_case():
    aquifer = CASE_BY_NAME["weak_aquifer_water"]
    assert aquifer.expected_met(["aquifer_signature", "dynamic_above_volumetric"])
    assert aquifer.false_alarms(["aquifer_signature", "dynamic_above_volumetric"]) == []
    # A combined "aquifer or compartment" flag (issue 12, point 6) answers an aquifer case.
    assert aquifer.expected_met(["aquifer_or_compartment"]) and not aquifer.false_alarms(
        ["aquifer_or_compartment"]
    )
    assert aquifer.false_alarms(["aquifer_signature", "compartment_signature"]) == ["compartment_signature"]
    split = CASE_BY_NAME["compartments"]
    assert split.expected_met(["compartment_signature", "dynamic_below_volumetric"])
    assert not split.expected_met(["compartment_signature"])  # the mapped volume is not all connected
    assert split.false_alarms(["dynamic_above_volumetric"]) == ["dynamic_above_volumetric"]
    # Cases with nothing to find: every known flag is a false alarm.
    for name in ("volumetric", "condensate", "gauges_off_datum"):
        assert CASE_BY_NAME[name].false_alarm_keys == list(KNOWN_FLAGS)
    assert "overpressure_signature" not in CASE_BY_NAME["overpressured"].false_alarm_keys
    assert "aquifer_signature" in CASE_BY_NAME["overpressured"].false_alarm_keys


def test_the_command_runs_one_case_and_always_exits_zero(capsys, tmp_path):
    out = tmp_path / "rows.json"
    assert bench_accuracy.main(["--seeds", "1", "--cases", "volumetric", "--json", str(out)]) == 0
    text = capsys.readouterr().out
    assert text.rstrip().splitlines()[-1] in ("met 0 of 1", "met 1 of 1")
    assert out.read_text().startswith("[")
    assert bench_accuracy.main(["--cases", "no_such_case"]) == 0
