"""Flag rules on constructed evidence: each rule at and across its documented threshold
(docs/flags.md), the right flag raised and the wrong ones not."""

import dataclasses
import math

import numpy as np
import pytest

from server.engine.compartments.well_trend import WellFinding
from server.engine.diagnosis.compare import CurvatureTest, compare_models
from server.engine.diagnosis.flag_rules import raise_flags
from server.engine.diagnosis.flags import Evidence, Outlier, WaterTrend
from server.engine.modelfit import ModelFit
from server.engine.tank.balance_terms import ColeTrend
from server.engine.thresholds import FlagThresholds
from server.engine.volumetrics.estimate import volumetric_range
from tests.conftest import ROOT

N = 40


def _fit(name, rss, k, giip, identifiable=True):
    z = np.zeros(N)
    return ModelFit(
        name, name.replace("_", " "), k, N, rss, z, z, giip, giip - 5, giip + 5, identifiable=identifiable
    )


def _comparison(**rss):
    """Models by name with the RSS given; single tank always present (RSS 4000 unless given)."""
    ks = {"single_tank": 2, "tank_ce": 3, "two_tank": 4, "aquifer_fetkovich": 4, "aquifer_pot": 3}
    rss.setdefault("single_tank", 4000.0)
    fits = [_fit(n, r, ks[n], {"single_tank": 100.0}.get(n, 90.0)) for n, r in rss.items()]
    return compare_models(fits, np.arange(N, dtype=float))


def _ev(**kw):
    base = dict(
        n_surveys=N,
        initial_pz_psia=4968.0,
        initial_pressure_psia=5000.0,
        datum_depth_ft=10500.0,
        overpressure_mode="off",
        depletion_frac=0.4,
        dynamic_method="single_tank",
        dynamic_giip_bscf=100.0,
        dynamic_low_bscf=95.0,
        dynamic_high_bscf=105.0,
        volumetric=volumetric_range(85.0, 100.0, 120.0),
        comparison=_comparison(),
        curvature=CurvatureTest(0.0, 0.01, 0.0, 1.0, N),
        water=WaterTrend(1.0, 1.0),
        noise_psia=12.0,
    )
    base.update(kw)
    return Evidence(**base)


def codes(ev, th=FlagThresholds()):
    return [f.code for f in raise_flags(ev, th)]


def test_clean_field_raises_nothing():
    assert codes(_ev()) == []


def test_every_threshold_is_documented():
    text = (ROOT / "docs" / "flags.md").read_text()
    for f in dataclasses.fields(FlagThresholds):
        assert f"`{f.name}`" in text, f.name


@pytest.mark.parametrize(("depletion", "raised"), [(0.099, True), (0.10, False)])
def test_too_little_depletion_at_its_threshold(depletion, raised):
    assert ("too_little_depletion" in codes(_ev(depletion_frac=depletion))) is raised


def test_too_few_surveys():
    (flag,) = raise_flags(_ev(n_surveys=2))
    assert flag.code == "too_little_depletion" and "only 2 usable survey" in flag.reason


def test_young_field_ignores_model_evidence_but_not_a_clear_volumetric_mismatch():
    two = _comparison(two_tank=1500.0)
    assert codes(_ev(depletion_frac=0.05, comparison=two)) == ["too_little_depletion"]
    # best below the low case but the interval overlaps it: not judged on a young field
    assert "dynamic_below_volumetric" not in codes(
        _ev(depletion_frac=0.05, dynamic_giip_bscf=80.0, dynamic_high_bscf=90.0)
    )
    below = codes(
        _ev(depletion_frac=0.05, dynamic_giip_bscf=60.0, dynamic_low_bscf=55.0, dynamic_high_bscf=70.0)
    )
    assert below == ["dynamic_below_volumetric", "too_little_depletion"]


