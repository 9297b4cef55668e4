"""z-factor solvers: Dranchuk-Abou-Kassem (1975) and Hall-Yarborough (1973).

"Check value N" refers to docs/domain-reference.md §8 (tables §1.10, computed from the
published coefficients and printed to 4 decimals, hence 1e-4 absolute). The roots are
also checked against an independent arbitrary-precision solution (mpmath, 30 digits)
of each equation written out term by term here.
"""

import mpmath as mp
import numpy as np
import pytest

from server.engine.errors import InputRangeError
from server.engine.pvt.zfactor import z_factor_dranchuk_abou_kassem as dak
from server.engine.pvt.zfactor import z_factor_hall_yarborough as hy

A = (0.3265, -1.0700, -0.5339, 0.01569, -0.05165, 0.5475, -0.7361, 0.1844, 0.1056, 0.6134, 0.7210)


def _dak_residual_mp(rho, ppr, tpr):
    """rho*Z(rho) - 0.27 Ppr/Tpr, the DAK equation as printed (§1.2), in mpmath."""
    a = [mp.mpf(x) for x in A]
    t = mp.mpf(tpr)
    z = (
        1
        + (a[0] + a[1] / t + a[2] / t**3 + a[3] / t**4 + a[4] / t**5) * rho
        + (a[5] + a[6] / t + a[7] / t**2) * rho**2
        - a[8] * (a[6] / t + a[7] / t**2) * rho**5
        + a[9] * (1 + a[10] * rho**2) * (rho**2 / t**3) * mp.exp(-a[10] * rho**2)
    )
    return rho * z - mp.mpf("0.27") * ppr / t


def _hy_residual_mp(y, ppr, tpr):
    """Hall-Yarborough f(y) as printed (§1.3), in mpmath."""
    t = 1 / mp.mpf(tpr)
    a = mp.mpf("0.06125") * t * mp.exp(-mp.mpf("1.2") * (1 - t) ** 2)
    b = t * (mp.mpf("14.76") - mp.mpf("9.76") * t + mp.mpf("4.58") * t**2)
    c = t * (mp.mpf("90.7") - mp.mpf("242.2") * t + mp.mpf("42.4") * t**2)
    d = mp.mpf("2.18") + mp.mpf("2.82") * t
    return -a * ppr + (y + y**2 + y**3 - y**4) / (1 - y) ** 3 - b * y**2 + c * y**d, a


def _smallest_root_mp(residual, ppr, tpr, upper):
    """Smallest root by a fine scan then bisection-type refinement (independent of the engine)."""
    mp.mp.dps = 30
    mp_ppr = mp.mpf(ppr)
    prev = mp.mpf("1e-12")
    for k in range(1, 601):
        x = mp.mpf(upper) * (mp.mpf(k) / 600) ** 2
        if residual(x, mp_ppr, tpr) > 0:
            return mp.findroot(lambda r: residual(r, mp_ppr, tpr), (prev, x), solver="anderson")
        prev = x
    raise AssertionError("no root")


@pytest.mark.parametrize(
    ("tpr", "ppr", "z_expected"),
    [(1.5, 2.0, 0.8215), (2.0, 5.0, 0.9595), (1.2, 3.0, 0.5302), (3.0, 15.0, 1.3279), (1.05, 2.0, 0.3284)],
)
def test_dak_check_9(tpr, ppr, z_expected):
    assert dak(ppr, tpr) == pytest.approx(z_expected, abs=1e-4)


@pytest.mark.parametrize(
    ("tpr", "ppr", "z_expected"),
    [(1.5, 2.0, 0.8208), (2.0, 5.0, 0.9582), (1.2, 3.0, 0.5305), (3.0, 15.0, 1.3156)],
)
def test_hall_yarborough_check_10(tpr, ppr, z_expected):
    assert hy(ppr, tpr) == pytest.approx(z_expected, abs=1e-4)


def test_dak_table_1_10_row_and_hy_row():
    # §1.10 tables, Tpr = 1.7 row (computed, 4 decimals).
    ppr = np.array([0.5, 1, 2, 3, 4, 5, 6, 8, 10, 15], float)
    np.testing.assert_allclose(
        dak(ppr, 1.7),
        [0.9681, 0.9388, 0.8914, 0.8655, 0.8644, 0.8844, 0.9195, 1.0158, 1.1295, 1.4360],
        atol=1e-4,
    )
    np.testing.assert_allclose(
        hy(ppr, 1.7),
        [0.9683, 0.9392, 0.8920, 0.8650, 0.8622, 0.8816, 0.9175, 1.0167, 1.1325, 1.4393],
        atol=1e-4,
    )


@pytest.mark.parametrize(
    ("tpr", "ppr"), [(1.05, 2.0), (1.3, 0.5), (1.7, 4.0), (2.5, 10.0), (3.0, 29.0), (1.01, 1.0), (1.0, 0.9)]
)
def test_dak_matches_arbitrary_precision_smallest_root(tpr, ppr):
    rho = _smallest_root_mp(_dak_residual_mp, ppr, tpr, upper=8.0)
    z_ref = float(mp.mpf("0.27") * ppr / (tpr * rho))
    assert dak(ppr, tpr) == pytest.approx(z_ref, rel=1e-11)


