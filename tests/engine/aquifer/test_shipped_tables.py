"""The W_D and P_D tables shipped as package data (``wd_tables.npz``).

Rebuilt here by the same Laplace inversion and compared node by node, so a change of the
inversion, the grid or a transform that is not followed by a rebuild fails; the tables'
own accuracy is tested against published values and mpmath in test_dimensionless.py (check
values 17-20 of docs/domain-reference.md §8), which now read the shipped tables.
"""

import numpy as np
import pytest

from server.engine.aquifer import dimensionless as dl
from server.engine.aquifer.history_match import VEH_RED_GRID


@pytest.fixture(scope="module")
def rebuilt(tmp_path_factory):
    path = tmp_path_factory.mktemp("tables") / "wd_tables.npz"
    return path, dl.write_shipped_tables(path)


def test_shipped_tables_equal_a_fresh_laplace_inversion(rebuilt):
    path, tables = rebuilt
    with np.load(dl.SHIPPED_TABLES_PATH) as shipped, np.load(path) as fresh:
        assert sorted(shipped.files) == sorted(fresh.files)
        assert str(shipped["recipe"]) == dl._tables_recipe()
        for key in fresh.files:
            if key == "recipe":
                continue
            # Same code, same floating point: equal to round-off (another BLAS or CPU may
            # differ in the last bits of the Bessel functions). A slope is a difference of
            # neighbouring values: where a bounded aquifer has filled it is zero and round-off
            # leaves a few 1e-12 there (seen: 5.8e-12 against 0.0), so slopes get 1e-10.
            atol = 1e-10 if key.endswith(".slope") else 1e-13
            np.testing.assert_allclose(shipped[key], fresh[key], rtol=1e-11, atol=atol, err_msg=key)


def test_influx_tables_come_from_the_shipped_file():
    data = dl._shipped_tables()
    for red in dl.SHIPPED_RADIAL_REDS:
        key = dl._table_key("radial", red)
        assert dl.influx_table("radial", red).log_f is not None
        np.testing.assert_array_equal(dl.influx_table("radial", red).log_f, data[key + ".log_f"])
    np.testing.assert_array_equal(dl.pd_table_radial_infinite().slope, data[dl.PD_RADIAL_KEY + ".slope"])


def test_the_history_match_grid_is_shipped():
    assert set(VEH_RED_GRID) <= set(dl.SHIPPED_RADIAL_REDS)


def test_a_geometry_not_shipped_is_computed(rebuilt):
    _, tables = rebuilt
    linear = dl.influx_table("linear", 1.0)  # bounded linear: not in the file
    assert dl._table_key("linear", 1.0) not in tables
    assert linear(40.0) == pytest.approx(1.0)  # its plateau (Dake 1978, eq. 9.12)


def test_a_file_made_with_other_settings_is_ignored(tmp_path, monkeypatch):
    path = tmp_path / "wd_tables.npz"
    np.savez(path, recipe=np.array("points/decade=12"), **{"wd_radial_infinite.log_f": np.zeros(3)})
    monkeypatch.setattr(dl, "SHIPPED_TABLES_PATH", path)
    dl._shipped_tables.cache_clear()
    try:
        assert dl._shipped_tables() == {}
        assert dl._shipped_table("wd_radial_infinite", "W_D radial", None) is None
    finally:
        dl._shipped_tables.cache_clear()
