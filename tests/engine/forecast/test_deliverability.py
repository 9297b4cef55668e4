"""Back-pressure fits (Rawlins & Schellhardt 1936): check value 31 of the domain reference
(§5.1, a computed 4-point test), and tests built from the equation q = C (p̄² − p_wf²)^n with
known C and n, recovered by the fit. No published field test is quoted (none was at hand)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from server.engine.errors import InputRangeError
from server.engine.forecast.deliverability import calibrate, fit_back_pressure, potential_mscf_per_day
from server.engine.plan import WellTest


def _test(c, n, p_static=3000.0, pwf=(2700.0, 2400.0, 2000.0, 1500.0), noise=None, t=19000.0, well="A-1"):
    q = [c * (p_static**2 - p**2) ** n for p in pwf]
    if noise is not None:
        q = [x * math.exp(e) for x, e in zip(q, noise, strict=True)]
    return [WellTest(well, t + i, qi, p, p_static) for i, (qi, p) in enumerate(zip(q, pwf, strict=True))]


def test_check_value_31_four_point_test():
    # Domain reference §5.1 / check value 31: C = 0.005, n = 0.78, p̄ = 3000 psia,
    # pwf 2800/2600/2300/2000 -> q 268.7/448.9/665.4/839.8 Mscf/d; AOF = C p̄^2n = 1328.2 Mscf/d.
    rates = (268.7, 448.9, 665.4, 839.8)
    tests = [
        WellTest("A", 19000.0 + i, q, p, 3000.0)
        for i, (q, p) in enumerate(zip(rates, (2800.0, 2600.0, 2300.0, 2000.0), strict=True))
    ]
    d, note = fit_back_pressure(tests)
    assert note is None
    # The rates are printed to 0.1 Mscf/d, so n and C come back to that rounding (about 2e-4).
    assert d.n == pytest.approx(0.78, abs=2e-4)
    assert d.c_mscf_per_day_psi2n == pytest.approx(0.005, rel=5e-3)
    assert potential_mscf_per_day([(d.c_mscf_per_day_psi2n, d.n)], 3000.0, 0.0) == pytest.approx(
        1328.2, rel=1e-3
    )
    # Unrounded rates from the equation give the check value's 1e-6.
    exact = _test(0.005, 0.78, pwf=(2800.0, 2600.0, 2300.0, 2000.0))
    assert [t.rate_mscf_per_day for t in exact] == pytest.approx(rates, abs=0.05)
    e, _ = fit_back_pressure(exact)
    assert e.n == pytest.approx(0.78, rel=1e-6) and e.c_mscf_per_day_psi2n == pytest.approx(0.005, rel=1e-6)
    assert potential_mscf_per_day([(e.c_mscf_per_day_psi2n, e.n)], 3000.0, 0.0) == pytest.approx(
        1328.2, abs=0.05
    )


def test_a_four_rate_test_built_from_the_equation_gives_back_its_c_and_n():
    d, note = fit_back_pressure(_test(0.0035, 0.78))
    assert note is None
    assert d.n == pytest.approx(0.78, abs=1e-10)
    assert d.c_mscf_per_day_psi2n == pytest.approx(0.0035, rel=1e-9)
    assert d.n_points == 4 and d.rms_log_rate == pytest.approx(0.0, abs=1e-10)
    assert "4 rates" in d.source
    # With 3 % scatter on the rates, n comes back within the textbook reading precision.
    noisy, _ = fit_back_pressure(_test(0.0035, 0.78, noise=[0.03, -0.03, 0.02, -0.01]))
    assert noisy.n == pytest.approx(0.78, abs=0.05)
    assert noisy.rms_log_rate > 0


def test_an_exponent_outside_the_physical_range_is_clipped_with_a_note():
    d, note = fit_back_pressure(_test(1e-4, 1.2))
    assert d.n == 1.0 and "outside" in note
    # C is refitted at n = 1: the geometric mean of q / (p̄² − p_wf²).
    x = np.array([3000.0**2 - p**2 for p in (2700.0, 2400.0, 2000.0, 1500.0)])
    assert d.c_mscf_per_day_psi2n == pytest.approx(math.exp(np.mean(np.log(1e-4 * x**1.2 / x))), rel=1e-9)
    low, note = fit_back_pressure(_test(1.0, 0.3))
    assert low.n == 0.5 and "outside" in note


def test_only_the_latest_test_is_used_and_one_rate_assumes_n():
    old = _test(0.001, 0.9, t=15000.0)
    new = _test(0.004, 0.6, t=19000.0)
    d, _ = fit_back_pressure(old + new)
    assert d.n == pytest.approx(0.6) and d.n_points == 4
    one, note = fit_back_pressure(new[:1], default_n=0.85)
    assert one.n == 0.85 and "one drawdown" in note
    assert potential_mscf_per_day([(one.c_mscf_per_day_psi2n, 0.85)], 3000.0, 2700.0) == (
        pytest.approx(new[0].rate_mscf_per_day)
    )


def test_calibration_and_bad_tests():
    d = calibrate("B-2", 5000.0, 2500.0, 1000.0, 0.85, "recent")
    assert d.c_mscf_per_day_psi2n * (2500.0**2 - 1000.0**2) ** 0.85 == pytest.approx(5000.0)
    with pytest.raises(InputRangeError, match="not above the minimum flowing pressure"):
        calibrate("B-2", 5000.0, 900.0, 1000.0, 0.85, "recent")
    with pytest.raises(InputRangeError, match="static pressure above the flowing pressure"):
        fit_back_pressure([WellTest("C", 19000.0, 100.0, 3100.0, 3000.0)])
    assert potential_mscf_per_day([(1.0, 1.0)], 900.0, 1000.0) == 0.0
