"""Havlena-Odeh terms and the Cole plot.

Sources: docs/domain-reference.md §2.2-2.3 (equations), §7.2-7.4 and §7.6 (synthetic cases
computed there: p, z, Bg and F/Eg columns), check value 13 (Bg), Pletcher (2002) for the
expected Cole-plot signatures (verified abstract: weak water drive gives a negative slope).
Trend rules (2 % depletion cut-off, 1 % materiality, 5 % significance) are common practice,
stated in server/engine/tank/balance_terms.py.
"""

from dataclasses import replace

import numpy as np
import pytest

from server.engine.errors import InputRangeError
from server.engine.pvt.gas import GasFluid, bg_rb_per_mscf
from server.engine.tank.balance_terms import (
    COLE_MIN_DEPLETION_FRAC,
    cole_plot,
    field_cole_plots,
    field_havlena_odeh_terms,
    havlena_odeh_terms,
    underground_withdrawal_rb,
)
from server.synthetic.aquifer import VehAquifer
from server.synthetic.tank import PotAquifer, TankSpec, simulate
from tests.engine import section_7_2 as c72
from tests.engine.aquifer_cases import synthetic_field


def _terms_7_2():
    r = c72.ROWS
    return havlena_odeh_terms(
        r[:, 3], r[:, 2], t_degF=c72.T_DEGF, initial_pressure_psia=c72.PI_PSIA, fluid=c72.FLUID
    )


def test_terms_reproduce_section_7_2_columns():
    t = _terms_7_2()
    r = c72.ROWS
    # Bgi = 0.668793 rb/Mscf with 14.696 psia / 519.67 degR (§7 preamble, 6 decimals).
    assert t.bgi_rb_per_mscf == pytest.approx(c72.BGI_RB_PER_MSCF, abs=1e-6)
    assert t.z_factor == pytest.approx(r[:, 4], abs=1e-5)
    # Bg printed to 1e-6; pressures to 0.01 psia move it by < 3e-6 relative.
    assert t.bg_rb_per_mscf == pytest.approx(r[:, 6], abs=4e-6)
    # F/Eg printed to 1e-3 Bscf; the 0.005-psi rounding of p moves early points by up to 0.003.
    ratio = t.f_rb / t.eg_rb_per_mscf / 1e6
    assert ratio == pytest.approx(r[:, 8], abs=4e-3)
    # Intermediate step: F = G Eg + We Bw with G = 100 Bscf, Bw = 1 (Havlena-Odeh identity);
    # We is printed to 1e-4 MMrb.
    assert (t.f_rb - 100e6 * t.eg_rb_per_mscf) / 1e6 == pytest.approx(r[:, 7], abs=2e-3)


def test_bg_check_13_and_withdrawal():
    # Check value 13: γ 0.65 Sutton/DAK, 200 degF, 2000 psia -> z 0.89735, Bg 1.49078 rb/Mscf (1e-4 rel).
    t = havlena_odeh_terms([2000.0], [0.0], t_degF=200.0, initial_pressure_psia=5000.0, fluid=GasFluid(0.65))
    assert t.z_factor[0] == pytest.approx(0.89735, abs=1e-4)
    assert t.bg_rb_per_mscf[0] == pytest.approx(1.49078, rel=1e-4)
    assert float(bg_rb_per_mscf(2000.0, 200.0, t.z_factor[0])) == pytest.approx(1.49078, rel=1e-4)
    # F = Gp Bg + Wp Bw: 2 Bscf at 1.5 rb/Mscf and 10,000 stb at 1.02 rb/stb.
    assert underground_withdrawal_rb(2.0, 1.5, 10_000.0, 1.02) == pytest.approx(3e6 + 10_200.0)


def test_rock_and_water_expansion_section_7_4():
    # §7.4 geopressured case: ce = 14.333e-6 1/psi (cf 10e-6, cw 3e-6, Swi 0.25), pi 9000 psia.
    # Efw = Bgi ce (pi − p); the modified Cole plot F/(Eg + Efw) is flat at the true G = 100 Bscf
    # while the plain one falls (compressibility support looks like a weak aquifer; Pletcher 2002).
    gp = np.array([5, 10, 15, 20, 25, 30, 40, 50, 60.0])
    p = np.array([8210.7, 7480.5, 6807.7, 6189.5, 5622.3, 5101.6, 4180.5, 3386.9, 2682.4])
    ce = (10e-6 + 3e-6 * 0.25) / 0.75
    t = havlena_odeh_terms(
        p, gp, t_degF=200.0, initial_pressure_psia=9000.0, fluid=GasFluid(0.65), ce_per_psi=ce
    )
    assert t.z_factor == pytest.approx(
        [1.25849, 1.19746, 1.14249, 1.09357, 1.05059, 1.01337, 0.95526, 0.91735, 0.89820], abs=1e-5
    )
    assert t.efw_rb_per_mscf == pytest.approx(t.bgi_rb_per_mscf * ce * (9000.0 - p))
    modified = cole_plot(t, modified=True)
    # p printed to 0.1 psi: F/Et within 0.005 Bscf of 100.
    assert modified.ratio_bscf == pytest.approx(100.0, abs=5e-3)
    assert modified.trend.direction == "flat"
    plain = cole_plot(t)
    assert plain.trend.direction == "falling"
    assert plain.ratio_bscf[0] > 120 > plain.ratio_bscf[-1]


