"""Pseudo-criticals and gas properties in field units.

"Check value N" refers to docs/domain-reference.md §8. Formula check values (6-8) are
identities of the published equations, asserted to 1e-9 (6, 7) or to the printed 1e-4
(8). Property values (12, 13) were computed for the reference with the same
correlations and are asserted to their printed precision.
"""

import dataclasses

import numpy as np
import pytest

from server.engine.errors import InputRangeError
from server.engine.pvt.gas import (
    GasFluid,
    bg_rb_per_mscf,
    bg_rcf_per_scf,
    fluid_pseudo_criticals,
    gas_compressibility_per_psi,
    gas_density_lb_per_ft3,
    gas_properties,
    gas_viscosity_lee_gonzalez_eakin,
    z_factor,
    z_source_label,
)
from server.engine.pvt.pseudocritical import (
    hydrocarbon_gravity,
    pseudo_critical_standing_condensate,
    pseudo_critical_standing_natural_gas,
    pseudo_critical_sutton,
    pseudo_criticals,
    wichert_aziz,
)
from server.engine.units import ISO_15C, KPA_PER_PSI, K_from_degF


def test_sutton_check_6():
    # Check value 6 (Sutton 1985 formula, verified transcription): 365.110 degR, 670.129 psia.
    tpc, ppc = pseudo_critical_sutton(0.65)
    assert tpc == pytest.approx(365.110, abs=1e-9 + 5e-4)
    assert ppc == pytest.approx(670.129, abs=5e-4)
    # Printed to 3 decimals: the exact formula values are 365.11025 and 670.1289.
    assert tpc == pytest.approx(169.2 + 349.5 * 0.65 - 74.0 * 0.65**2, abs=1e-9)
    assert ppc == pytest.approx(756.8 - 131.0 * 0.65 - 3.6 * 0.65**2, abs=1e-9)


def test_standing_check_7():
    # Check value 7 (Standing 1977 pp. 125-126): gamma 0.70 -> 389.375 / 669.125 (natural gas),
    # 382.965 / 664.371 (condensate).
    assert pseudo_critical_standing_natural_gas(0.70) == pytest.approx((389.375, 669.125), abs=1e-9)
    tpc, ppc = pseudo_critical_standing_condensate(0.70)
    assert tpc == pytest.approx(382.965, abs=1e-9)
    assert ppc == pytest.approx(664.371, abs=1e-9)


def test_wichert_aziz_check_8():
    # Check value 8: Tpc 400, ppc 700, H2S 0.05, CO2 0.10 -> eps 19.3475, 380.6525, 664.6148.
    tpc, ppc, eps = wichert_aziz(400.0, 700.0, 0.10, 0.05)
    assert eps == pytest.approx(19.3475, abs=1e-4)
    assert tpc == pytest.approx(380.6525, abs=1e-4)
    assert ppc == pytest.approx(664.6148, abs=1e-4)
    assert wichert_aziz(400.0, 700.0, 0.0, 0.0) == (400.0, 700.0, 0.0)
    with pytest.raises(InputRangeError, match="Wichert-Aziz covers"):
        wichert_aziz(400.0, 700.0, 0.60, 0.0)


def test_lean_mix_pseudo_criticals_section_1_9():
    # §1.9: lean gas (gamma 0.6161, 1 % N2, 1 % CO2): Sutton 356.44 degR / 674.7 psia, after
    # Wichert-Aziz (eps 1.826 degR) 354.61 degR / 671.3 psia. Below the inerts thresholds.
    pc = pseudo_criticals(0.6161, 0.01, 0.0, 0.01)
    assert not pc.inerts_applied
    assert pc.wichert_aziz_epsilon_degR == pytest.approx(1.826, abs=1e-3)
    assert pc.tpc_degR == pytest.approx(354.61, abs=0.01)
    assert pc.ppc_psia == pytest.approx(671.3, abs=0.1)


