"""Wet-gas equivalents and well-stream gravity (docs/domain-reference.md §2.6).

Check value 30 and the §2.6 values use the textbook constant 133,000 and Cragoe's M_o
(both from memory in the reference, the arithmetic computed there); the engine's own
constants are derived from the standard conditions and checked against the water
density of CoolProp's IAPWS-95 water.
"""

import numpy as np
import pytest

from server.engine.errors import InputRangeError
from server.engine.pvt import condensate as c
from server.engine.units import ISO_15C, OILFIELD_60F


def test_check_value_30():
    # Check value 30: 50 API -> gamma_o 0.7796, M_o 137.96, GE 752 scf/stb (133,000 g_o/M_o).
    assert c.condensate_specific_gravity(50.0) == pytest.approx(0.7796, abs=1e-4)
    assert c.condensate_molar_mass_cragoe(50.0) == pytest.approx(137.96, abs=0.01)
    ge = c.condensate_gas_equivalent_scf_per_stb(
        50.0, constant_scf_per_stb=c.TEXTBOOK_GE_CONSTANT_SCF_PER_STB
    )
    assert ge == pytest.approx(752, abs=1)


@pytest.mark.parametrize(
    ("api", "gamma", "mo", "ge"),
    [(40.0, 0.8251, 178.42, 615), (50.0, 0.7796, 137.96, 752), (60.0, 0.7389, 112.46, 874)],
)
def test_section_2_6_table(api, gamma, mo, ge):
    # §2.6 check values (computed there with 133,000 and Cragoe), printed to 4 dp / 2 dp / 1 scf.
    assert c.condensate_specific_gravity(api) == pytest.approx(gamma, abs=1e-4)
    assert c.condensate_molar_mass_cragoe(api) == pytest.approx(mo, abs=0.01)
    assert c.condensate_gas_equivalent_scf_per_stb(api, constant_scf_per_stb=133000.0) == pytest.approx(
        ge, abs=1
    )


def test_constants_follow_from_the_standard_conditions():
    # §2.6 (computed): 350.16 lb/bbl x 379.483 scf/lbmol = 132,880; water 7,376 scf/stb
    # (textbook: 133,000 and about 7,390, from memory - within 0.2 %).
    lb_per_stb = c.WATER_LB_PER_STB
    assert lb_per_stb == pytest.approx(350.16, abs=0.01)
    k = c.gas_equivalent_constant_scf_per_stb(OILFIELD_60F)
    assert k == pytest.approx(132880, abs=5)
    assert k == pytest.approx(133000, rel=1.5e-3)
    gew = c.water_vapour_gas_equivalent_scf_per_stb(OILFIELD_60F)
    assert gew == pytest.approx(7376, abs=1)
    assert gew == pytest.approx(7390, rel=2.5e-3)
    # At ISO conditions the same moles occupy a different volume per ideal molar volume.
    ratio = ISO_15C.molar_volume_scf_per_lbmol / OILFIELD_60F.molar_volume_scf_per_lbmol
    assert c.gas_equivalent_constant_scf_per_stb(ISO_15C) == pytest.approx(k * ratio, rel=1e-12)


def test_water_density_is_iapws():
    cp = pytest.importorskip("CoolProp.CoolProp")
    rho = cp.PropsSI("D", "T", (60 + 459.67) / 1.8, "P", 101325.0, "Water")
    ours_rho, ours_m = c.WATER_DENSITY_60F_KG_PER_M3, c.WATER_MOLAR_MASS_LB_PER_LBMOL
    assert ours_rho == pytest.approx(rho, abs=1e-4)
    assert ours_m == pytest.approx(cp.PropsSI("M", "Water") * 1e3, rel=1e-9)


def test_wellstream_gravity_is_a_mass_balance():
    # Independent recombination per stb: gas mass + liquid mass over gas moles + liquid moles.
    gg, yield_, api = 0.68, 110.0, 50.0
    vm = OILFIELD_60F.molar_volume_scf_per_lbmol
    r = 1e6 / yield_
    go = 141.5 / (131.5 + api)
    mo = 6084.0 / (api - 5.9)
    mass = r / vm * gg * 28.9647 + 350.16 * go
    moles = r / vm + 350.16 * go / mo
    expected = mass / moles / 28.9647
    assert c.wellstream_gravity(gg, yield_, api) == pytest.approx(expected, rel=1e-4)
    # The textbook form (R gg + 4584 go)/(R + 132,800 go/Mo) agrees within its rounding.
    textbook = (r * gg + 4584 * go) / (r + 132800 * go / mo)
    assert c.wellstream_gravity(gg, yield_, api) == pytest.approx(textbook, rel=1e-3)
    assert c.wellstream_gravity(gg, 0.0, api) == gg


def test_wet_gas_adds_each_equivalent():
    gas = np.array([1000.0, 2000.0])  # Mscf
    cond = np.array([110.0, 220.0])  # stb: 110 stb/MMscf
    water = np.array([1.0, 2.0])
    ge = c.condensate_gas_equivalent_scf_per_stb(50.0)
    gew = c.water_vapour_gas_equivalent_scf_per_stb()
    np.testing.assert_allclose(c.wet_gas_mscf(gas, cond, 50.0), gas + ge * cond / 1e3)
    np.testing.assert_allclose(c.wet_gas_mscf(gas, cond, 50.0, water), gas + (ge * cond + gew * water) / 1e3)
    # 110 stb/MMscf at 50 API adds 8.3 % (the Hollinsway demo field's yield).
    assert c.wet_gas_mscf(gas, cond, 50.0).sum() / gas.sum() - 1 == pytest.approx(0.0826, abs=5e-4)


def test_bad_inputs_raise():
    with pytest.raises(InputRangeError, match="API gravity"):
        c.condensate_specific_gravity(5.0)
    with pytest.raises(InputRangeError, match="API gravity"):
        c.condensate_molar_mass_cragoe(np.nan)
    with pytest.raises(ValueError, match="unknown condensate molar-mass method"):
        c.condensate_molar_mass(50.0, "guess")
    with pytest.raises(InputRangeError, match="API gravity"):
        c.wet_gas_mscf([1.0], [1.0], None)
    with pytest.raises(InputRangeError, match="negative"):
        c.wellstream_gravity(0.65, -1.0, 50.0)
    assert c.condensate_molar_mass(50.0, "standing") == pytest.approx(5954 / (50 - 8.811))