def test_dynamic_below_volumetric_quotes_the_numbers():
    ev = _ev(
        dynamic_giip_bscf=62.0,
        dynamic_low_bscf=55.0,
        dynamic_high_bscf=70.0,
        volumetric=volumetric_range(120.0, 140.0, 170.0),
    )
    (flag,) = raise_flags(ev)
    assert flag.code == "dynamic_below_volumetric" and flag.severity == "alert"
    assert flag.reason.startswith("dynamic GIIP 62 Bscf (55-70) is below the volumetric low case 120 Bscf")
    assert "compartmentalisation" in flag.reason
    assert flag.numbers["volumetric_low_bscf"] == 120.0 and flag.numbers["dynamic_giip_bscf"] == 62.0
    overlap = raise_flags(dataclasses.replace(ev, dynamic_high_bscf=125.0))
    assert overlap[0].severity == "warning"
    # The booked range's kind keeps its capitals ("p90-P10" before engine 0.6.10).
    (booked,) = raise_flags(dataclasses.replace(ev, dynamic_interval_kind="P90-P10"))
    assert "62 Bscf (P90-P10 55-70)" in booked.reason


def test_dynamic_above_volumetric():
    (flag,) = raise_flags(_ev(dynamic_giip_bscf=140.0, dynamic_low_bscf=130.0, dynamic_high_bscf=150.0))
    assert flag.code == "dynamic_above_volumetric" and flag.severity == "alert" and "aquifer" in flag.reason


@pytest.mark.parametrize(("late", "raised"), [(4.9, False), (5.0, True), (2.9, False)])
def test_water_rise_thresholds(late, raised):
    # factor 3 over an early ratio of 1 and at least 5 stb/MMscf late (or factor 3 of 0.9 for 2.9)
    early = 1.0 if late >= 4 else 0.9
    assert ("aquifer_signature" in codes(_ev(water=WaterTrend(early, late)))) is raised


def test_aquifer_model_preference_needs_the_margin_over_a_single_tank():
    # single tank RSS 4000 -> AICc gain of the aquifer model: 40 ln(4000/RSS) - 4 - small-sample terms
    weak = _comparison(aquifer_fetkovich=3400.0)
    strong = _comparison(aquifer_fetkovich=2000.0)
    assert weak.row("single_tank").aicc - weak.row("aquifer_fetkovich").aicc < 10
    assert "aquifer_signature" not in codes(_ev(comparison=weak))
    flag = next(f for f in raise_flags(_ev(comparison=strong)) if f.code == "aquifer_signature")
    assert flag.severity == "warning" and flag.numbers["aquifer_model"] == "aquifer_fetkovich"
    both = raise_flags(_ev(comparison=strong, water=WaterTrend(1.0, 40.0)))
    assert next(f for f in both if f.code == "aquifer_signature").severity == "alert"


def test_cole_trend_alone_raises_the_aquifer_flag_unless_compartments_explain_it():
    # (mbal.ColeTrend: direction, n, slope, se, intercept, t, p, change over the Gp range, its CI)
    cole = ColeTrend("rising", 20, 0.3, 0.05, 90.0, 6.0, 1e-4, 0.15, (0.1, 0.2))
    (flag,) = raise_flags(_ev(cole=cole))
    assert flag.code == "aquifer_signature" and "rises by 15 % across the production" in flag.reason
    # "rising" by the Cole rule (p < 0.05) but not at the flag's cole_p_value of 0.01
    weak = ColeTrend("rising", 20, 0.3, 0.12, 90.0, 2.5, 0.02, 0.15, (0.02, 0.28))
    assert "aquifer_signature" not in codes(_ev(cole=weak))
    odd = WellFinding("E-1", "East", 8, 900.0, 12.0, 75.0, 8, True, True, "E-1 reads high")
    assert codes(_ev(cole=cole, wells=(odd,))) == ["compartment_signature"]


def test_a_neighbour_tank_larger_than_the_map_does_not_explain_away_a_rising_cole_plot():
    # A rising Cole plot and a preferred two-tank model (GIIP 90 Bscf in _comparison) with no
    # aquifer model comparable: a neighbour tank inside the mapped volume explains the support,
    # so only the compartment flag is raised. Compartments divide the mapped volume and never
    # add to it (common practice), so when the two tanks hold more than the volumetric high
    # case the aquifer stays a candidate: one "aquifer or compartment" flag instead.
    cole = ColeTrend("rising", 20, 0.3, 0.05, 90.0, 6.0, 1e-4, 0.15, (0.1, 0.2))
    cmp = _comparison(two_tank=1000.0)
    assert codes(_ev(cole=cole, comparison=cmp)) == ["compartment_signature"]
    small_map = volumetric_range(60.0, 70.0, 80.0)  # P10 80 Bscf < the two tanks' 90 Bscf
    found = codes(_ev(cole=cole, comparison=cmp, volumetric=small_map))
    assert "aquifer_or_compartment" in found and "compartment_signature" not in found