def test_inerts_procedure_mixes_inert_criticals():
    # Stored course handout transcription (§1.4): gamma_h, then mix with 1306/1071/493.1 psia
    # and 672.35/547.58/227.16 degR, then Wichert-Aziz. Re-derived step by step here.
    g, co2, h2s, n2 = 0.72, 0.06, 0.02, 0.01
    gh = (g - 1.1767 * h2s - 1.5196 * co2 - 0.9672 * n2) / (1 - co2 - h2s - n2)
    assert hydrocarbon_gravity(g, co2, h2s, n2) == pytest.approx(gh, rel=1e-14)
    tpch, ppch = pseudo_critical_sutton(gh)
    tpc = 0.91 * tpch + 672.35 * h2s + 547.58 * co2 + 227.16 * n2
    ppc = 0.91 * ppch + 1306 * h2s + 1071 * co2 + 493.1 * n2
    tpc_wa, ppc_wa, eps = wichert_aziz(tpc, ppc, co2, h2s)
    pc = pseudo_criticals(g, co2, h2s, n2)  # any H2S -> the procedure applies ("auto")
    assert pc.inerts_applied and pc.hydrocarbon_gravity == pytest.approx(gh)
    assert (pc.tpc_degR, pc.ppc_psia, pc.wichert_aziz_epsilon_degR) == pytest.approx((tpc_wa, ppc_wa, eps))
    never = pseudo_criticals(g, co2, h2s, n2, inerts="never")
    assert not never.inerts_applied and never.tpc_degR != pytest.approx(pc.tpc_degR)
    assert pseudo_criticals(0.80, 0.13, 0.0, 0.0).inerts_applied  # CO2 above 12 %
    assert pseudo_criticals(0.65, 0.0, 0.0, 0.04).inerts_applied  # N2 above 3 %
    assert not pseudo_criticals(0.65, 0.05, 0.0, 0.02).inerts_applied


def test_inconsistent_gravity_and_composition_raise():
    with pytest.raises(InputRangeError, match="lighter than methane"):
        hydrocarbon_gravity(0.60, 0.20, 0.0, 0.0)
    with pytest.raises(InputRangeError, match="lighter than methane"):
        pseudo_critical_sutton(0.3)
    with pytest.raises(ValueError, match="unknown pseudo-critical method 'kay'"):
        pseudo_criticals(0.65, correlation="kay")
    with pytest.raises(ValueError, match="unknown inerts method"):
        pseudo_criticals(0.65, inerts="sometimes")


def test_gas_fluid_validates_and_keeps_old_positional_form():
    f = GasFluid(0.72, 0.06, 0.02, 0.01)  # existing callers pass (gravity, co2, h2s, n2)
    assert f.pseudo_critical_method == "sutton" and f.inerts_method == "auto"
    assert f.molar_mass_lb_per_lbmol == pytest.approx(0.72 * 28.9647)
    with pytest.raises(InputRangeError):
        GasFluid(0.65, y_co2_frac=-0.1)
    with pytest.raises(InputRangeError):
        GasFluid(0.65, 0.5, 0.3, 0.3)
    with pytest.raises(InputRangeError):
        GasFluid(float("nan"))
    with pytest.raises(ValueError, match="unknown pseudo-critical method"):
        GasFluid(0.65, pseudo_critical_method="piper")
    with pytest.raises(ValueError, match="unknown inerts method"):
        GasFluid(0.65, inerts_method="maybe")


def test_dak_single_point_check_12():
    # Check value 12: gamma 0.70 Sutton, 200 degF, 2000 psia -> z = 0.88037.
    assert z_factor(2000.0, 200.0, GasFluid(0.70)) == pytest.approx(0.88037, abs=1e-4)


def test_single_points_section_1_10():
    # §1.10 (computed): gamma 0.70 Sutton, 200 degF, p = 1000/3000/5000 psia:
    # DAK 0.92131, 0.88800, 0.99972; HY 0.92241, 0.88021 (2000), 0.88556, 0.99949.
    p = np.array([1000.0, 3000.0, 5000.0])
    np.testing.assert_allclose(z_factor(p, 200.0, GasFluid(0.70)), [0.92131, 0.88800, 0.99972], atol=1e-4)
    np.testing.assert_allclose(
        z_factor(np.r_[1000.0, 2000.0, 3000.0, 5000.0], 200.0, GasFluid(0.70), "hall_yarborough"),
        [0.92241, 0.88021, 0.88556, 0.99949],
        atol=1e-4,
    )


def test_gas_properties_check_13():
    # Check value 13: gamma 0.65 Sutton/DAK, 200 degF, 2000 psia: z 0.89735; Bg 1.49078 rb/Mscf;
    # rho 5.9273 lb/ft3; mu (LGE) 0.01665 cP; cg 514.7e-6 1/psi. Tolerances from §8.
    props = gas_properties(2000.0, 200.0, GasFluid(0.65))
    assert props.z_factor == pytest.approx(0.89735, abs=1e-4)
    assert props.bg_rb_per_mscf == pytest.approx(1.49078, rel=1e-4)
    assert props.density_lb_per_ft3 == pytest.approx(5.9273, rel=1e-4)
    assert props.viscosity_cp == pytest.approx(0.01665, rel=5e-3)
    assert props.compressibility_per_psi == pytest.approx(514.7e-6, rel=5e-3)


