"""The real-gas pseudo-pressure m(p) = 2 ∫ p/(μ z) dp (Al-Hussainy, Ramey & Crawford 1966, SPE-1243-A;
from memory) against checks outside the code that tabulates it:

* a closed form: with μ z = a + b p (a made-up linear law) the integral is
  m(p) − m(p_ref) = 2 [(p − p_ref)/b − (a/b²) ln((a + b p)/(a + b p_ref))] (integration by hand);
* scipy.integrate.quad of 2p/(μ z) with the project's DAK z and Lee-Gonzalez-Eakin μ: not
  independent of those two functions, it checks the integration and the table's interpolation;
* CoolProp's methane (Setzmann & Wagner 1991 equation of state and its viscosity model) for the
  whole chain of z, μ and the integral, to the Lee-Gonzalez-Eakin correlation's few per cent;
* the low-pressure limit m(p) − m(p_wf) → (p² − p_wf²)/(μ z)₀ (derivation in the module docstring).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from server.engine.errors import InputRangeError
from server.engine.pvt.gas import GasFluid, gas_properties, z_factor
from server.engine.pvt.pseudopressure import pseudo_pressure_table, viscosity_lee_gonzalez_eakin_of_p

FLUID = GasFluid(gas_gravity=0.65)
T_DEGF = 200.0


def _field_table(p_max=8000.0, fluid=FLUID, t_degF=T_DEGF):
    def z_of_p(p):
        return z_factor(p, t_degF, fluid)

    return pseudo_pressure_table(
        z_of_p, viscosity_lee_gonzalez_eakin_of_p(t_degF, fluid.gas_gravity, z_of_p), p_max
    )


def test_a_linear_mu_z_law_gives_the_closed_form():
    a, b = 0.012, 2.0e-6  # μ z = a + b p [cP], made up for the check
    table = pseudo_pressure_table(
        lambda p: 1.0 + 0.0 * np.asarray(p), lambda p: a + b * np.asarray(p), 6000.0
    )
    h = float(table.p_psia[1] - table.p_psia[0])

    def slope(p):  # f'(p) of f = 2p/(a + b p)
        return 2.0 * a / (a + b * p) ** 2

    for p in (14.7, 300.0, 1000.0, 2500.0, 5999.0):
        exact = 2.0 * ((p - 1.0) / b - (a / b**2) * math.log((a + b * p) / (a + b * 1.0)))
        # The trapezoidal rule's error h²/12 |f'(p) - f'(p_ref)|, doubled for the interpolation.
        bound = 2.0 * h * h / 12.0 * abs(slope(p) - slope(1.0))
        assert table(p) == pytest.approx(exact, abs=bound + 1e-9 * exact), p


def test_the_table_matches_quad_of_the_projects_z_and_viscosity():
    table = _field_table()
    mu = viscosity_lee_gonzalez_eakin_of_p(T_DEGF, FLUID.gas_gravity, lambda p: z_factor(p, T_DEGF, FLUID))

    def integrand(p):
        return 2.0 * p / (float(mu(p)) * float(z_factor(p, T_DEGF, FLUID)))

    for p in (200.0, 1000.0, 3000.0, 5000.0, 7500.0):
        ref, err = quad(integrand, 1.0, p, limit=200, epsabs=0.0, epsrel=1e-10)
        assert table(p) == pytest.approx(ref, rel=2e-6), p
    # Differences are what the back-pressure equation uses: 5000 → 800 psia.
    ref, _ = quad(integrand, 800.0, 5000.0, limit=200, epsrel=1e-10)
    assert table(5000.0) - table(800.0) == pytest.approx(ref, rel=2e-6)
    with pytest.raises(InputRangeError, match="outside the pseudo-pressure table"):
        table(9000.0)
    with pytest.raises(InputRangeError, match="outside the pseudo-pressure table"):
        table(np.array([100.0, 9000.0]))
    # The scalar path (plain floats, the forecast's) and the array path read the same table.
    p = np.array([14.7, 333.3, 2718.0, 7999.0])
    assert table(p) == pytest.approx([table(float(x)) for x in p], rel=1e-12)


def test_low_pressure_limit_is_the_pressure_squared_form():
    # μ z changes by 0.2 % between 150 and 400 psia at 200 °F for this gas, so
    # m(p) − m(p_wf) = (p² − p_wf²)/(μ z)₀ holds to that, with (μ z)₀ at the mid pressure.
    table = _field_table()
    g = gas_properties(np.array([300.0]), T_DEGF, FLUID)
    mu_z0 = float(g.viscosity_cp[0] * g.z_factor[0])
    for p, pwf in ((400.0, 200.0), (350.0, 250.0), (400.0, 150.0)):
        assert table(p) - table(pwf) == pytest.approx((p * p - pwf * pwf) / mu_z0, rel=3e-3)
    # At high pressure it does not hold: μ z nearly doubles from 1000 to 5000 psia.
    assert (table(5000.0) - table(3000.0)) * mu_z0 < 0.7 * (5000.0**2 - 3000.0**2)


def test_methane_against_coolprop():
    cp = pytest.importorskip("CoolProp.CoolProp")
    t_k = 360.0
    t_degF = (t_k - 273.15) * 1.8 + 32.0
    methane = GasFluid(gas_gravity=16.043 / 28.9647)
    table = _field_table(6000.0, methane, t_degF)

    def integrand(p_psia):
        pa = p_psia * 6894.757293168
        mu_cp = cp.PropsSI("V", "T", t_k, "P", pa, "Methane") * 1e3
        z = cp.PropsSI("Z", "T", t_k, "P", pa, "Methane")
        return 2.0 * p_psia / (mu_cp * z)

    for p, pwf in ((1500.0, 500.0), (5000.0, 1000.0)):
        ref, _ = quad(integrand, pwf, p, limit=100, epsrel=1e-8)
        # Lee-Gonzalez-Eakin is within 8.3 % of the methane reference viscosity (domain reference
        # §1.7) and DAK z within about 1 %: the integral of their ratio within 5 % here.
        assert table(p) - table(pwf) == pytest.approx(ref, rel=0.05), (p, pwf)