def test_a_determined_aquifer_model_speaks_for_the_family_that_leads_the_ranking():
    # Fetkovich ranks first but its parameters are not determined (it would need the larger
    # unidentified margin); the pot aquifer, determined, is 3-4 AICc behind it (not "comparable")
    # yet beats the single tank by more than the 10-AICc margin. Only aquifer models rank above
    # it, so the aquifer family leads the ranking: the aquifer flag names the pot aquifer. A
    # two-tank model ranked between them breaks the lead (common practice: AICc ranks models,
    # Burnham & Anderson 2002).
    def fits(*extra):
        return [
            _fit("single_tank", 4000.0, 2, 100.0),
            _fit("aquifer_fetkovich", 2350.0, 4, 90.0, identifiable=False),
            _fit("aquifer_pot", 2800.0, 3, 92.0),
            *extra,
        ]

    cmp = compare_models(fits(), np.arange(N, dtype=float))
    (flag,) = [f for f in raise_flags(_ev(comparison=cmp)) if f.code == "aquifer_signature"]
    assert flag.numbers["aquifer_model"] == "aquifer_pot"
    assert flag.numbers["delta_aicc_vs_single_tank"] >= 10
    between = compare_models(fits(_fit("two_tank", 2500.0, 4, 95.0)), np.arange(N, dtype=float))
    assert "aquifer_signature" not in codes(_ev(comparison=between))


def test_a_modest_cole_rise_counts_when_a_determined_aquifer_model_leads():
    # A Cole plot rising by the Cole rule itself (p = 0.02 < 0.05, not the flag's 0.01) by 15 %:
    # alone it raises nothing. With a determined aquifer model first in the ranking, ahead of
    # the single tank by at least comparable_delta_aicc (but short of the 10-AICc margin), the
    # two modest signs agree and raise the aquifer flag.
    weak = ColeTrend("rising", 20, 0.3, 0.12, 90.0, 2.5, 0.02, 0.15, (0.02, 0.28))
    assert "aquifer_signature" not in codes(_ev(cole=weak))
    lead = compare_models(
        [_fit("single_tank", 4000.0, 2, 100.0), _fit("aquifer_fetkovich", 3200.0, 4, 92.0)],
        np.arange(N, dtype=float),
    )
    gain = lead.row("single_tank").aicc - lead.row("aquifer_fetkovich").aicc
    assert 2.0 <= gain < 10.0
    assert "aquifer_signature" in codes(_ev(cole=weak, comparison=lead))
    assert "aquifer_signature" not in codes(_ev(comparison=lead))  # the model alone is not enough


def test_overpressure_and_pot_aquifer_are_not_confused():
    # An overpressured field: the compressibility model and a pot aquifer fit alike.
    cmp = _comparison(tank_ce=1500.0, aquifer_pot=1500.0)
    ev = _ev(initial_pressure_psia=9000.0, datum_depth_ft=13600.0, comparison=cmp,
             curvature=CurvatureTest(-0.17, 0.02, -8.5, 1e-9, N))  # fmt: skip
    flags = {f.code: f for f in raise_flags(ev)}
    assert set(flags) == {"overpressure_signature"}
    f = flags["overpressure_signature"]
    assert f.severity == "alert" and "0.66 psi/ft" in f.reason and f.numbers["gradient_psi_per_ft"] == 0.662
    # ... with the correction applied the flag is information only
    on = raise_flags(dataclasses.replace(ev, overpressure_mode="fitted"))
    assert on[0].severity == "info" and "correction is applied" in on[0].reason
    # ... and rising water on a normally pressured field points to the aquifer, not overpressure
    wet = _ev(comparison=cmp, curvature=ev.curvature, water=WaterTrend(1.0, 30.0))
    assert codes(wet) == ["aquifer_signature"]