def test_viscosity_and_cg_section_1_7_1_8():
    # §1.7: 5000 psia -> z 1.00642, mu 0.02521 cP. §1.8: cg = 1057.9, 514.7, 304.2, 132.6
    # x1e-6 1/psi at 1000, 2000, 3000, 5000 psia (gamma 0.65, Sutton/DAK, 200 degF).
    fluid = GasFluid(0.65)
    props = gas_properties(np.array([1000.0, 2000.0, 3000.0, 5000.0]), 200.0, fluid)
    assert props.z_factor[3] == pytest.approx(1.00642, abs=1e-4)
    assert props.viscosity_cp[3] == pytest.approx(0.02521, rel=5e-3)
    np.testing.assert_allclose(props.compressibility_per_psi * 1e6, [1057.9, 514.7, 304.2, 132.6], rtol=5e-3)


def test_cg_of_an_ideal_gas_is_one_over_p():
    # Exact thermodynamics (§1.8): z = const -> cg = 1/p.
    p = np.array([100.0, 1000.0, 5000.0])
    cg = gas_compressibility_per_psi(p, lambda q: np.full_like(q, 0.9))
    np.testing.assert_allclose(cg, 1 / p, rtol=1e-12)
    with pytest.raises(InputRangeError):
        gas_compressibility_per_psi(0.0, lambda q: q)


def test_lge_formula_written_out():
    # Lee, Gonzalez & Eakin (1966) as printed in §1.7, evaluated directly.
    t, m, rho = 200.0 + 459.67, 0.65 * 28.9647, 5.9273 / 62.428
    k = (9.4 + 0.02 * m) * t**1.5 / (209 + 19 * m + t)
    x = 3.5 + 986 / t + 0.01 * m
    mu = 1e-4 * k * np.exp(x * rho ** (2.4 - 0.2 * x))
    assert gas_viscosity_lee_gonzalez_eakin(200.0, 0.65, 5.9273) == pytest.approx(mu, rel=1e-4)


def test_bg_units_and_standard_conditions():
    # Bg at any standard conditions is (p_sc/T_sc) zT/p; SI check value 3 through field units.
    z, p_psia, t_degF = 0.9, 3000.0, 180.0
    bg_iso = bg_rcf_per_scf(p_psia, t_degF, z, ISO_15C)
    assert bg_iso == pytest.approx(0.351640 * z * K_from_degF(t_degF) / (p_psia * KPA_PER_PSI), rel=1e-6)
    bg = bg_rb_per_mscf(p_psia, t_degF, z)
    assert bg == pytest.approx(5.03679 * z * (t_degF + 459.67) / p_psia, rel=1e-5)
    with pytest.raises(InputRangeError):
        bg_rcf_per_scf(0.0, 180.0, 0.9)


def test_density_is_real_gas_law():
    rho = gas_density_lb_per_ft3(2000.0, 200.0, 0.89735, 0.65)
    assert rho == pytest.approx(2000 * 0.65 * 28.9647 / (0.89735 * 10.7316 * 659.67), rel=1e-5)


def test_z_factor_field_errors_name_the_problem():
    fluid = GasFluid(0.65)
    with pytest.raises(InputRangeError, match="not negative"):
        z_factor(-10.0, 200.0, fluid)
    with pytest.raises(InputRangeError, match="below the pseudo-critical temperature"):
        z_factor(2000.0, -120.0, fluid)  # Tpc(0.65) = 365 degR = -94.6 degF
    with pytest.raises(InputRangeError, match="above 30 times"):
        z_factor(25000.0, 200.0, fluid)
    with pytest.raises(ValueError, match="unknown z-factor method 'papay'"):
        z_factor(2000.0, 200.0, fluid, method="papay")
    assert np.isnan(z_factor(np.nan, 200.0, fluid))
    assert z_factor(np.array([]), 200.0, fluid).shape == (0,)


def test_pseudo_critical_method_travels_with_the_fluid():
    sutton = GasFluid(0.70)
    cond = dataclasses.replace(sutton, pseudo_critical_method="standing_condensate")
    assert fluid_pseudo_criticals(cond).tpc_degR == pytest.approx(382.965)
    tpr = (200 + 459.67) / 382.965
    from server.engine.pvt.zfactor import z_factor_dranchuk_abou_kassem

    assert z_factor(2000.0, 200.0, cond) == pytest.approx(z_factor_dranchuk_abou_kassem(2000 / 664.371, tpr))
    assert "Standing (1977) gas condensate" in z_source_label(cond, "dak")
    assert "Hall-Yarborough" in z_source_label(sutton, "hall_yarborough")
