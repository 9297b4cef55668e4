"""Gauge-to-datum correction through the static gas column, and campaign averages.

Independent oracles: scipy's solve_ivp (DOP853 at rtol 1e-12) on dp/dD = rho g with
(a) the same z, which isolates the integration, and (b) the density of CoolProp's
reference methane equation, which tests the physics end to end (the difference is then
the z correlation's own error, at most 2 % of the correction, §1.9); and the forward
model's separately written column (server/synthetic/tank.py, midpoint steps).
"""

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from server.engine.errors import InputRangeError
from server.engine.prepare.datum import average_field_pressure, datum_pressure_psia, gas_gradient_psi_per_ft
from server.engine.pvt.gas import GasFluid, z_factor
from server.engine.pvt.zfactor import z_factor_dranchuk_abou_kassem
from server.engine.units import KPA_PER_PSI, LB_PER_FT3_PER_KG_PER_M3, K_from_degF
from server.synthetic.tank import gas_column_pressure_psia

FLUID = GasFluid(0.70)
T_DEGF = 220.0


def _z(p):
    return z_factor(p, T_DEGF, FLUID)


# R [psia ft3/(lbmol degR)] from its SI definition, written out here for the oracle.
R_FIELD = 8.314462618 * 453.59237 / (6894.757293168361 * 0.028316846592 * 1.8)


def _ivp(p_start, d_start, d_end, density_lb_per_ft3, rtol=1e-12):
    sol = solve_ivp(
        lambda d, p: [density_lb_per_ft3(p[0]) / 144.0],
        (d_start, d_end),
        [p_start],
        method="DOP853",
        rtol=rtol,
        atol=1e-9,
    )
    return sol.y[0, -1]


def _density_own_z(p):
    m = 28.9647 * FLUID.gas_gravity
    return p * m / (_z(p) * R_FIELD * (T_DEGF + 459.67))


@pytest.mark.parametrize(("gauge_ft", "datum_ft"), [(9150.0, 10000.0), (10600.0, 10000.0), (7000.0, 10000.0)])
def test_matches_numerical_integration_with_the_same_z(gauge_ft, datum_ft):
    p_gauge = np.array([1200.0, 3500.0, 6500.0])
    ours = datum_pressure_psia(p_gauge, np.full(3, gauge_ft), datum_ft, T_DEGF, FLUID.gas_gravity, _z)
    ref = [_ivp(p, gauge_ft, datum_ft, _density_own_z) for p in p_gauge]
    np.testing.assert_allclose(ours, ref, rtol=0, atol=1e-6)
    assert np.all((ours > p_gauge) == (gauge_ft < datum_ft))  # above datum -> raised


def test_matches_reference_methane_column():
    cp = pytest.importorskip("CoolProp.CoolProp")
    t_k = K_from_degF(T_DEGF)
    methane = cp.AbstractState("HEOS", "Methane")

    def density(p_psia):
        methane.update(cp.PT_INPUTS, p_psia * KPA_PER_PSI * 1e3, t_k)
        return methane.rhomass() * LB_PER_FT3_PER_KG_PER_M3

    tc_degR, pc_psia = 190.564 * 1.8, 4.5992e3 / KPA_PER_PSI

    def z_methane(p):
        return z_factor_dranchuk_abou_kassem(np.asarray(p) / pc_psia, (T_DEGF + 459.67) / tc_degR)

    p_gauge = np.array([1500.0, 4000.0, 7000.0])
    gravity = 16.0428 / 28.9647
    ours = datum_pressure_psia(p_gauge, 9150.0, 10000.0, T_DEGF, gravity, z_methane)
    ref = np.array([_ivp(p, 9150.0, 10000.0, density, rtol=1e-9) for p in p_gauge])
    # The correction (about 20-60 psi) agrees to the z correlation's accuracy (2 %, §1.9).
    np.testing.assert_allclose(ours - p_gauge, ref - p_gauge, rtol=0.02)