@pytest.mark.parametrize(("grad_psia", "raised"), [(0.549, False), (0.55, True)])
def test_overpressure_gradient_threshold(grad_psia, raised):
    ev = _ev(initial_pressure_psia=grad_psia * 10000.0, datum_depth_ft=10000.0)
    assert ("overpressure_signature" in codes(ev)) is raised


def test_concave_down_with_the_compressibility_model_flags_overpressure_without_a_gradient():
    ev = _ev(comparison=_comparison(tank_ce=1500.0), curvature=CurvatureTest(-0.1, 0.01, -10.0, 1e-8, N))
    assert codes(ev) == ["overpressure_signature"]
    assert codes(dataclasses.replace(ev, curvature=CurvatureTest(-0.1, 0.04, -2.5, 0.02, N))) == []


def test_compartments_from_a_well_or_an_identifiable_two_tank_model():
    near = WellFinding("E-1", "East", 8, 2900.0, 12.0, 240.0, 8, True, True, "E-1: p/z 2900 psia above")
    (flag,) = raise_flags(_ev(wells=(near,)))
    assert (
        flag.code == "compartment_signature"
        and flag.severity == "alert"
        and flag.numbers["offset_E-1_psia"] == 2900.0
    )
    gauge = WellFinding("W-3", None, 8, 80.0, 12.0, 6.7, 6, False, True, "W-3: p/z 80 psia above")
    (flag,) = raise_flags(_ev(wells=(gauge,)))
    assert flag.severity == "warning" and "gauge error" in flag.reason
    # Held up by half the others' fall (it stands apart): a compartment, no gauge error.
    apart = WellFinding("E-2", None, 8, 900.0, 12.0, 75.0, 8, False, True, "E-2: p/z 900 psia above", True)
    (flag,) = raise_flags(_ev(wells=(apart,)))
    assert "gauge error" not in flag.reason and "compartmentalised" in flag.reason
    assert codes(_ev(comparison=_comparison(two_tank=1500.0))) == ["compartment_signature"]
    unidentified = compare_models(
        [_fit("single_tank", 4000.0, 2, 100.0), _fit("two_tank", 1500.0, 4, 90.0, identifiable=False)],
        np.arange(N, dtype=float),
    )
    assert codes(_ev(comparison=unidentified)) == []
    fine = WellFinding("W-2", None, 8, 5.0, 12.0, 0.4, 0, False, False, "within noise")
    assert codes(_ev(wells=(fine,))) == []


def test_data_quality_flags():
    out = Outlier("CDV-1", 16773.0, -413.0, 7.2, "buildup", "poor")
    flags = {f.code: f for f in raise_flags(_ev(outliers=(out,)))}
    assert (
        "CDV-1 on 2015-12-04 (buildup, poor) lies -413 psia off the trend (7 times the noise)"
        in flags["data_outliers"].reason
    )
    # docs/flags.md: surveys beyond outlier_sigma (4) noise widths. The p/z estimate sets aside
    # surveys by its own Bonferroni rule (1 % family-wise, about 3.9 widths for 40 surveys);
    # those nearer than 4 widths are not data-quality findings (a 3.9 sigma draw of normal
    # noise turned up in 1 of 10 forward-model condensate fields, benchmarks/bench_accuracy.py).
    near = Outlier("CD-3", 15535.0, -48.0, 3.9, "static", "good")
    assert codes(_ev(outliers=(near,))) == []
    assert codes(_ev(outliers=(near, out))) == ["data_outliers"]
    flag = raise_flags(_ev(outliers=(near, out)))[0]
    assert flag.numbers["n_outliers"] == 1 and "CD-3" not in flag.reason
    assert codes(_ev(outliers=(near,)), FlagThresholds(outlier_sigma=3.5)) == ["data_outliers"]
    above = raise_flags(_ev(above_initial=(("W-1", 100.0, 5080.0),)))
    assert above[0].code == "survey_above_initial" and "5080 psia" in above[0].reason
    gaps = raise_flags(_ev(longest_survey_gap_days=4 * 365.25, longest_production_period_days=92.0))
    assert gaps[0].code == "data_gaps" and gaps[0].severity == "info" and "4.0 years" in gaps[0].reason
    assert codes(_ev(longest_survey_gap_days=3 * 365.25, longest_production_period_days=62.0)) == []
    assert codes(_ev(noise_psia=0.011 * 4968.0)) == ["data_scatter"]
    assert codes(_ev(noise_psia=0.009 * 4968.0)) == []


