"""Compile the engine's numba kernels (:mod:`.accel`) once and fill their on-disk cache:
``make setup`` and the Docker image run it, so that no worker pays the compile (about 2 s;
loading the cached code about 0.5 s).

Run: python -m server.engine.warm
"""

from __future__ import annotations

import numpy as np

from . import accel


def warm() -> bool:
    """Call each compiled kernel once, with the argument types the engine passes; False
    (nothing compiled) when numba is not installed."""
    if not accel.enable():
        return False
    from .aquifer.compiled import linear_responses, newton_history, table_column
    from .compartments.two_tank_sensitivity import _march

    n = 4
    p, zeros = np.full(n, 900.0), np.zeros(n)
    kernel, m = np.array([1.0, 0.5, 0.25, 0.125]), np.array([-1.0, -0.5, -0.25, -0.125])
    offsets, coefs = np.array([0], dtype=np.int64), np.array([-1.0])
    tab_p = np.linspace(14.7, 1500.0, 11)
    tab_phi, tab_dphi = tab_p / 0.9, np.full(11, 1 / 0.9)
    gp = np.linspace(1e8, 4e8, n)
    newton_history(
        kernel, m, offsets, coefs, 1000.0, tab_p, tab_phi, tab_dphi, 0.0, zeros, gp, 1e9, 1e6, 1000.0 / 0.9,
        p.copy(), 1e-7, 30,
    )  # fmt: skip
    table_column(tab_p, np.log(tab_phi), np.full(11, 0.5), True, 1.0, n)
    two = np.ones(2)
    linear_responses(
        np.vstack([kernel, kernel]), np.array([False, True]), 1e9 * two, 1000.0 * two, 1000.0 / 0.9 * two,
        1e6 * two, p, zeros, m, offsets, coefs, tab_p, tab_phi, tab_dphi, 0.0, zeros, gp,
    )  # fmt: skip
    pot = tab_phi**2
    out = np.zeros((n + 1, 10))
    accel.compiled(_march)(
        1e9, 2e9, 1e-3, 1000.0, pot, np.diff(pot) / 148.5, 148.5, 16.3, np.full(n, 91.3), np.zeros((n, 2)),
        out,
    )  # fmt: skip
    return True


if __name__ == "__main__":
    print("compiled kernels cached" if warm() else "numba is not installed: nothing to compile")