@pytest.mark.parametrize(
    ("tpr", "ppr"), [(1.05, 2.0), (1.2, 3.0), (1.7, 4.0), (2.5, 10.0), (3.0, 29.0), (1.0, 0.9)]
)
def test_hy_matches_arbitrary_precision_smallest_root(tpr, ppr):
    def res(y, p, t):
        return _hy_residual_mp(y, p, t)[0]

    y = _smallest_root_mp(res, ppr, tpr, upper=0.999)
    a = _hy_residual_mp(y, ppr, tpr)[1]
    assert hy(ppr, tpr) == pytest.approx(float(a * ppr / y), rel=1e-11)


def test_gas_like_root_is_chosen_where_dak_has_three():
    # At Tpr = 1.0 the DAK isotherm has a loop (dF/drho < 0 for rho ~ 0.75-1.31, computed
    # for this test suite); for Ppr where three roots exist the smallest is the gas-like one.
    tpr = 1.0
    rho = np.linspace(0.7, 1.35, 300)
    mp.mp.dps = 20
    f = np.array([float(_dak_residual_mp(mp.mpf(r), 0, tpr)) for r in rho])  # = rho*Z(rho)
    lo, hi = f[np.argmax(f)], f[np.argmin(f[rho > rho[np.argmax(f)]]) + np.argmax(f)]
    assert hi < lo  # a genuine loop in rho*Z: several densities give the same pressure
    ppr = 0.5 * (lo + hi) * tpr / 0.27  # inside the loop
    z = dak(ppr, tpr)
    rho_found = 0.27 * ppr / (z * tpr)
    assert rho_found < rho[np.argmax(f)]  # the low-density (gas) branch


def test_dak_and_hy_agree_check_11():
    # Check value 11: max |dz| 0.0050 over Tpr 1.3-2.5, Ppr 0.2-10 and 0.0123 over
    # Tpr 1.2-3.0, Ppr 0.2-15 (computed); assert <= 0.006 and <= 0.013 as §8 says.
    t, p = np.meshgrid(np.linspace(1.3, 2.5, 61), np.linspace(0.2, 10, 99))
    assert np.max(np.abs(dak(p, t) - hy(p, t))) <= 0.006
    t, p = np.meshgrid(np.linspace(1.2, 3.0, 91), np.linspace(0.2, 15, 149))
    assert np.max(np.abs(dak(p, t) - hy(p, t))) <= 0.013


def test_solver_premises_hold_on_dense_grid():
    # The fast path assumes, for Tpr >= 1.05: the reduced pressure rises strictly with
    # reduced density (unique root) and z > 0.2 up to Ppr = 30 (the Newton bracket).
    from server.engine.pvt import zfactor as zf

    tpr = np.linspace(1.05, 3.0, 200)
    T, R = np.meshgrid(tpr, np.concatenate([np.linspace(1e-6, 3, 1500), np.linspace(3, 60, 500)]))
    assert zf._dak_fdf(np.zeros_like(T), T)(R)[1].min() > 0
    T, Y = np.meshgrid(tpr, np.linspace(1e-6, 0.999, 2000))
    assert zf._hy_fdf(np.zeros_like(T), T)(Y)[1].min() > 0
    T, P = np.meshgrid(tpr, np.linspace(0.01, 30, 300))
    assert dak(P, T).min() > 0.2 and hy(P, T).min() > 0.2


@pytest.mark.parametrize("solver", [dak, hy])
def test_vectorised_matches_scalar_and_keeps_shape(solver):
    ppr = np.array([[2.0, 5.0, 3.0], [15.0, 2.0, 0.0]])
    tpr = np.array([[1.5, 2.0, 1.2], [3.0, 1.02, 1.7]])
    z = solver(ppr, tpr)
    assert z.shape == (2, 3)
    for p, t, zz in zip(ppr.ravel(), tpr.ravel(), z.ravel(), strict=True):
        assert zz == pytest.approx(solver(p, t), rel=1e-12)
    assert z[1, 2] == 1.0  # zero pressure: ideal gas
    assert isinstance(solver(2.0, 1.5), float)
    assert solver(np.array([2.0, 3.0]), 1.5).shape == (2,)


@pytest.mark.parametrize("solver", [dak, hy])
def test_bad_inputs(solver):
    # Documented behaviour: NaN in -> NaN out; empty in -> empty out; everything else raises.
    z = solver(np.array([2.0, np.nan, 3.0]), 1.5)
    assert np.isnan(z[1]) and np.isfinite(z[[0, 2]]).all()
    assert np.isnan(solver(2.0, np.nan))
    assert solver(np.array([]), 1.5).shape == (0,)
    with pytest.raises(InputRangeError, match="negative"):
        solver(-0.1, 1.5)
    with pytest.raises(InputRangeError, match="below|outside"):
        solver(2.0, 0.95)
    with pytest.raises(InputRangeError, match="outside"):
        solver(2.0, 3.2)
    with pytest.raises(InputRangeError, match="above 30"):
        solver(31.0, 1.5)
    with pytest.raises(InputRangeError, match="finite"):
        solver(np.inf, 1.5)