def test_flags_are_sorted_most_severe_first_and_thresholds_can_be_changed():
    ev = _ev(
        dynamic_giip_bscf=62.0, dynamic_low_bscf=55.0, dynamic_high_bscf=70.0, noise_psia=60.0,
        longest_production_period_days=100.0,
    )  # fmt: skip
    sev = [f.severity for f in raise_flags(ev)]
    assert sev == sorted(sev, key=["alert", "warning", "info"].index)
    strict = FlagThresholds(max_scatter_frac=0.02, production_gap_days=120.0)
    assert codes(ev, strict) == ["dynamic_below_volumetric"]
    assert math.isclose(FlagThresholds().min_depletion_frac, 0.10)


def test_thresholds_outside_their_ranges_raise_a_clear_error():
    from server.engine.thresholds import THRESHOLD_LIMITS, FlagThresholdError

    assert {f.name for f in dataclasses.fields(FlagThresholds)} == set(THRESHOLD_LIMITS)
    for f in dataclasses.fields(FlagThresholds):  # every default lies in its own range
        lim = THRESHOLD_LIMITS[f.name]
        assert lim.low <= f.default <= lim.high, f.name
    with pytest.raises(FlagThresholdError, match="curvature_p_value must lie between 1e-06 and 0.2"):
        FlagThresholds(curvature_p_value=0.5)
    with pytest.raises(FlagThresholdError, match="min_surveys must be a whole number"):
        FlagThresholds(min_surveys=3.5)
    with pytest.raises(FlagThresholdError, match="finite number"):
        FlagThresholds(outlier_sigma=float("nan"))
    with pytest.raises(FlagThresholdError, match="finite number"):
        FlagThresholds(outlier_sigma=True)


def test_a_gas_gravity_to_check_is_a_data_quality_flag():
    # engine/pvt/wellstream.py writes the sentence; the rule passes it on as one warning.
    text = "the separator gas gravity 0.990 is heavier than separator gas usually is (...)"
    (flag,) = raise_flags(_ev(fluid_warnings=(text,)))
    assert (flag.code, flag.severity, flag.title, flag.reason) == (
        "data_gas_gravity",
        "warning",
        "Gas gravity to check",
        text,
    )
    assert codes(_ev()) == []


def test_support_that_grows_with_the_pressure_drop_on_a_normally_pressured_field_is_an_aquifer():
    # Forward model (benchmarks/accuracy_cases.py): a pot aquifer, condensed water only, 0.455
    # psi/ft. Before engine 0.6.6 p/z bent down (p ~ 2e-7), a constant-ce tank beat the line by
    # 20 AICc with c_e 4.5e-5 1/psi, and no flag fired: the overpressure rule left the bend to
    # the aquifer models, which were not determined. The straight line read 239.5 Bscf (+20 %).
    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field
    from server.engine.diagnosis.flag_rules import compressible_support

    built = CASE_BY_NAME["weak_aquifer_dry"].build(29)
    result = analyse_field(built.inputs)
    ev, th = result.diagnosis.evidence, built.inputs.flag_thresholds
    gain, ce = compressible_support(ev, th)
    assert gain >= th.model_preference_delta_aicc and ce > th.normal_rock_max_ce_per_psi
    flag = next(f for f in result.flags if f.code == "aquifer_signature")
    assert "normally pressured" in flag.reason and "small aquifer" in flag.reason
    assert result.basis.model in ("aquifer_pot", "tank_ce")
    assert abs(result.giip_best_bscf / built.truth.giip_bscf - 1.0) < 0.08


@pytest.mark.parametrize("case", ["volumetric", "overpressured", "condensate", "compartments"])
def test_no_field_without_an_aquifer_shows_compressible_support(case):
    # The three signs together appear on aquifer fields only (bench_accuracy seeds 1-40); an
    # overpressured field has the same balance but its gradient explains it.
    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field
    from server.engine.diagnosis.flag_rules import compressible_support

    for seed in range(1, 11):
        built = CASE_BY_NAME[case].build(seed)
        result = analyse_field(built.inputs)
        assert compressible_support(result.diagnosis.evidence, built.inputs.flag_thresholds) is None


