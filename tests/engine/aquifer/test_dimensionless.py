"""Dimensionless van Everdingen-Hurst solutions: tables from the Laplace inversion.

Sources: check values 17-20 of docs/domain-reference.md §8 (computed there with mpmath
1.4.1 at 30 digits, Talbot = de Hoog; printed to 7-8 significant digits), the Edwardson
et al. (1962) fit as printed in §3.1, Dake (1978) eqs. 9.11-9.12 for the bounded
plateaus, and mpmath's ``invertlaplace`` as an independent oracle at off-grid points.
"""

import mpmath as mp
import numpy as np
import pytest

from server.engine.aquifer.dimensionless import (
    influx_table,
    pd_table_radial_infinite,
    wd_edwardson,
    wd_linear_infinite,
    wd_max,
)
from server.engine.errors import InputRangeError

TD_17 = np.array([0.01, 0.1, 1.0, 10.0, 100.0, 1000.0])
WD_17 = np.array([0.1177496, 0.4043386, 1.5682921, 7.4015217, 43.025107, 292.61106])


def test_infinite_radial_check_17():
    # Check value 17: tolerance 1e-6 relative (the printed precision is 7-8 digits).
    assert influx_table()(TD_17) == pytest.approx(WD_17, rel=1e-6)


def test_more_infinite_radial_points_of_section_3_1():
    # Domain reference §3.1 "additional points (computed)", printed to 7-8 digits.
    td = np.array([0.05, 0.5, 2.0, 5.0, 20.0, 50.0, 200.0, 500.0, 1e4, 1e5])
    wd = np.array(
        [
            0.2763919,
            1.0243593,
            2.4453990,
            4.5336458,
            12.3201291,
            24.8407721,
            75.5875975,
            162.2275718,
            2198.3447,
            17571.310,
        ]
    )
    assert influx_table()(td) == pytest.approx(wd, rel=1e-6)


def _mp_invert(f, t):
    with mp.workdps(15):  # 15 digits already give double accuracy (mpmath's Talbot)
        return float(mp.invertlaplace(f, t, method="talbot"))


def _wd_inf(s):
    x = mp.sqrt(s)
    return mp.besselk(1, x) / (s * x * mp.besselk(0, x))


def _wd_bounded(red):
    def f(s):
        x = mp.sqrt(s)
        y = red * x
        num = mp.besseli(1, y) * mp.besselk(1, x) - mp.besselk(1, y) * mp.besseli(1, x)
        den = mp.besselk(1, y) * mp.besseli(0, x) + mp.besseli(1, y) * mp.besselk(0, x)
        return num / (s * x * den)

    return f


@pytest.mark.parametrize("td", [0.77, 5555.0])
def test_table_interpolates_between_nodes_to_1e7(td):
    # Oracle: mpmath inversion at points between table nodes; the cubic Hermite in log-log
    # space with exact slopes is accurate to well below 1e-7.
    assert influx_table()(td) == pytest.approx(_mp_invert(_wd_inf, td), rel=1e-7)


def test_bounded_radial_check_19_and_mpmath():
    # Check value 19: reD = 5, tD = 10 -> 6.9675; reD = 10, tD = 1000 -> 49.4998 (1e-4 rel).
    assert influx_table("radial", 5.0)(10.0) == pytest.approx(6.9675, rel=1e-4)
    assert influx_table("radial", 10.0)(1000.0) == pytest.approx(49.4998, rel=1e-4)
    # §3.1 bounded rows (printed to 4 decimals).
    assert influx_table("radial", 2.0)(np.array([0.1, 1.0, 10.0])) == pytest.approx(
        [0.4043, 1.2951, 1.5000], abs=6e-5
    )
    assert influx_table("radial", 10.0)(np.array([10.0, 100.0])) == pytest.approx([7.4014, 35.4380], abs=6e-5)
    # An off-grid point against mpmath (independent complex Bessel functions).
    assert influx_table("radial", 5.0)(3.7) == pytest.approx(_mp_invert(_wd_bounded(5.0), 3.7), rel=1e-7)


@pytest.mark.parametrize("red", [2.0, 5.0, 10.0])
def test_bounded_plateau_dake_9_11(red):
    # Dake (1978) eq. 9.11: W_D(max) = (reD^2 - 1)/2; reached, and never exceeded, at late time.
    table = influx_table("radial", red)
    assert wd_max("radial", red) == 0.5 * (red**2 - 1)
    late = table(np.array([1e4, 1e6, 1e9]))
    assert late == pytest.approx(0.5 * (red**2 - 1), rel=1e-9)
    # Monotone up to rounding at the plateau (values there differ from it by ~1e-12).
    assert np.all(np.diff(table(np.logspace(-3, 4, 200))) >= -1e-10 * table.plateau)


