"""The automatic basis on the demo portfolio and forward-model fields, and the engineer's choice."""

from __future__ import annotations

import dataclasses

import pytest

from server.engine.analysis import analyse_field
from server.engine.headline.types import BASIS_MODELS
from tests.engine.cases import demo_field_inputs
from tests.engine.forward_histories import history_inputs


@pytest.fixture(scope="module")
def demo():
    names = ("Gorsewick", "Fallowmere", "Lowmarsh Deep", "Emberline", "Hollinsway")
    return {n: demo_field_inputs(n) for n in names}


def _choose(inputs, model, reason="test"):
    return dataclasses.replace(
        inputs, choices=dataclasses.replace(inputs.choices, basis_model=model, basis_reason=reason)
    )


def test_the_demo_headlines_follow_the_evidence(demo):
    gorse = analyse_field(demo["Gorsewick"])
    # Two compartments: the connected volume, never one line through both groups.
    assert gorse.basis.model == "connected_tank" and gorse.giip_best_bscf < 0.75 * gorse.line_giip_best_bscf
    assert "dynamic_below_volumetric" in {f.code for f in gorse.flags}  # held against the mapped volume
    fallow = analyse_field(demo["Fallowmere"])
    assert fallow.basis.model.startswith("aquifer_") and fallow.giip_best_bscf < fallow.line_giip_best_bscf
    low = analyse_field(demo["Lowmarsh Deep"])
    assert low.basis.model == "single_tank" and low.giip_best_bscf == low.line_giip_best_bscf
    # Its better-fitting but unflagged aquifer model widens the range instead of moving the number.
    assert {p.key: p.sigma_ln for p in low.basis.range_parts}["models"] > 0.05
    assert low.giip_low_bscf < min(o.giip_bscf for o in low.outcomes if o.determined)


def test_every_model_with_results_can_be_chosen_and_automatic_restores(demo):
    auto = analyse_field(demo["Fallowmere"])
    assert auto.basis.source == "automatic"
    choosable = [o for o in auto.outcomes if o.has_results]
    assert {o.model for o in choosable} <= set(BASIS_MODELS) and len(choosable) >= 4
    for o in choosable:
        chosen = analyse_field(_choose(demo["Fallowmere"], o.model, "water analysis says so"))
        assert chosen.basis.model == o.model and chosen.giip_best_bscf == pytest.approx(o.giip_bscf)
        assert chosen.eur_bscf == pytest.approx(o.eur_bscf)
        assert chosen.basis.source == "engineer" and chosen.basis.engineer_reason == "water analysis says so"
        assert chosen.basis.recommended_model == auto.basis.model  # the recommendation stays beside it
    back = analyse_field(_choose(demo["Fallowmere"], "automatic", ""))
    assert back.giip_best_bscf == auto.giip_best_bscf and back.basis.source == "automatic"


def test_a_chosen_model_without_results_falls_back_to_automatic_and_says_so(demo):
    a = analyse_field(demo["Hollinsway"])
    none = next(o.model for o in a.outcomes if not o.has_results)
    b = analyse_field(_choose(demo["Hollinsway"], none))
    assert b.basis.model == a.basis.model and b.basis.source == "automatic"
    assert any("no GIIP and EUR" in n for n in b.basis.notes)


def test_a_volumetric_field_stays_on_the_line():
    for seed in range(3):
        inputs, _ = history_inputs(seed=seed, noise_psi=15.0)
        a = analyse_field(inputs)
        assert a.basis.model == "single_tank", [f.code for f in a.flags]


def test_an_overpressured_field_books_rock_and_water_expansion():
    # Forward model with ce = 14e-6 /psi at 9000 psia (domain reference §2.6 magnitudes).
    inputs, truth = history_inputs(seed=2, pi_psia=9000.0, ce_per_psi=14.0e-6)
    a = analyse_field(inputs)
    assert a.basis.model == "tank_ce"
    assert a.giip_best_bscf == pytest.approx(truth["giip_bscf"], rel=0.05)
    assert a.line_giip_best_bscf > 1.05 * truth["giip_bscf"]  # the line overstates