def test_an_overpressured_field_needs_a_clear_margin_before_an_aquifer_is_flagged_too():
    # Forward model: rock and water expansion at 0.70 psi/ft (benchmarks/accuracy_cases.py,
    # seed 53, never used to write the rules before engine 0.6.6). A Fetkovich aquifer fitted
    # 6 AICc better than the constant-ce tank on 33 precise surveys and raised an aquifer flag
    # beside the overpressure one; "clearly better" is now the preference margin (10 AICc).
    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field

    built = CASE_BY_NAME["overpressured"].build(53)
    result = analyse_field(built.inputs)
    assert {f.code for f in result.flags} == {"overpressure_signature"}
    assert result.basis.model == "tank_ce"
    assert abs(result.giip_best_bscf / built.truth.giip_bscf - 1.0) < 0.05


def test_the_normal_rock_threshold_decides_the_compressible_support_flag():
    # The team setting changes the result it names: raised above the fitted c_e (4.5e-5 1/psi on
    # this pot-aquifer field), normally pressured rock could give that support, and neither the
    # flag nor the basis moves off the straight line.
    import dataclasses

    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field

    inputs = CASE_BY_NAME["weak_aquifer_dry"].build(29).inputs
    default = analyse_field(inputs)
    assert "aquifer_signature" in {f.code for f in default.flags}
    # The bend an aquifer model follows (engine 0.6.8) is another road to the same flag on this
    # field; it is closed here so that the test isolates the normal-rock threshold.
    th = dataclasses.replace(
        inputs.flag_thresholds, normal_rock_max_ce_per_psi=1e-4, support_model_delta_aicc=100.0
    )
    raised = dataclasses.replace(inputs, flag_thresholds=th)
    result = analyse_field(raised)
    assert "aquifer_signature" not in {f.code for f in result.flags}
    assert result.basis.model == "single_tank"


def test_a_bend_an_aquifer_model_follows_is_an_aquifer():
    # Forward model (benchmarks/accuracy_cases.py): a small Fetkovich aquifer (Wei about a fifth
    # of the gas pore volume) that runs out bends p/z down; condensed water only, 0.46 psi/ft.
    # Before engine 0.6.8 the bend (p = 0.0025) and a Fetkovich model 9 AICc ahead of the line
    # each fell short of its own margin and the straight line read +12 % (seed 4); strong dry
    # seed 35 read +57 % with a Fetkovich model 20 AICc ahead whose parameters correlate.
    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field
    from server.engine.diagnosis.support_signs import bend_followed

    for case, seed, target in (("weak_aquifer_dry", 4, 0.08), ("strong_aquifer_dry", 35, 0.15)):
        built = CASE_BY_NAME[case].build(seed)
        result = analyse_field(built.inputs)
        th = built.inputs.flag_thresholds
        row, gain, drop = bend_followed(result.diagnosis.evidence, th)
        assert row.name.startswith("aquifer_") and gain >= th.support_model_delta_aicc
        assert drop >= th.bend_min_giip_drop_frac
        flag = next(f for f in result.flags if f.code == "aquifer_signature")
        assert "follows the bend" in flag.reason and "below the straight line" in flag.reason
        assert result.basis.model == row.name
        assert abs(result.giip_best_bscf / built.truth.giip_bscf - 1.0) < target, (case, seed)
        assert abs(result.line_giip_best_bscf / built.truth.giip_bscf - 1.0) > target  # the line misses


@pytest.mark.parametrize(
    "case",
    ["volumetric", "little_depletion", "overpressured", "condensate", "compartments", "gauges_off_datum"],
)
def test_no_field_without_an_aquifer_shows_a_followed_bend(case):
    # Measured on bench_accuracy seeds 1-200 (benchmarks/README.md); ten seeds here.
    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field
    from server.engine.diagnosis.support_signs import bend_followed

    for seed in range(1, 11):
        built = CASE_BY_NAME[case].build(seed)
        result = analyse_field(built.inputs)
        if result.diagnosis is not None:
            assert bend_followed(result.diagnosis.evidence, built.inputs.flag_thresholds) is None, seed


