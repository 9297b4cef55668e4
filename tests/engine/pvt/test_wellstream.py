"""Which gravity z uses for a wet gas (engine/pvt/wellstream.py): recombined, given, checked.

The recombination is the published form (R g_g + 4,584 g_o)/(R + 132,800 g_o/M_o)
(Gold et al. 1989 as printed in Craft & Hawkins 1991; docs/domain-reference.md §2.6;
constants from memory), evaluated here by hand with the printed constants.
"""

import pytest

from server.engine.pvt import wellstream as ws
from server.engine.pvt.condensate import wellstream_gravity


def test_recombination_matches_the_hand_computed_textbook_form():
    # Worked by hand: separator gas 0.70, 50 stb/MMscf (R = 20,000 scf/stb) of 55 °API condensate.
    # g_o = 141.5/186.5 = 0.75871; M_o = 6084/49.1 = 123.910 (Cragoe); 4,584 g_o = 3,477.9;
    # 132,800 g_o/M_o = 813.14; g_w = (14,000 + 3,477.9)/(20,000 + 813.14) = 0.83975.
    assert wellstream_gravity(0.70, 50.0, 55.0) == pytest.approx(0.83975, rel=2e-4)
    choice = ws.gravity_for_z(
        separator_gas_gravity=0.70,
        given_wellstream_gravity=None,
        condensate_yield_stb_per_mmscf=50.0,
        api=55.0,
        recombine=True,
    )
    assert choice.source == "recombined" and choice.gravity == pytest.approx(0.83975, rel=2e-4)
    assert choice.warning is None  # a usual separator gas at a usual yield


def test_given_wellstream_gravity_is_used_as_given():
    alone = ws.gravity_for_z(
        separator_gas_gravity=None,
        given_wellstream_gravity=0.93,
        condensate_yield_stb_per_mmscf=110.0,
        api=50.0,
        recombine=True,
    )
    assert (alone.gravity, alone.source, alone.warning) == (0.93, "given", None)
    assert alone.note == "z uses the well-stream gravity 0.9300 as given"
    # Both given and consistent (the well-stream gravity is the recombination of the separator gas,
    # rounded to 3 decimals as a report would print it): the given one is used, no warning.
    rec = wellstream_gravity(0.68, 110.0, 50.0)
    both = ws.gravity_for_z(
        separator_gas_gravity=0.68,
        given_wellstream_gravity=round(rec, 3),
        condensate_yield_stb_per_mmscf=110.0,
        api=50.0,
        recombine=True,
    )
    assert both.gravity == round(rec, 3) and both.source == "given" and both.warning is None
    assert both.recombined == pytest.approx(rec) and "gives 0.99" in both.note
    # The condensate correction off does not change which gravity describes the reservoir gas.
    off = ws.gravity_for_z(
        separator_gas_gravity=0.68,
        given_wellstream_gravity=0.95,
        condensate_yield_stb_per_mmscf=110.0,
        api=50.0,
        recombine=False,
    )
    assert off.gravity == 0.95


def test_given_and_recombined_gravities_that_disagree_are_reported():
    rec = wellstream_gravity(0.68, 110.0, 50.0)  # 0.9903
    # 2.5 % apart: within the stated 3 % tolerance; 4 % apart: reported, the given one still used
    near = ws.gravity_for_z(
        separator_gas_gravity=0.68,
        given_wellstream_gravity=rec * 1.025,
        condensate_yield_stb_per_mmscf=110.0,
        api=50.0,
        recombine=True,
    )
    assert near.warning is None
    far = ws.gravity_for_z(
        separator_gas_gravity=0.68,
        given_wellstream_gravity=rec * 1.04,
        condensate_yield_stb_per_mmscf=110.0,
        api=50.0,
        recombine=True,
    )
    assert far.gravity == pytest.approx(rec * 1.04) and far.source == "given"
    assert "disagree" in far.warning and "4 % apart (more than 3 %)" in far.warning
    # No condensate: the separator gas is the whole stream, so a different given gravity is reported too.
    dry = ws.gravity_for_z(
        separator_gas_gravity=0.65,
        given_wellstream_gravity=0.75,
        condensate_yield_stb_per_mmscf=0.0,
        api=None,
        recombine=True,
    )
    assert dry.gravity == 0.75 and "whole stream" in dry.warning


def test_implausible_recombination_is_warned_about():
    # The case: the well-stream gravity (here 0.99, a 0.68 separator gas with 110 stb/MMscf
    # of 50 °API condensate) entered as the separator gravity. Recombined again it becomes 1.28, far
    # above the 0.92-1.15 that separator gases of 0.60-0.85 give at this yield.
    lo, hi = ws.usual_wellstream_range(110.0, 50.0)
    assert (lo, hi) == (pytest.approx(wellstream_gravity(0.60, 110.0, 50.0)), pytest.approx(1.1486, abs=1e-4))
    text = ws.recombination_warning(0.99, 110.0, 50.0)
    assert text.startswith("the separator gas gravity 0.990 is heavier than separator gas usually is")
    assert "it becomes 1.278" in text and "0.918 to 1.149" in text
    assert "enter it as the well-stream gravity" in text
    # Normal data: no warning (a usual separator gas; a heavy dry gas that is not recombined;
    # a heavy gas with so little condensate that recombining hardly moves it).
    assert ws.recombination_warning(0.68, 110.0, 50.0) is None
    assert ws.recombination_warning(0.85, 110.0, 50.0) is None
    assert ws.recombination_warning(0.90, 1.0, 50.0) is None
    dry = ws.gravity_for_z(
        separator_gas_gravity=0.95,
        given_wellstream_gravity=None,
        condensate_yield_stb_per_mmscf=0.0,
        api=None,
        recombine=True,
    )
    assert dry.source == "separator" and dry.warning is None


def test_the_rule_reads_the_hydrocarbon_part_of_the_gas():
    # 0.90 with 20 % CO2: hydrocarbon part (0.90 - 1.5196 x 0.2)/0.8 = 0.745 (inerts rule, §1.5 of
    # the domain reference): a usual separator gas, no warning; without the CO2 it would be one.
    assert ws.recombination_warning(0.90, 60.0, 50.0, inerts=(0.2, 0.0, 0.0)) is None
    assert ws.recombination_warning(0.90, 60.0, 50.0) is not None


def test_a_gravity_is_needed():
    with pytest.raises(ValueError, match="separator gas gravity or a well-stream gravity"):
        ws.gravity_for_z(
            separator_gas_gravity=None,
            given_wellstream_gravity=None,
            condensate_yield_stb_per_mmscf=0.0,
            api=None,
            recombine=True,
        )