@pytest.mark.parametrize("seed", [6, 12, 15])
def test_a_rising_cole_plot_lets_a_determined_aquifer_model_carry_a_weak_dry_aquifer(seed):
    # Forward model: a weak van Everdingen-Hurst radial aquifer (server/synthetic/aquifer.py,
    # van Everdingen & Hurst 1949), no water at the wells, 12 psi survey noise. The aquifer
    # model beats the line by under the 10-AICc margin, but F/Eg rises significantly (Cole
    # plot, domain reference §7.2): a second, model-free sign, so the determined aquifer model
    # is the basis and lands within the weak-aquifer target of 8 % where the line is 14-21 % high.
    from benchmarks.accuracy_cases import build_case

    built = build_case("weak_aquifer_dry", seed)
    truth = built.truth.giip_bscf
    a = analyse_field(built.inputs)
    assert a.line_giip_best_bscf > 1.1 * truth
    assert a.basis.model.startswith("aquifer_"), a.basis.reason
    assert a.giip_best_bscf == pytest.approx(truth, rel=0.08)
    assert "aquifer_signature" in {f.code for f in a.flags}


def test_a_volumetric_field_never_shows_a_rising_cole_plot_at_the_flag_threshold():
    # Depletion drive only (exact p/z line plus 12 psi noise): the Cole plot must not rise by
    # the flag's rule, or the aquifer basis would follow from noise.
    from benchmarks.accuracy_cases import build_case
    from server.engine.diagnosis.flag_rules import DEFAULT_THRESHOLDS, cole_rising

    for seed in range(1, 9):
        a = analyse_field(build_case("volumetric", seed).inputs)
        assert not cole_rising(a.diagnosis.evidence, DEFAULT_THRESHOLDS), seed
        assert a.basis.model == "single_tank"


def test_rising_water_lets_an_aquifer_model_that_trails_the_line_be_the_basis():
    # Forward model (benchmarks/accuracy_cases.py, weak aquifer with water, seed 45: a Fetkovich
    # aquifer, a fifth to a half of its influx produced at the wells). The water-gas ratio rises
    # and the aquifer flag fires, but the Fetkovich model, two parameters more for a bend inside
    # the 12 psi scatter, trails the line by 2 AICc units: before engine 0.6.8 the basis stayed
    # on the line (+11.9 %). The water rules the no-influx tank out on its own.
    import dataclasses

    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field

    built = CASE_BY_NAME["weak_aquifer_water"].build(45)
    result = analyse_field(built.inputs)
    assert "aquifer_signature" in {f.code for f in result.flags}
    single = result.diagnosis.comparison.row("single_tank")
    chosen = result.diagnosis.comparison.row(result.basis.model)
    assert result.basis.model.startswith("aquifer_") and chosen.aicc > single.aicc  # trails the line
    assert (
        "rules out a tank without influx" in result.basis.reason and "better than" not in result.basis.reason
    )
    assert abs(result.giip_best_bscf / built.truth.giip_bscf - 1.0) < 0.08
    assert result.line_giip_best_bscf / built.truth.giip_bscf - 1.0 > 0.08
    assert result.giip_low_bscf <= built.truth.giip_bscf <= result.giip_high_bscf
    # Without the water (the same surveys, condensed water only) the line stays the basis.
    dry = dataclasses.replace(built.inputs, production_water_stb=built.inputs.production_gas_mscf * 1e-3)
    assert analyse_field(dry).basis.model == "single_tank"


def test_the_mapped_volume_chooses_between_aquifer_models_the_surveys_cannot_tell_apart():
    # Forward model (benchmarks/accuracy_cases.py, strong dry aquifer, seed 131: a bounded radial
    # aquifer, r_eD 8). The radial van Everdingen-Hurst model fits best but reads 66 Bscf, below
    # the volumetric low case; the Fetkovich model, 1.2 AICc behind, reads 91 Bscf inside the
    # mapped range (truth 86.7 Bscf). Without a volumetric estimate the best fit stays the basis.
    import dataclasses

    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field

    built = CASE_BY_NAME["strong_aquifer_dry"].build(131)
    result = analyse_field(built.inputs)
    vol = built.inputs.volumetric
    assert result.basis.model == "aquifer_fetkovich"
    assert vol.p90_bscf <= result.giip_best_bscf <= vol.p10_bscf
    assert "volumetric range" in result.basis.reason
    assert abs(result.giip_best_bscf / built.truth.giip_bscf - 1.0) < 0.15
    unmapped = analyse_field(dataclasses.replace(built.inputs, volumetric=None))
    assert unmapped.basis.model == "aquifer_veh_radial"
    assert unmapped.giip_best_bscf < vol.p90_bscf


