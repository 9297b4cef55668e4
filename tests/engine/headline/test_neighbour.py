"""The connected tank's range part for gas from the set-apart compartment (headline/neighbour.py).

Fields from the accuracy benchmark's two-compartment case (benchmarks/accuracy_cases.py): the
project's two-tank forward model (server/synthetic/, its own z table and time stepping) with a
producing compartment, a neighbour that flows into it, a late well in the neighbour, 12 psi
gauge noise and a mapped volume of the whole field within 5 % of the truth. The truth is the
producing compartment's GIIP, the forward model's input.
"""

from __future__ import annotations

import dataclasses
import math

import pytest

from benchmarks.accuracy_cases import CASE_BY_NAME
from server.engine.analysis import analyse_field
from server.engine.headline.connected import apart_wells, connected_tank_fit
from server.engine.headline.neighbour import neighbour_share
from server.engine.headline.ranges import Z90  # noqa: F401  (the P90 multiplier the part uses)
from server.engine.volumetrics.estimate import volumetric_range

SEEDS = range(1, 11)


@pytest.fixture(scope="module")
def fields():
    return [CASE_BY_NAME["compartments"].build(seed) for seed in SEEDS]


def _part(result, key):
    return next((p for p in result.basis.range_parts if p.key == key), None)


def _line_and_sized(inputs, result) -> tuple[float, float]:
    """(G_app, G_app (1 - Q/G_p)) [Bscf]: the line of the other wells, and the producers'
    compartment the neighbour part sizes from it with the field's map."""
    apart = apart_wells(result.diagnosis.wells)
    line = connected_tank_fit(result.prepared, inputs.choices, result.diagnosis.wells)
    share = neighbour_share(inputs, result.prepared, line.giip_bscf, apart) or 0.0
    return line.giip_bscf, line.giip_bscf * (1.0 - share)


def test_the_booked_range_holds_the_producers_compartment(fields):
    # Before the part, 5 of these 10 ranges missed the truth (the connected tank's line reads
    # 2-7 % high: gas from the neighbour). P90-P10 claims 80 %: of 10 fields, at least 6 with
    # 97 % probability (binomial).
    results = [(f.truth.giip_bscf, analyse_field(f.inputs)) for f in fields]
    assert all(a.basis.model == "connected_tank" for _, a in results)
    inside = [t for t, a in results if a.giip_low_bscf <= t <= a.giip_high_bscf]
    assert len(inside) >= 6, [(t, a.giip_low_bscf, a.giip_best_bscf, a.giip_high_bscf) for t, a in results]


def test_the_two_tank_fit_that_reads_the_set_apart_well_books_the_producers_tank(fields):
    # Engine 0.6.10: the two-tank fit reads the late well's surveys as its second tank's pressure
    # (the team's labels on odd seeds, the diagnosis' assignment on even ones); its producers'
    # tank is the connected tank, within 3 % of the forward model's G_1 where the line of the
    # other wells reads 2-8 % high. The feed is in the model, so no neighbour part is added.
    # Where the data leave the two-tank fit undetermined (seeds 6 and 7: the neighbour's size)
    # the line of the other wells stays the connected tank, with the neighbour part.
    read = 0
    for f in fields:
        a = analyse_field(f.inputs)
        assert a.basis.model == "connected_tank"
        if "producers' tank of the two-tank fit" in a.basis.reason:
            read += 1
            assert a.giip_best_bscf == pytest.approx(f.truth.giip_bscf, rel=0.03)
            assert _part(a, "neighbour") is None
            assert "from the hub tank" in a.basis.notes[-1]  # EUR stepped with the neighbour
            assert "the other compartment feeds the producers" in a.basis.notes[-1]
        else:
            assert "the line of the other wells" in a.basis.reason and _part(a, "neighbour") is not None
            assert f.truth.giip_bscf < a.giip_best_bscf < 1.08 * f.truth.giip_bscf
    assert read >= 8


