"""A laboratory z table: monotone interpolation, Bg input, and what happens beyond it.

The independent reference is CoolProp's methane equation of state (Setzmann & Wagner
1991): a "lab table" is sampled from it and the interpolant is checked against it
between the samples.
"""

import numpy as np
import pytest

from server.engine.errors import InputRangeError
from server.engine.pvt.gas import GasFluid, bg_rcf_per_scf, z_factor
from server.engine.pvt.labtable import LabTableRangeError, LabZTable, z_from_bg
from server.engine.units import ISO_15C, degF_from_K, psia_from_mpa

CP = pytest.importorskip("CoolProp.CoolProp")


def _methane_z(p_psia, t_k=330.0):
    return np.array([CP.PropsSI("Z", "T", t_k, "P", p * 6894.757293168361, "Methane") for p in p_psia])


def test_interpolates_a_reference_table_between_its_points():
    # Twelve points 500-8000 psia, like a constant-composition expansion report.
    p_tab = np.linspace(500.0, 8000.0, 12)
    table = LabZTable(p_tab, _methane_z(p_tab))
    p_mid = 0.5 * (p_tab[1:] + p_tab[:-1])
    err = table(p_mid) / _methane_z(p_mid) - 1
    # PCHIP with 680 psi spacing: measured 0.16 % in the interval at the z minimum (PCHIP
    # puts a zero slope at a local extremum of the data, the price of never overshooting)
    # and below 0.07 % elsewhere; asserted 0.2 % and 0.1 %.
    assert np.max(np.abs(err)) < 2e-3
    assert np.sort(np.abs(err))[-2] < 1e-3
    # And it beats straight-line interpolation between the same points.
    linear = np.interp(p_mid, p_tab, table.z_factor)
    assert np.max(np.abs(err)) < np.max(np.abs(linear / _methane_z(p_mid) - 1))
    np.testing.assert_allclose(table(p_tab), table.z_factor, rtol=1e-14)  # through every point


def test_never_overshoots_between_points():
    # A coarse table around the z minimum: PCHIP stays within each interval's end values.
    p = np.array([1000.0, 2000.0, 2500.0, 3000.0, 6000.0])
    z = np.array([0.93, 0.86, 0.85, 0.86, 1.05])
    table = LabZTable(p, z)
    for a, b, za, zb in zip(p[:-1], p[1:], z[:-1], z[1:], strict=True):
        zz = table(np.linspace(a, b, 50))
        assert zz.min() >= min(za, zb) - 1e-12 and zz.max() <= max(za, zb) + 1e-12


def test_bg_table_is_converted_to_z():
    # z = Bg p / (T p_sc/T_sc): round trip through Bg at ISO standard conditions.
    p = np.array([1000.0, 3000.0, 5000.0])
    z = z_factor(p, 200.0, GasFluid(0.65))
    bg = bg_rcf_per_scf(p, 200.0, z, ISO_15C)
    np.testing.assert_allclose(z_from_bg(bg, p, 200.0, ISO_15C), z, rtol=1e-13)
    table = LabZTable.from_bg(p, bg, 200.0, ISO_15C)
    np.testing.assert_allclose(table(p), z, rtol=1e-13)


def test_outside_the_table_is_an_error_by_default():
    table = LabZTable(np.array([1500.0, 3000.0, 5000.0]), np.array([0.88, 0.87, 0.97]))
    with pytest.raises(
        LabTableRangeError, match=r"1000.0 psia is outside the laboratory table \(1500.0-5000.0"
    ):
        table(np.array([2000.0, 1000.0]))
    assert table.outside_mask(np.array([1000.0, 2000.0, 6000.0])).tolist() == [True, False, True]
    assert np.isnan(table(np.nan))


def test_scaled_correlation_beyond_the_table_meets_it_at_each_end():
    fluid = GasFluid(0.5539)
    t_k = 330.0

    def corr(p):
        return z_factor(p, degF_from_K(t_k), fluid)

    p_tab = psia_from_mpa(np.array([10.0, 15.0, 20.0, 30.0]))
    table = LabZTable(p_tab, _methane_z(p_tab), outside="scaled_correlation", correlation=corr)
    lo, hi = table.end_ratios()
    # Continuous at the ends, and the correlation's shape times the end ratio beyond them.
    assert table(p_tab[0] * (1 - 1e-9)) == pytest.approx(table.z_factor[0], rel=1e-8)
    assert table(p_tab[-1] * (1 + 1e-9)) == pytest.approx(table.z_factor[-1], rel=1e-8)
    assert table(500.0) == pytest.approx(corr(500.0) * lo, rel=1e-12)
    assert table(6000.0) == pytest.approx(corr(6000.0) * hi, rel=1e-12)
    # Against the reference below the table the scaled correlation is within the
    # correlation's own 2 % (§1.9) - and better than the bare correlation here.
    p_low = psia_from_mpa(np.array([2.0, 5.0]))
    ref = _methane_z(p_low)
    assert np.max(np.abs(table(p_low) / ref - 1)) < 0.02
    with pytest.raises(ValueError, match="needs a correlation"):
        LabZTable(p_tab, _methane_z(p_tab), outside="scaled_correlation")


@pytest.mark.parametrize(
    ("p", "z", "message"),
    [
        ([2000.0], [0.9], "at least two"),
        ([2000.0, 2000.0], [0.9, 0.9], "appears twice"),
        ([2000.0, np.nan], [0.9, 0.9], "must be a number"),
        ([-5.0, 2000.0], [0.9, 0.9], "positive"),
        ([1000.0, 2000.0], [0.9, 3.5], "between 0.1 and 3"),
        ([1000.0, 2000.0, 3000.0], [0.9, 0.9], "3 pressures but 2"),
    ],
)
def test_bad_tables_are_refused(p, z, message):
    with pytest.raises(InputRangeError, match=message):
        LabZTable(np.array(p), np.array(z))


def test_unsorted_input_is_sorted_and_unknown_mode_refused():
    table = LabZTable(np.array([3000.0, 1000.0, 2000.0]), np.array([0.87, 0.93, 0.88]))
    assert table.pressure_psia.tolist() == [1000.0, 2000.0, 3000.0]
    assert table.z_factor.tolist() == [0.93, 0.88, 0.87]
    with pytest.raises(ValueError, match="unknown lab-table extrapolation"):
        LabZTable(np.array([1000.0, 2000.0]), np.array([0.9, 0.9]), outside="linear")
    with pytest.raises(InputRangeError):
        table(-1.0)
