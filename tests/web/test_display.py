"""Display units: conversions agree with the published constants."""

import pytest

from server.engine.units import ISO_15C, OILFIELD_60F
from server.web.display import DisplayUnits


def test_si_gas_volume_check_value_5():
    # Check value 5 (docs/domain-reference.md §8): 1 sm3 at 15 °C/101.325 kPa = 35.3826 scf at
    # 60 °F/14.696 psia on an equal-moles ideal-gas basis (computed).
    du = DisplayUnits("si", OILFIELD_60F)
    assert du.value("gas_mscf", 35.3826 / 1e3) == pytest.approx(1e-3, rel=1e-5)  # 10^3 m3
    assert du.value("gas_bscf", 1.0) == pytest.approx(1e9 / 35.3826 / 1e6, rel=1e-5)


def test_si_pressure_depth_temperature_liquid():
    du = DisplayUnits("si")
    assert du.value("pressure", 1.0) == pytest.approx(6.894757, rel=1e-6)  # kPa per psi (exact def.)
    assert du.value("depth", 1000.0) == pytest.approx(304.8)
    assert du.value("temperature", 212.0) == pytest.approx(100.0)
    assert du.value("liquid_stb", 1.0) == pytest.approx(0.158987294928)
    assert du.values("pz", [1.0, float("nan")]) == [pytest.approx(6.894757, rel=1e-6), None]


def test_oilfield_is_identity_and_labels_name_the_basis():
    du = DisplayUnits("oilfield", ISO_15C)
    assert du.value("gas_bscf", 12.5) == 12.5
    assert "15 °C" in du.label("gas_bscf")
    assert du.show("gas_bscf", None) == "–"
    assert du.show_with_unit("pressure", 4632.81) == "4,632.8 psia"


def test_unknown_names_raise():
    with pytest.raises(ValueError):
        DisplayUnits("imperial")
    with pytest.raises(ValueError):
        DisplayUnits().label("speed")


def test_bg_in_si_is_reservoir_m3_per_iso_m3_check_values_1_and_3():
    # Bg = (p_sc/T_sc) z T / p. Check value 1 (docs/domain-reference.md §8): 0.0282795 ft³/scf per
    # z T[°R]/p[psia] at 60 °F/14.696 psia; check value 3: 0.351640 rm³/sm³ per z T[K]/p[kPa] at
    # 15 °C/101.325 kPa. The same gas (z 0.89735 at 2000 psia, 200 °F: check value 13) both ways.
    z, t_degR, t_K, p_psia = 0.89735, 659.67, 659.67 / 1.8, 2000.0
    bg_oilfield = 0.0282795 * z * t_degR / p_psia
    bg_iso = 0.351640 * z * t_K / (p_psia * 6.894757293168361)
    assert DisplayUnits("oilfield", OILFIELD_60F).value("bg", bg_oilfield) == bg_oilfield
    assert DisplayUnits("si", OILFIELD_60F).value("bg", bg_oilfield) == pytest.approx(bg_iso, rel=2e-6)
    assert DisplayUnits("si", ISO_15C).value("bg", bg_iso) == pytest.approx(bg_iso, rel=1e-12)  # same basis
    assert "15 °C" in DisplayUnits("si").label("bg") and "60 °F" in DisplayUnits("oilfield").label("bg")
    assert DisplayUnits("oilfield", OILFIELD_60F).values("bg", [bg_oilfield])[0] == bg_oilfield


def test_rock_volume_acre_feet_and_million_m3():
    # 1 acre-ft = 43,560 ft³ = 1,233.48183754752 m³ (1 ft = 0.3048 m exactly; NIST SP 811)
    assert DisplayUnits("oilfield").value("rock_volume", 43560.0 * 2500) == pytest.approx(2500.0)
    si = DisplayUnits("si").value("rock_volume", 43560.0 * 2500)
    assert si == pytest.approx(2500 * 1233.48183754752e-6)