def test_cole_falling_for_the_pot_aquifer_of_section_7_3():
    # §7.3: pot aquifer ct Wi = 180 bbl/psi, G = 100 Bscf; F/Eg falls 101.959 -> 100.582
    # (Pletcher 2002: weak water drive has a negative Cole slope). The pressures come from the
    # independent forward model; they reproduce the printed ones (0.1 psi).
    gp_rows = np.array([2, 5, 10, 20, 30, 40, 50, 60.0])
    spec = TankSpec(100.0, 5000.0, 200.0, GasFluid(0.65), aquifer=PotAquifer(180.0))
    rate = 1e4  # Mscf/d; the pot aquifer has no time, so the schedule does not matter
    h = simulate(spec, gp_rows * 1e6 / rate, np.full(gp_rows.size, rate))
    assert h.p1_psia == pytest.approx(
        [4854.4, 4644.0, 4313.2, 3714.0, 3180.6, 2694.7, 2240.9, 1805.5], abs=0.06
    )
    t = havlena_odeh_terms(
        h.p1_psia, h.gp_bscf, t_degF=200.0, initial_pressure_psia=5000.0, fluid=GasFluid(0.65)
    )
    cp = cole_plot(t)
    assert cp.ratio_bscf == pytest.approx(
        [101.959, 101.856, 101.695, 101.409, 101.162, 100.945, 100.754, 100.582], abs=1.5e-3
    )
    assert cp.trend.direction == "falling"
    assert cp.trend.slope < 0 and cp.trend.p_value < 0.05


def test_cole_rising_for_the_moderate_radial_aquifer():
    # §7.2 aquifer (Cole F/Eg rises 107 -> 122 Bscf), quarterly surveys with 5 psi noise.
    f = synthetic_field(
        veh=VehAquifer(c72.U_RB_PER_PSI, c72.TD_PER_DAY),
        rate_mscf_per_day=20000.0,
        years=8,
        n_surveys=31,
        sigma_psia=5.0,
    )
    cp, modified = field_cole_plots(f.inputs, f.prepared)
    assert modified is None  # no compressibility given
    assert cp.trend.direction == "rising"
    assert cp.trend.change_frac > 0.01 and cp.trend.p_value < 0.05
    # Noise-free, every month (the forward model of §7.2): rising, although the hump after
    # 6 years leaves structured residuals about the line.
    h = f.history
    terms = havlena_odeh_terms(
        h.p1_psia, h.gp_bscf, t_degF=c72.T_DEGF, initial_pressure_psia=c72.PI_PSIA, fluid=c72.FLUID
    )
    assert cole_plot(terms).trend.direction == "rising"


def test_cole_flat_for_a_volumetric_tank():
    # §7.6 exact volumetric line (check value 24): F/Eg = G everywhere.
    gp = np.array([5, 10, 20, 30, 40, 50, 60, 70.0])
    p = np.array([4637.70, 4302.38, 3698.27, 3163.05, 2677.18, 2224.42, 1790.64, 1363.02])
    t = havlena_odeh_terms(p, gp, t_degF=200.0, initial_pressure_psia=5000.0, fluid=GasFluid(0.65))
    cp = cole_plot(t)
    assert cp.ratio_bscf == pytest.approx(100.0, abs=0.02)
    assert cp.trend.direction == "flat"
    # 40 surveys with 10 psi noise: still flat (no significant, material trend).
    f = synthetic_field(sigma_psia=10.0, seed=7)
    cp, _ = field_cole_plots(f.inputs, f.prepared)
    assert cp.trend.direction == "flat"
    assert abs(cp.trend.change_frac) < 0.01


def test_early_points_are_shown_but_not_used():
    f = synthetic_field(sigma_psia=10.0, seed=2)
    cp, _ = field_cole_plots(f.inputs, f.prepared)
    terms = field_havlena_odeh_terms(f.inputs, f.prepared)
    low = terms.depletion_frac < COLE_MIN_DEPLETION_FRAC
    assert low.any() and not cp.used[low].any()
    assert cp.used[~low & np.isfinite(cp.ratio_bscf)].all()
    assert any("2%" in n for n in cp.notes)
    # Fewer than 3 usable points: no trend is claimed.
    few = cole_plot(terms, weights=np.where(np.arange(terms.p_psia.size) < terms.p_psia.size - 2, 0.0, 1.0))
    assert few.trend.direction == "undetermined"


def test_field_terms_include_produced_water():
    f = synthetic_field(sigma_psia=0.0)
    water = np.full(f.inputs.production_gas_mscf.size, 500.0)  # stb per month
    inputs = replace(f.inputs, production_water_stb=water)
    dry = field_havlena_odeh_terms(f.inputs, f.prepared)
    wet = field_havlena_odeh_terms(inputs, f.prepared)
    assert wet.f_rb[-1] - dry.f_rb[-1] == pytest.approx(500.0 * water.size * 1.0, rel=0.01)
    assert wet.f_rb[0] == dry.f_rb[0]  # the initial survey: nothing produced yet
    # Water the engineer declares condensed vapour is already gas in G_p: not again in F.
    vapour = replace(inputs, choices=replace(inputs.choices, water_vapour_correction=True))
    assert field_havlena_odeh_terms(vapour, f.prepared).f_rb == pytest.approx(dry.f_rb)


def test_bad_input_raises():
    with pytest.raises(ValueError, match="equal length"):
        havlena_odeh_terms(
            [4000.0], [1.0, 2.0], t_degF=200.0, initial_pressure_psia=5000.0, fluid=GasFluid(0.65)
        )
    with pytest.raises(ValueError, match="give either"):
        havlena_odeh_terms([4000.0], [1.0], t_degF=200.0, initial_pressure_psia=5000.0)
    with pytest.raises(InputRangeError, match="compressibility"):
        havlena_odeh_terms(
            [4000.0],
            [1.0],
            t_degF=200.0,
            initial_pressure_psia=5000.0,
            fluid=GasFluid(0.65),
            ce_per_psi=-1e-6,
        )
