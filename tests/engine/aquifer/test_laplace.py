"""Numerical Laplace inversion (fixed Talbot, Gaver-Stehfest) against exact pairs and mpmath.

mpmath's ``invertlaplace`` (arbitrary precision, Talbot method) is the independent oracle;
the analytic pairs are standard (Abramowitz & Stegun 1964, table 29.3 — from memory,
each trivially verified by differentiation).
"""

import mpmath as mp
import numpy as np
import pytest
from scipy import special

from server.engine.aquifer.laplace import invert_laplace, invert_stehfest, invert_talbot, stehfest_weights

T = np.array([0.05, 0.5, 1.0, 3.0, 10.0])


@pytest.mark.parametrize(
    ("f_bar", "f"),
    [
        (lambda s: 1.0 / (s + 2.0), lambda t: np.exp(-2.0 * t)),
        (lambda s: 1.0 / s**2, lambda t: t),
        (lambda s: 1.0 / (s * np.sqrt(s)), lambda t: 2.0 * np.sqrt(t / np.pi)),
        (lambda s: 1.0 / ((s + 1.0) * (s + 3.0)), lambda t: 0.5 * (np.exp(-t) - np.exp(-3.0 * t))),
    ],
)
def test_talbot_exact_pairs(f_bar, f):
    # Singularities on the non-positive real axis only (the contour's precondition; Talbot is
    # not meant for oscillating f such as sin t). With 24 nodes in double precision rounding is
    # amplified by e^(2M/5) ~ 1.5e4, so about 1e-10 absolute is attainable for O(1) functions.
    assert invert_talbot(f_bar, T) == pytest.approx(f(T), abs=1e-9)


def test_stehfest_exact_pairs_to_its_usual_accuracy():
    # Gaver-Stehfest N = 14 in double precision: about 6 significant digits for smooth,
    # non-oscillating functions (Stehfest 1970); it cannot follow sin(t), so it is not tried.
    assert invert_stehfest(lambda s: 1.0 / (s + 2.0), T[:3]) == pytest.approx(np.exp(-2.0 * T[:3]), rel=1e-4)
    assert invert_stehfest(lambda s: 1.0 / s**2, T) == pytest.approx(T, rel=1e-6)


def test_stehfest_weights_reproduce_a_constant():
    # F(s) = 1/s <-> f = 1 is reproduced exactly: sum(V_k / k) = 1 (to the rounding of weights
    # of order 1e8 with alternating signs); F = 1/s^2 <-> t only to the method's accuracy,
    # sum(V_k / k^2) ≈ ln 2.
    v = stehfest_weights(14)
    k = np.arange(1, 15)
    assert np.sum(v / k) == pytest.approx(1.0, rel=1e-8)
    assert np.sum(v / k**2) == pytest.approx(np.log(2.0), rel=1e-6)


def _wd_bar_scipy(s):
    x = np.sqrt(s)
    return special.kve(1, x) / (s * x * special.kve(0, x))


def _wd_bar_mp(s):
    x = mp.sqrt(s)
    return mp.besselk(1, x) / (s * x * mp.besselk(0, x))


@pytest.mark.parametrize("td", [0.3, 7.0, 250.0])
def test_talbot_and_stehfest_against_mpmath_on_the_radial_influx(td):
    # Oracle: mpmath's Talbot at 15 digits on the van Everdingen-Hurst transform K1/(s^1.5 K0)
    # (mpmath's complex Bessel functions are slow at the large |s| that small t_D needs, so
    # small t_D is checked against check value 17 in tests/engine/aquifer/test_dimensionless.py).
    with mp.workdps(15):
        exact = float(mp.invertlaplace(_wd_bar_mp, td, method="talbot"))
    assert invert_talbot(_wd_bar_scipy, td) == pytest.approx(exact, rel=1e-9)
    assert invert_stehfest(_wd_bar_scipy, td) == pytest.approx(exact, rel=2e-6)


def test_named_method_and_bad_input():
    assert invert_laplace(lambda s: 1.0 / s**2, 2.0, method="stehfest") == pytest.approx(2.0, rel=1e-6)
    assert isinstance(invert_laplace(lambda s: 1.0 / s**2, 2.0), float)
    with pytest.raises(ValueError, match="unknown Laplace inversion method"):
        invert_laplace(lambda s: 1.0 / s, 1.0, method="dehoog")
    with pytest.raises(ValueError, match="times > 0"):
        invert_talbot(lambda s: 1.0 / s, [1.0, 0.0])
    with pytest.raises(ValueError, match="positive even"):
        stehfest_weights(13)