def test_bounded_linear_against_mpmath_and_dake_9_12():
    # W̄_D = tanh(√s)/s^1.5; plateau 1 (Dake eq. 9.12); early time equals the infinite linear 2√(t/π).
    table = influx_table("linear", 1.0)
    exact = _mp_invert(lambda s: mp.tanh(mp.sqrt(s)) / s**1.5, 0.37)
    assert table(0.37) == pytest.approx(exact, rel=1e-7)
    assert table(100.0) == pytest.approx(1.0, rel=1e-12)
    assert table(0.01) == pytest.approx(wd_linear_infinite(0.01), rel=1e-9)


def test_small_time_series_of_section_3_1():
    # §3.1: W_D ≈ 2√(t/π) + t/2 − (t/6)√(t/π) + t²/16, "agrees with the inversion to 5e-7 at
    # tD = 0.01" (absolute; the truncated series is closer still at smaller tD).
    td = np.array([1e-6, 1e-4, 1e-3, 0.01])
    series = 2 * np.sqrt(td / np.pi) + td / 2 - td / 6 * np.sqrt(td / np.pi) + td**2 / 16
    assert influx_table()(td[:3]) == pytest.approx(series[:3], rel=1e-7)
    assert influx_table()(td[3]) == pytest.approx(series[3], abs=6e-7)
    # Below the table (t_D < 1e-8) W_D follows the √t law from the first node, which carries the
    # next term t/2: relatively √(π 1e-8)/4 = 4.4e-5.
    assert influx_table()(1e-10) == pytest.approx(2 * np.sqrt(1e-10 / np.pi), rel=5e-5)


def test_edwardson_fit_check_18():
    # §3.1 table, Edwardson column (printed to 6 digits).
    assert wd_edwardson(TD_17) == pytest.approx(
        [0.117733, 0.404275, 1.568300, 7.401559, 43.024981, 292.622004], rel=5e-6
    )
    # Check value 18: within 0.1 % of the exact solution for tD <= 1e4 and 0.2 % to 1e5.
    td = np.logspace(-2, 4, 61)
    assert np.max(np.abs(wd_edwardson(td) / influx_table()(td) - 1)) < 1e-3
    td = np.logspace(4, 5, 11)
    assert np.max(np.abs(wd_edwardson(td) / influx_table()(td) - 1)) < 2e-3


def test_slope_is_the_inverted_rate():
    # The table's log-log slope comes from inverting s W̄_D (= dW_D/dt_D); oracle mpmath.
    table = influx_table()
    log_wd, slope = table.log_value_and_slope(np.log(3.0))
    rate = _mp_invert(lambda s: s * _wd_inf(s), 3.0)
    assert slope * np.exp(log_wd) / 3.0 == pytest.approx(rate, rel=1e-7)


def test_pd_check_20():
    # Check value 20: constant-rate P_D at r_D = 1, infinite radial: 0.80215, 1.65089, 2.72289
    # (Laplace inversion: 1e-5 abs, the printed precision).
    assert pd_table_radial_infinite()(np.array([1.0, 10.0, 100.0])) == pytest.approx(
        [0.80215, 1.65089, 2.72289], abs=1e-5
    )
    # Late time: P_D -> (ln t_D + 0.80907)/2 (0.80907 = ln 4 − Euler's gamma; §3.3).
    assert pd_table_radial_infinite()(1e8) == pytest.approx(0.5 * (np.log(1e8) + 0.8090787), rel=1e-6)


def test_bad_input_raises():
    with pytest.raises(InputRangeError, match="r_eD must exceed 1"):
        influx_table("radial", 1.0)
    with pytest.raises(ValueError, match="unknown aquifer geometry"):
        influx_table("spherical")
    with pytest.raises(ValueError, match="closed form"):
        influx_table("linear", None)
    with pytest.raises(InputRangeError, match="beyond the table"):
        influx_table()(1e13)
    with pytest.raises(InputRangeError, match="> 0"):
        influx_table()(np.array([1.0, 0.0]))
    with pytest.raises(InputRangeError):
        wd_edwardson(-1.0)
