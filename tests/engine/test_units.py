"""Units and standard conditions.

"Check value N" refers to docs/domain-reference.md §8 (values computed there from the
SI definitions; the molar volumes are also printed by Kidnay & Parrish 2006, App. B,
verified). Tolerances are those of the table: the printed precision of each value.
"""

import numpy as np
import pytest

from server.engine import units as u
from server.engine.units import ISO_15C, OILFIELD_60F, UnitError, convert


def test_bg_coefficient_check_1():
    # Check value 1: p_sc/T_sc = 0.0282795 ft3/scf per zT/p at 14.696 psia, 519.67 degR.
    assert OILFIELD_60F.bg_coefficient_rcf_per_scf == pytest.approx(0.0282795, rel=1e-6)


def test_bg_coefficient_rb_per_mscf_check_2():
    # Check value 2: 5.03679 rb/Mscf per zT/p (0.0282795 x 1000 / 5.614583).
    assert OILFIELD_60F.bg_coefficient_rcf_per_scf * 1000 / u.FT3_PER_BBL == pytest.approx(5.03679, rel=1e-5)


def test_bg_coefficient_si_check_3():
    # Check value 3: ISO 15 degC/101.325 kPa, Bg = 0.351640 zT[K]/p[kPa].
    coeff_si = (ISO_15C.p_sc_psia * u.KPA_PER_PSI) / u.K_from_degR(ISO_15C.t_sc_degR)
    assert coeff_si == pytest.approx(0.351640, rel=1e-6)


def test_molar_volumes_check_4():
    # Check value 4: 379.483 scf/lbmol and 23.6448 m3/kmol (Kidnay & Parrish 2006, App. B.2.2:
    # 379.49 and 23.6444, verified); tolerance 0.01 % as in §8.
    assert OILFIELD_60F.molar_volume_scf_per_lbmol == pytest.approx(379.483, rel=1e-4)
    assert ISO_15C.molar_volume_m3_per_kmol == pytest.approx(23.6448, rel=1e-4)
    assert OILFIELD_60F.molar_volume_scf_per_lbmol == pytest.approx(379.49, rel=1e-4)
    assert ISO_15C.molar_volume_m3_per_kmol == pytest.approx(23.6444, rel=1e-4)


def test_sm3_to_scf_check_5():
    # Check value 5: 1 sm3 (ISO) = 35.3826 scf (60 degF, 14.696 psia), equal moles, ideal gas.
    assert u.scf_from_sm3(1.0) == pytest.approx(35.3826, rel=1e-5)
    assert convert(1.0, "sm3", "scf") == pytest.approx(35.3826, rel=1e-5)
    assert convert(1.0, "e3m3", "Mscf") == pytest.approx(35.3826, rel=1e-5)


def test_gas_constant_field_units():
    # R = 10.7316 psia ft3/(lbmol degR) (domain reference, table of constants).
    r = u.GAS_CONSTANT_PSIA_FT3_PER_LBMOL_DEGR
    assert r == pytest.approx(10.7316, rel=1e-5)


def test_exact_definitions():
    # NIST SP 811: 1 psi = 6.894757 kPa, 1 bbl = 0.158987294928 m3, 1 ft = 0.3048 m.
    kpa_per_psi, ft3_per_bbl, atm_psia = u.KPA_PER_PSI, u.FT3_PER_BBL, u.STANDARD_ATMOSPHERE_PSIA
    assert kpa_per_psi == pytest.approx(6.894757293, rel=1e-9)
    assert ft3_per_bbl == pytest.approx(5.614583, rel=1e-7)
    assert u.ft_from_m(1.0) == pytest.approx(3.280839895, rel=1e-9)
    assert atm_psia == pytest.approx(14.69595, rel=1e-6)


def test_standard_volumes_round_trip_between_all_conditions():
    for a in u.STANDARD_CONDITIONS.values():
        for b in u.STANDARD_CONDITIONS.values():
            v = convert(1234.5, "Mscf", "MMscf", from_conditions=a, to_conditions=b)
            back = convert(v, "MMscf", "Mscf", from_conditions=b, to_conditions=a)
            assert back == pytest.approx(1234.5, rel=1e-13)
    # The same moles take more room at the lower pressure base (14.65 < 14.73 psia).
    v65 = convert(1.0, "scf", "scf", from_conditions=OILFIELD_60F, to_conditions=u.OILFIELD_60F_14_65)
    assert v65 == pytest.approx(14.696 / 14.65, rel=1e-12)


