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