def test_inverts_the_forward_models_column():
    # Forward model: datum -> gauge (midpoint, 100 steps); engine: gauge -> datum (RK4).
    p_datum = np.array([1000.0, 3000.0, 5600.0])
    gauge = 11800.0 - 850.0
    p_gauge = gas_column_pressure_psia(p_datum, 11800.0, gauge, T_DEGF, FLUID)
    back = datum_pressure_psia(p_gauge, gauge, 11800.0, T_DEGF, FLUID.gas_gravity, _z)
    np.testing.assert_allclose(back, p_datum, rtol=1e-7)


def test_gradient_and_edge_cases():
    # rho = 5.9273 lb/ft3 at gamma 0.65, 200 degF, 2000 psia, z 0.89735 (check value 13) -> /144.
    assert gas_gradient_psi_per_ft(2000.0, 0.89735, 200.0, 0.65) == pytest.approx(5.9273 / 144, rel=1e-4)
    assert datum_pressure_psia(3000.0, 10000.0, 10000.0, T_DEGF, 0.7, _z) == 3000.0
    assert isinstance(datum_pressure_psia(3000.0, 9000.0, 10000.0, T_DEGF, 0.7, _z), float)
    assert np.isnan(datum_pressure_psia(np.array([np.nan, 3000.0]), 9000.0, 10000.0, T_DEGF, 0.7, _z)[0])
    with pytest.raises(InputRangeError, match="depths"):
        datum_pressure_psia(3000.0, np.nan, 10000.0, T_DEGF, 0.7, _z)
    with pytest.raises(InputRangeError, match="positive"):
        datum_pressure_psia(-5.0, 9000.0, 10000.0, T_DEGF, 0.7, _z)


def test_campaign_average_rule():
    t = np.array([100.0, 110.0, 125.0, 300.0, 105.0, 302.0])
    p = np.array([3000.0, 3020.0, 3010.0, 2800.0, 3400.0, 2790.0])
    w = np.array([1.0, 0.5, 0.25, 1.0, 1.0, 1.0])
    wells = ["A", "B", "C", "A", "E1", "B"]
    comp = [None, None, None, None, "East", None]
    out = average_field_pressure(t, p, w, wells, comp, window_days=31.0)
    # Unlabelled wells first: campaign 1 = A, B, C (within 31 days of day 100), campaign 2 = A, B.
    first, second, east = out
    assert first.members == (0, 1, 2) and first.wells == ("A", "B", "C")
    assert first.p_psia == pytest.approx((3000 + 0.5 * 3020 + 0.25 * 3010) / 1.75)
    assert first.t_days == pytest.approx((100 + 0.5 * 110 + 0.25 * 125) / 1.75)
    assert first.spread_psi == pytest.approx(20.0) and first.weight == pytest.approx(1.75)
    assert second.members == (3, 5) and second.p_psia == pytest.approx(2795.0)
    # A well labelled with another compartment is never averaged with the rest.
    assert east.compartment == "East" and east.members == (4,) and east.n_surveys == 1


def test_campaigns_start_at_the_first_unused_survey():
    # Surveys every 20 days: a 31-day window takes two at a time, never chains further.
    t = np.arange(0.0, 100.0, 20.0)
    out = average_field_pressure(t, np.full(5, 3000.0), np.ones(5), list("ABCDE"), window_days=31.0)
    assert [c.members for c in out] == [(0, 1), (2, 3), (4,)]
    assert average_field_pressure([], [], [], []) == ()


def test_average_refuses_bad_input():
    with pytest.raises(InputRangeError, match="same length"):
        average_field_pressure([1.0], [3000.0, 1.0], [1.0], ["A"])
    with pytest.raises(InputRangeError, match="weights positive"):
        average_field_pressure([1.0], [3000.0], [0.0], ["A"])
    with pytest.raises(InputRangeError, match="window"):
        average_field_pressure([1.0], [3000.0], [1.0], ["A"], window_days=0.0)
