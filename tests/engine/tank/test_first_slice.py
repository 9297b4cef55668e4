"""First engine slice: DAK z with Sutton pseudo-criticals, Bg, the p/z line, GIIP and RF.

"Check value N" refers to the table in docs/domain-reference.md §8, which gives each
number's provenance (verified against a stored source, computed, or from memory).
"""

import numpy as np
import pytest
from scipy.optimize import brentq

from server.engine.pvt.gas import (
    GasFluid,
    bg_rcf_per_scf,
    pseudo_critical_sutton,
    z_factor,
    z_factor_dranchuk_abou_kassem,
)
from server.engine.tank.pz_estimate import fit_pz_line, recovery_factor_volumetric
from server.engine.units import OILFIELD_60F


def test_sutton_pseudo_criticals_check_6():
    # Check value 6: Sutton (1985) SPE-14265 formula, gamma = 0.65 -> 365.110 degR, 670.129 psia
    # (computed from the published formula; tolerance is the printed precision).
    tpc, ppc = pseudo_critical_sutton(0.65)
    assert tpc == pytest.approx(365.110, abs=5e-4)
    assert ppc == pytest.approx(670.129, abs=5e-4)


@pytest.mark.parametrize(
    ("tpr", "ppr", "z_expected"),
    [(1.5, 2.0, 0.8215), (2.0, 5.0, 0.9595), (1.2, 3.0, 0.5302), (3.0, 15.0, 1.3279), (1.05, 2.0, 0.3284)],
)
def test_dak_check_9(tpr, ppr, z_expected):
    # Check value 9: DAK (1975) with the published 11 constants, solved to the gas-like
    # root; values computed for the domain reference, printed to 4 decimals -> 1e-4 abs.
    assert z_factor_dranchuk_abou_kassem(ppr, tpr) == pytest.approx(z_expected, abs=1e-4)


def test_dak_vectorised_matches_scalar():
    ppr = np.array([2.0, 5.0, 3.0, 15.0, 2.0])
    tpr = np.array([1.5, 2.0, 1.2, 3.0, 1.05])
    z = z_factor_dranchuk_abou_kassem(ppr, tpr)
    assert z.shape == (5,)
    for p, t, zz in zip(ppr, tpr, z, strict=True):
        assert zz == pytest.approx(z_factor_dranchuk_abou_kassem(p, t), rel=1e-12)


def test_dak_single_point_check_12():
    # Check value 12: gamma 0.70, Sutton, 200 degF, 2000 psia -> z = 0.88037 (computed).
    assert z_factor(2000.0, 200.0, GasFluid(0.70)) == pytest.approx(0.88037, abs=1e-4)


def test_dak_satisfies_its_own_equation_of_state():
    # Independent check of the solver: the returned z must satisfy the DAK equation
    # z = Z(rho_r) with rho_r = 0.27 Ppr / (z Tpr), evaluated here term by term.
    a = (0.3265, -1.0700, -0.5339, 0.01569, -0.05165, 0.5475, -0.7361, 0.1844, 0.1056, 0.6134, 0.7210)
    for tpr, ppr in [(1.3, 0.5), (1.7, 4.0), (2.5, 10.0), (1.1, 1.0)]:
        z = z_factor_dranchuk_abou_kassem(ppr, tpr)
        r = 0.27 * ppr / (z * tpr)
        rhs = (
            1
            + (a[0] + a[1] / tpr + a[2] / tpr**3 + a[3] / tpr**4 + a[4] / tpr**5) * r
            + (a[5] + a[6] / tpr + a[7] / tpr**2) * r**2
            - a[8] * (a[6] / tpr + a[7] / tpr**2) * r**5
            + a[9] * (1 + a[10] * r**2) * (r**2 / tpr**3) * np.exp(-a[10] * r**2)
        )
        assert z == pytest.approx(rhs, abs=1e-10)


def test_bg_coefficient_check_1():
    # Check value 1: Bg = 0.0282795 zT/p ft3/scf at 14.696 psia and 519.67 degR (definition).
    z, t_degR, p = 0.9, 140.0 + 459.67, 1000.0
    assert bg_rcf_per_scf(p, 140.0, z, OILFIELD_60F) / (z * t_degR / p) == pytest.approx(0.0282795, rel=1e-6)


# Check value 24 (domain reference §7.6): exact volumetric line, G = 100 Bscf,
# gamma 0.65 (Sutton), DAK, 200 degF, pi = 5000 psia (computed for the reference).
GP_BSCF = np.array([0, 5, 10, 20, 30, 40, 50, 60, 70], float)
P_PSIA = np.array([5000.00, 4637.70, 4302.38, 3698.27, 3163.05, 2677.18, 2224.42, 1790.64, 1363.02])
FLUID = GasFluid(0.65)


def _p_at_gp(gp_bscf, giip_bscf=100.0):
    pz_i = 5000.0 / z_factor(5000.0, 200.0, FLUID)
    target = pz_i * (1 - gp_bscf / giip_bscf)
    return brentq(lambda p: p / z_factor(p, 200.0, FLUID) - target, 100.0, 5000.0, xtol=1e-10)


def test_forward_pressure_check_24():
    # p(Gp = 40 Bscf) = 2677.18 psia, tolerance 0.05 psi (printed to 0.01).
    assert _p_at_gp(40.0) == pytest.approx(2677.18, abs=0.05)


def test_fitted_giip_check_24():
    pz = P_PSIA / z_factor(P_PSIA, 200.0, FLUID)
    line = fit_pz_line(GP_BSCF, pz)
    # Pressures are printed to 0.01 psia, so the fit can be exact only to about 1e-4 Bscf.
    assert line.giip_bscf == pytest.approx(100.0, abs=2e-3)
    assert line.intercept_psia == pytest.approx(4968.08, abs=0.02)


def test_recovery_factor_check_24():
    # Abandonment at 1000 psia: z = 0.93169, p/z = 1073.32, RF = 0.7840, EUR = 78.40 Bscf.
    za = z_factor(1000.0, 200.0, FLUID)
    assert za == pytest.approx(0.93169, abs=1e-4)
    pz_i = 5000.0 / z_factor(5000.0, 200.0, FLUID)
    rf = recovery_factor_volumetric(1000.0 / za, pz_i)
    assert rf == pytest.approx(0.7840, abs=1e-4)
    assert 100.0 * rf == pytest.approx(78.40, abs=0.01)


def test_line_refuses_without_depletion():
    from server.engine.errors import InsufficientDataError

    with pytest.raises(InsufficientDataError):
        fit_pz_line(np.array([1.0]), np.array([4000.0]))
    with pytest.raises(InsufficientDataError):
        fit_pz_line(np.array([1.0, 2.0]), np.array([4000.0, 4100.0]))


def test_bad_inputs_raise():
    from server.engine.errors import InputRangeError

    with pytest.raises(InputRangeError):
        z_factor(-10.0, 200.0, FLUID)
    with pytest.raises(InputRangeError):
        z_factor_dranchuk_abou_kassem(2.0, 0.9)
    assert np.isnan(z_factor_dranchuk_abou_kassem(np.nan, 1.5))