def test_a_strictly_rising_cole_plot_lets_an_aquifer_model_that_trails_the_line_be_the_basis():
    # Forward model (benchmarks/accuracy_cases.py, weak dry aquifer, seed 132: an infinite radial
    # aquifer, condensed water only). F/Eg rises by 2 % at p = 0.005 (a closed tank's stays at
    # G, Cole 1969), the aquifer flag fires, and the radial model trails the line by 1.5 AICc
    # units: before engine 0.6.8 the line stayed the basis (+12 %).
    import dataclasses

    from benchmarks.accuracy_cases import CASE_BY_NAME
    from server.engine.analysis import analyse_field

    built = CASE_BY_NAME["weak_aquifer_dry"].build(132)
    result = analyse_field(built.inputs)
    assert result.basis.model.startswith("aquifer_")
    assert "Cole plot rising" in result.basis.reason
    assert "rules out a tank without influx" in result.basis.reason
    assert abs(result.giip_best_bscf / built.truth.giip_bscf - 1.0) < 0.08
    assert result.line_giip_best_bscf / built.truth.giip_bscf - 1.0 > 0.08
    # A stricter Cole rule (the team setting) leaves the line as the basis.
    th = dataclasses.replace(built.inputs.flag_thresholds, cole_p_value=0.001)
    strict = analyse_field(dataclasses.replace(built.inputs, flag_thresholds=th))
    assert strict.basis.model == "single_tank"


def test_the_radial_aquifer_solution_is_taken_over_a_comparable_approximation():
    # Forward model (benchmarks/accuracy_cases.py, weak aquifer with water, seed 118: an infinite
    # radial van Everdingen-Hurst aquifer, truth 183.8 Bscf). The Fetkovich model ranks first,
    # the radial model 0.1 AICc behind it (the surveys cannot tell them apart); Fetkovich's
    # pseudo-steady flow approximates the radial solution (Fetkovich 1971), which is booked:
    # +5.6 % against Fetkovich's +8.5 % (engine 0.6.9).
    from benchmarks.accuracy_cases import CASE_BY_NAME

    built = CASE_BY_NAME["weak_aquifer_water"].build(118)
    result = analyse_field(built.inputs)
    assert result.diagnosis.comparison.rows[0].name != "aquifer_veh_radial"
    assert result.basis.model == "aquifer_veh_radial"
    assert "radial flow" in result.basis.reason and "Fetkovich" in result.basis.reason
    assert abs(result.giip_best_bscf / built.truth.giip_bscf - 1.0) < 0.08


def test_a_radial_aquifer_model_beyond_the_comparable_band_does_not_take_the_basis():
    # Strong dry aquifer, seed 140 (a bounded radial aquifer, r_eD 8): the radial model trails
    # the Fetkovich model by 2.9 AICc units, more than ``comparable_delta_aicc`` (2): the data
    # prefer Fetkovich and it stays the basis; a wider band (a team setting) lets the radial
    # solution in.
    from benchmarks.accuracy_cases import CASE_BY_NAME

    built = CASE_BY_NAME["strong_aquifer_dry"].build(140)
    result = analyse_field(built.inputs)
    assert result.basis.model == "aquifer_fetkovich"
    th = dataclasses.replace(built.inputs.flag_thresholds, comparable_delta_aicc=4.0)
    wide = analyse_field(dataclasses.replace(built.inputs, flag_thresholds=th))
    assert wide.basis.model == "aquifer_veh_radial"
    assert abs(wide.giip_best_bscf / built.truth.giip_bscf - 1.0) < 0.08