def test_the_bend_thresholds_decide_the_flag_and_the_basis():
    # The team settings change the results they name. Volumetric seed 63: a chance bend
    # (p = 0.005) that a pot aquifer follows 6 AICc ahead of the line, but only 1.8 % lower:
    # no flag at the 5 % drop, a flag (and an aquifer basis) at 1 %. Weak aquifer seed 4: a
    # 20 AICc margin for the bend's model puts the basis back on the straight line.
    import dataclasses

    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field

    def run(case, seed, **change):
        inputs = CASE_BY_NAME[case].build(seed).inputs
        th = dataclasses.replace(inputs.flag_thresholds, **change)
        return analyse_field(dataclasses.replace(inputs, flag_thresholds=th))

    assert run("volumetric", 63).flags == ()
    assert run("volumetric", 63).basis.model == "single_tank"
    loose = run("volumetric", 63, bend_min_giip_drop_frac=0.01)
    assert "aquifer_signature" in {f.code for f in loose.flags}
    assert loose.basis.model.startswith("aquifer_")
    assert run("weak_aquifer_dry", 4).basis.model.startswith("aquifer_")
    strict = run("weak_aquifer_dry", 4, support_model_delta_aicc=20.0)
    assert "aquifer_signature" not in {f.code for f in strict.flags}
    assert strict.basis.model == "single_tank"


def test_a_line_above_the_map_that_an_aquifer_model_brings_inside_is_an_aquifer(monkeypatch):
    # Forward model (benchmarks/accuracy_cases.py, strong dry aquifer, seed 16, with 20 psi of
    # survey scatter instead of 12): a Fetkovich aquifer. The straight line reads +57 % (274
    # Bscf), above the volumetric high case; no bend or Cole rise is significant at this
    # scatter, and the determined Fetkovich model, 9 AICc ahead of the line, reads 162 Bscf,
    # inside the mapped range (truth 175). Before engine 0.6.8 no aquifer flag fired.
    import dataclasses

    import benchmarks.accuracy_cases as ac
    from server.engine.analysis import analyse_field
    from server.engine.diagnosis.support_signs import map_followed

    monkeypatch.setattr(ac, "NOISE_PSI", 20.0)
    built = ac.CASE_BY_NAME["strong_aquifer_dry"].build(16)
    result = analyse_field(built.inputs)
    th, vol = built.inputs.flag_thresholds, built.inputs.volumetric
    row, gain = map_followed(result.diagnosis.evidence, th)
    assert row.name.startswith("aquifer_") and gain >= th.support_model_delta_aicc
    assert result.line_giip_best_bscf > vol.p10_bscf
    flag = next(f for f in result.flags if f.code == "aquifer_signature")
    assert "above the volumetric high case" in flag.reason
    assert result.basis.model == row.name
    assert abs(result.giip_best_bscf / built.truth.giip_bscf - 1.0) < 0.15
    th_strict = dataclasses.replace(th, support_model_delta_aicc=20.0)
    strict = analyse_field(dataclasses.replace(built.inputs, flag_thresholds=th_strict))
    assert strict.basis.model == "single_tank"


@pytest.mark.parametrize("case", ["volumetric", "condensate", "gauges_off_datum"])
def test_a_map_that_is_too_small_raises_no_aquifer_on_a_depletion_drive_field(case):
    # The mapped volume 30 % below the truth puts every straight line above the volumetric high
    # case; with no aquifer model ahead of the line the map alone flags no aquifer (measured on
    # seeds 1-200 of the three cases: none; ten seeds here).
    import dataclasses

    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field
    from server.engine.volumetrics.estimate import volumetric_range

    for seed in range(1, 11):
        built = CASE_BY_NAME[case].build(seed)
        m = 0.7 * built.truth.giip_bscf
        vol = volumetric_range(0.8 * m, m, 1.25 * m)
        result = analyse_field(dataclasses.replace(built.inputs, volumetric=vol))
        assert "aquifer_signature" not in {f.code for f in result.flags}, seed
        assert "dynamic_above_volumetric" in {f.code for f in result.flags}, seed
        assert result.basis.model == "single_tank", seed
