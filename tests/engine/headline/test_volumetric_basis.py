"""A young field: the headline rests on the volumetric estimate until material balance can judge.

Forward model: server/synthetic/tank.py (a closed tank stepped month by month, independent of
the estimators). Common practice in gas reserves work: before enough depletion the GIIP is the
volumetric estimate and material balance the later check; EUR is what a closed tank gives up
to the abandonment pressure, RF = 1 − (p_a/z_a)/(p_i/z_i) (Craft & Hawkins, *Applied Petroleum
Reservoir Engineering*; docs/domain-reference.md §2.1).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from server.engine.analysis import analyse_field
from server.engine.plan import FieldPlan
from server.engine.pvt.gas import GasFluid
from server.engine.volumetrics.estimate import volumetric_range
from server.synthetic.tank import TankSpec, simulate
from tests.engine.forward_histories import FLUID, MONTH_DAYS, history_inputs, with_choices

# Mapped on purpose away from the simulated 100 Bscf, so the headline is seen to be the map's.
VOLUMETRIC = volumetric_range(90.0, 110.0, 140.0)
PI_PSIA, PA_PSIA, T_DEGF = 5000.0, 1000.0, 200.0


@pytest.fixture(scope="module")
def young():
    # 5,000 Mscf/d for 3 years from 100 Bscf: 5.5 % produced, p/z down about 5 %.
    inputs, truth = history_inputs(rate_mscf_d=5000.0, months=36, noise_psi=10.0, seed=1)
    return dataclasses.replace(inputs, volumetric=VOLUMETRIC), truth


def test_too_little_depletion_without_a_volumetric_estimate_is_still_refused(young):
    inputs, _ = young
    a = analyse_field(dataclasses.replace(inputs, volumetric=None))
    assert a.status == "refused" and a.basis is None and a.giip_best_bscf is None
    assert a.message.startswith("too little depletion to judge")
    assert "too_little_depletion" in {f.code for f in a.flags}


def test_a_young_field_books_the_volumetric_p90_p50_p10(young):
    inputs, truth = young
    a = analyse_field(inputs)
    assert a.status == "ok" and a.pz is None  # no p/z line: the charts and pages must not need one
    b = a.basis
    assert (b.model, b.source, b.recommended_model) == ("volumetric", "automatic", "volumetric")
    assert (a.giip_low_bscf, a.giip_best_bscf, a.giip_high_bscf) == (90.0, 110.0, 140.0)
    assert "volumetric estimate" in a.giip_range_kind and "volumetric estimate" in b.reason
    assert "too little depletion" in b.reason and "too little depletion" in a.message
    # The flag stays, and nothing else holds the volumetric estimate against itself.
    assert {f.code for f in a.flags} & {"too_little_depletion"} == {"too_little_depletion"}
    assert not {f.code for f in a.flags} & {"dynamic_below_volumetric", "dynamic_above_volumetric"}
    assert a.line_giip_best_bscf is None  # the refused line is not shown as a value
    gp = a.cumulative_gas_bscf
    assert gp == pytest.approx(truth["gp_bscf"][-1], rel=1e-6)
    assert a.remaining_bscf == pytest.approx(a.eur_bscf - gp)
    assert b.eur_low_bscf / 90.0 == pytest.approx(a.recovery_factor_frac)
    assert b.eur_high_bscf / 140.0 == pytest.approx(a.recovery_factor_frac)
    assert any("volumetric estimate's" in n for n in a.notes)


def test_eur_is_the_forward_tank_stepped_to_the_abandonment_pressure(young):
    """The simulator (its own pore-volume balance and z table) produces a 110 Bscf tank until
    its pressure reaches p_a; the gas produced then is the closed-form EUR."""
    a = analyse_field(young[0])
    months = 12 * 40
    t_days = np.arange(1, months + 1) * MONTH_DAYS
    hist = simulate(TankSpec(110.0, PI_PSIA, T_DEGF, FLUID), t_days, np.full(months, 8000.0))
    p, gp = hist.p1_psia, hist.gp_bscf
    assert p[-1] < PA_PSIA < p[0]
    eur_sim = float(np.interp(PA_PSIA, p[::-1], gp[::-1]))
    assert a.eur_bscf == pytest.approx(eur_sim, rel=2e-3)  # monthly steps, linear between them


def test_the_recovery_factor_against_coolprop_z():
    """RF with z from CoolProp's multiparameter mixture EOS (a lean gas, gravity 0.616) at p_i
    and p_a, against the engine's (Dranchuk & Abou-Kassem with Sutton pseudo-criticals). The
    correlation is good to 1-2 % in z (domain reference §1.9), so RF agrees to 0.01."""
    cp = pytest.importorskip("CoolProp.CoolProp")
    lean = "Methane[0.90]&Ethane[0.06]&Propane[0.02]&Nitrogen[0.01]&CarbonDioxide[0.01]"
    molar = 0.90 * 16.043 + 0.06 * 30.069 + 0.02 * 44.096 + 0.01 * 28.013 + 0.01 * 44.010
    gravity = molar / 28.965  # molar mass of air [g/mol] (from memory)
    t_k = (T_DEGF - 32.0) / 1.8 + 273.15

    def z(p_psia):
        return cp.PropsSI("Z", "T", t_k, "P", p_psia * 6894.757293168, lean)

    rf_cp = 1.0 - (PA_PSIA / z(PA_PSIA)) / (PI_PSIA / z(PI_PSIA))
    inputs, _ = history_inputs(rate_mscf_d=5000.0, months=36, noise_psi=10.0, seed=1)
    inputs = dataclasses.replace(inputs, fluid=GasFluid(round(gravity, 3)), volumetric=VOLUMETRIC)
    a = analyse_field(inputs)
    assert a.basis.model == "volumetric"
    assert a.recovery_factor_frac == pytest.approx(rf_cp, abs=0.01)
    assert a.eur_bscf == pytest.approx(110.0 * a.recovery_factor_frac)


def test_the_engineers_choice_still_wins(young):
    inputs, _ = young
    a = analyse_field(with_choices(inputs, basis_model="single_tank", basis_reason="the line is enough"))
    assert a.basis.model == "single_tank" and a.basis.source == "engineer"
    assert a.basis.engineer_reason == "the line is enough"
    assert a.basis.recommended_model == "volumetric"  # the automatic recommendation beside it
    assert a.giip_best_bscf != 110.0
    back = analyse_field(with_choices(inputs, basis_model="automatic", basis_reason=""))
    assert back.basis.model == "volumetric" and back.giip_best_bscf == 110.0
    mine = analyse_field(with_choices(inputs, basis_model="volumetric", basis_reason="the map is recent"))
    assert (mine.basis.model, mine.basis.source, mine.giip_best_bscf) == ("volumetric", "engineer", 110.0)
    assert mine.basis.engineer_reason == "the map is recent"


def test_a_depleted_field_with_the_volumetric_choice_falls_back_to_the_evidence_and_says_so():
    inputs, _ = history_inputs(seed=0)  # 96 months at 20,000 Mscf/d: about 58 % produced
    inputs = dataclasses.replace(inputs, volumetric=VOLUMETRIC)
    a = analyse_field(with_choices(inputs, basis_model="volumetric", basis_reason="the map"))
    assert a.basis.model == "single_tank" and a.basis.source == "automatic"
    assert any("no GIIP and EUR" in n for n in a.basis.notes)


def test_a_plan_forecasts_from_the_volumetric_cases(young):
    inputs, _ = young
    plan = FieldPlan(plateau_rate_mscf_per_day=8000.0, economic_limit_mscf_per_day=500.0)
    a = analyse_field(dataclasses.replace(inputs, plan=plan))
    fc = a.forecast
    assert fc is not None and fc.basis_model == "volumetric"
    assert [p.case for p in fc.profiles] == ["low", "best", "high"]
    assert [p.giip_bscf for p in fc.profiles] == pytest.approx([90.0, 110.0, 140.0])
    low, best, high = fc.profiles
    assert low.eur_bscf < best.eur_bscf < high.eur_bscf
    assert best.eur_bscf <= a.eur_bscf + 1e-9  # a profile never recovers more than the tank gives up
    assert "closed (volumetric) tank" in fc.notes[0]


def test_a_chosen_model_without_results_on_a_young_field_keeps_the_volumetric_basis_and_says_so(young):
    a = analyse_field(with_choices(young[0], basis_model="two_tank", basis_reason="a fault"))
    assert a.basis.model == "volumetric" and a.basis.source == "automatic"
    assert any("two_tank" in n and "no GIIP and EUR" in n for n in a.basis.notes)