def test_pressure_conversions():
    assert convert(100.0, "kPa", "psia") == pytest.approx(14.503774, rel=1e-7)
    assert convert(1.0, "MPa", "psia") == pytest.approx(145.03774, rel=1e-7)
    assert convert(1.0, "bar", "kPa") == pytest.approx(100.0, rel=1e-12)
    assert u.psia_from_bar(u.bar_from_psia(5000.0)) == pytest.approx(5000.0, rel=1e-13)
    assert u.psia_from_mpa(u.mpa_from_psia(5000.0)) == pytest.approx(5000.0, rel=1e-13)
    # Gauge pressures need the stated atmosphere.
    assert convert(1000.0, "psig", "psia", atmosphere_psia=14.2) == pytest.approx(1014.2)
    assert convert(1014.2, "psia", "psig", atmosphere_psia=14.2) == pytest.approx(1000.0)
    assert convert(10.0, "barg", "psia", atmosphere_psia=14.696) == pytest.approx(159.7337, rel=1e-6)
    assert convert(10.0, "barg", "psig") == pytest.approx(145.03774, rel=1e-7)  # no atmosphere needed
    assert u.psia_from_barg(10.0, 14.696) == pytest.approx(159.7337, rel=1e-6)
    assert u.psig_from_psia(u.psia_from_psig(500.0, 13.9), 13.9) == pytest.approx(500.0)
    with pytest.raises(UnitError, match="atmosphere"):
        convert(1000.0, "psig", "psia")


def test_temperature_conversions():
    assert convert(100.0, "degC", "degF") == pytest.approx(212.0, abs=1e-12)
    assert convert(0.0, "degC", "K") == pytest.approx(273.15, abs=1e-12)
    assert convert(60.0, "degF", "degR") == pytest.approx(519.67, abs=1e-12)
    assert u.degF_from_K(u.K_from_degF(200.0)) == pytest.approx(200.0, abs=1e-12)
    assert u.degC_from_degF(u.degF_from_degC(15.0)) == pytest.approx(15.0, abs=1e-12)
    assert u.K_from_degR(u.degR_from_K(288.15)) == pytest.approx(288.15, abs=1e-12)


def test_liquid_and_depth_conversions():
    assert convert(1.0, "m3", "stb") == pytest.approx(6.289811, rel=1e-6)
    assert u.m3_from_stb(u.stb_from_m3(2.5)) == pytest.approx(2.5)
    assert convert(1000.0, "m", "ft") == pytest.approx(3280.839895, rel=1e-9)
    assert u.m_from_ft(u.ft_from_m(812.0)) == pytest.approx(812.0)


def test_convert_arrays():
    out = convert(np.array([0.0, 100.0]), "degC", "degF")
    np.testing.assert_allclose(out, [32.0, 212.0])


def test_convert_refuses_unknown_and_mismatched_units():
    with pytest.raises(UnitError, match="unknown unit 'furlong'"):
        convert(1.0, "furlong", "ft")
    with pytest.raises(UnitError, match="cannot convert"):
        convert(1.0, "psia", "ft")
    with pytest.raises(UnitError, match="cannot convert"):
        convert(1.0, "stb", "scf")  # a liquid is not a gas volume without a gas equivalent
    with pytest.raises(UnitError, match="cannot convert"):
        convert(1.0, "psig", "degF", atmosphere_psia=14.7)
    assert u.unit_kind("E3M3") == "gas_volume"


def test_standard_conditions_lookup():
    assert u.standard_conditions("iso") is ISO_15C
    with pytest.raises(ValueError, match="unknown standard conditions"):
        u.standard_conditions("moon")
    sc = u.standard_conditions_at("60 °F, 14.7 psia", p_sc_psia=14.7, t_sc_degF=60.0)
    assert sc.t_sc_degR == pytest.approx(519.67)
    with pytest.raises(u.EngineError):
        u.standard_conditions_at("bad", p_sc_psia=-1.0, t_sc_degF=60.0)