def test_the_neighbours_share_sizes_the_producers_compartment(fields):
    # The balance G_1 = G_app (1 - Q/G_p) with Q = G_2 (1 - (p/z)/(p/z)_i) at the set-apart well:
    # against the forward model's G_1 within 3 %, where the line alone is 2-7 % high (the part
    # the range takes when no determined two-tank fit reads the set-apart well).
    for f in fields:
        a = analyse_field(f.inputs)
        line, sized = _line_and_sized(f.inputs, a)
        assert sized == pytest.approx(f.truth.giip_bscf, rel=0.03)
        assert line > f.truth.giip_bscf  # the line reads high: the part points down


@pytest.mark.parametrize("map_error", [0.8, 1.2])
def test_a_map_off_by_a_fifth_still_sizes_it_within_five_per_cent(fields, map_error):
    for f in fields[:4]:
        v = f.inputs.volumetric
        wrong = volumetric_range(v.p90_bscf * map_error, v.p50_bscf * map_error, v.p10_bscf * map_error)
        inputs = dataclasses.replace(f.inputs, volumetric=wrong)
        a = analyse_field(inputs)
        line, sized = _line_and_sized(inputs, a)
        if sized == line:  # the map holds no more than the connected tank
            continue
        assert sized == pytest.approx(f.truth.giip_bscf, rel=0.05)


def test_without_a_map_there_is_no_part(fields):
    a = analyse_field(dataclasses.replace(fields[0].inputs, volumetric=None))
    assert a.basis.model == "connected_tank" and _part(a, "neighbour") is None
    inputs = dataclasses.replace(fields[0].inputs, volumetric=None)
    assert neighbour_share(inputs, a.prepared, a.giip_best_bscf, apart_wells(a.diagnosis.wells)) is None


def test_the_share_solves_the_two_tank_balance_exactly():
    # Two-tank material balance by hand (domain reference §4.3): the producers' tank G1 = 60 and a
    # neighbour G2 = 40 Bscf (the map says V = 100); when the field has produced Gp = 30 Bscf the
    # set-apart well reads a p/z fall δ2 = 0.25, so Q = G2 δ2 = 10 Bscf crossed, the producers'
    # own balance G1 δ1 = Gp − Q gives δ1 = 1/3, and their line reads G_app = Gp/δ1 = 90 Bscf.
    # The share Q/Gp = 1/3 must come back exactly (before engine 0.6.8, G2 = V − G_app = 10
    # gave 1/12).
    from types import SimpleNamespace

    from server.engine.headline.neighbour import neighbour_share

    inputs = SimpleNamespace(volumetric=SimpleNamespace(p50_bscf=100.0))
    point = SimpleNamespace(well="N-1", gp_bscf=30.0, t_days=900.0, pz_psia=0.75 * 5000.0)
    prepared = SimpleNamespace(points=[point], initial_pz_psia=5000.0)
    assert neighbour_share(inputs, prepared, 90.0, ("N-1",)) == pytest.approx(1.0 / 3.0, rel=1e-12)


def test_the_neighbours_gas_lowers_the_low_end_only():
    # Gas from a neighbour can only make the producers' line read too large (Q >= 0), so the part
    # moves the P90 down by the share and leaves the P10 where the other parts put it.
    from server.engine.headline.ranges import booked_range
    from server.engine.headline.types import ModelOutcome
    from server.engine.thresholds import FlagThresholds

    basis = ModelOutcome(
        "connected_tank", "Connected tank", 80.0, 78.0, 82.0, 60.0, 0.75, 30.0, True, "determined", "closed"
    )
    th = FlagThresholds()
    common = dict(scatter_sigma=0.02, fall_frac=0.4, late_pressure_psia=2500.0, lab_z=False, th=th)
    low0, high0, _ = booked_range(basis, [], **common)
    share = 0.12
    low1, high1, parts = booked_range(basis, [], neighbour_sigma=-math.log(1.0 - share) / Z90, **common)
    assert high1 == pytest.approx(high0, rel=1e-12)
    assert low1 == pytest.approx(low0 * (1.0 - share), rel=1e-12)
    assert "neighbour" in {p.key for p in parts}