def test_a_well_far_above_the_others_trend_is_never_booked_on_one_line_through_both_groups():
    # Forward model (benchmarks/accuracy_cases.py, compartments seed 14 with the connection four
    # times as strong): the neighbour has fallen by over a third when the late well CM-9 is
    # drilled, so CM-9 reads 1,100 psia above the producers' trend but not near initial. Before
    # engine 0.6.10 the basis was one straight line through both groups (+69 % on the producers'
    # tank, RMS misfit 405 psia). The diagnosis now reads CM-9 as the two-tank fit's second tank
    # (no labels were given) and that fit is the basis: the gas of both tanks, which are in
    # communication, within 3 % of the forward model's total.
    from benchmarks.accuracy_cases import compartments_with_connection

    built = compartments_with_connection(14, 4.0)
    result = analyse_field(built.inputs)
    cm9 = next(w for w in result.diagnosis.wells if w.well == "CM-9")
    assert cm9.disagrees and cm9.apart and not cm9.near_initial
    assert result.diagnosis.neighbour_wells == ("CM-9",)
    two = next(m for m in result.diagnosis.models if m.name == "two_tank")
    assert "CM-9" in two.notes[0]
    assert result.basis.model == "two_tank"
    assert result.giip_best_bscf == pytest.approx(built.truth.total_giip_bscf, rel=0.03)
    assert result.giip_low_bscf <= built.truth.total_giip_bscf <= result.giip_high_bscf
    # Its producers' tank, the connected tank, is there to choose, within 3 % of the truth.
    connected = next(o for o in result.outcomes if o.model == "connected_tank")
    assert connected.network_read and connected.has_results
    assert connected.giip_bscf == pytest.approx(built.truth.giip_bscf, rel=0.03)
    # The team setting decides it: a well must have seen less of the others' fall than
    # ``apart_max_depletion_ratio`` to stand apart; at 0.2 CM-9 no longer does.
    th = dataclasses.replace(built.inputs.flag_thresholds, apart_max_depletion_ratio=0.2)
    strict = analyse_field(dataclasses.replace(built.inputs, flag_thresholds=th))
    assert not next(w for w in strict.diagnosis.wells if w.well == "CM-9").apart
    assert strict.diagnosis.neighbour_wells == () and strict.basis.model != "two_tank"


def test_without_a_network_a_well_standing_apart_leaves_the_line_of_the_other_wells():
    # The same field with the two-tank model left out of the diagnosis: the line of the other
    # wells (the producers' side) is the basis, never the line through both groups.
    from benchmarks.accuracy_cases import compartments_with_connection
    from server.engine.diagnosis.diagnose import DEFAULT_FITTERS, diagnose_field
    from server.engine.headline.build import choose_basis, model_outcomes
    from server.engine.prepare.points import prepare

    built = compartments_with_connection(14, 4.0)
    inputs = built.inputs
    prepared = prepare(inputs)
    diag = diagnose_field(inputs, prepared, fitters=[f for f in DEFAULT_FITTERS if f[0] != "two_tank"])
    outcomes = model_outcomes(inputs, prepared, diag, line=None, corrected=None)
    basis = choose_basis(inputs, prepared, diag, outcomes, diag.flags, line_scatter_sigma=None)
    assert basis.model == "connected_tank" and "the line of the other wells" in basis.reason
    assert basis.giip_bscf < 1.3 * built.truth.giip_bscf  # the line through both read +69 %


def test_a_producing_well_that_stands_apart_is_not_read_as_the_neighbours_pressure():
    # The two-tank fit takes all production from the producers' tank; a well standing apart
    # that produced its own share would contradict it, so the diagnosis leaves it unassigned
    # (the team's compartment labels and production split can say where its gas came from).
    from benchmarks.accuracy_cases import compartments_with_connection

    built = compartments_with_connection(14, 4.0)
    gas = built.inputs.production_gas_mscf
    split = (("CM-1", 0.9 * gas), ("CM-9", 0.1 * gas))
    result = analyse_field(dataclasses.replace(built.inputs, production_by_well=split))
    assert next(w for w in result.diagnosis.wells if w.well == "CM-9").apart
    assert result.diagnosis.neighbour_wells == ()
    assert result.basis.model != "single_tank"  # still never the line through both groups
