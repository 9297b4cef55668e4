"""The independent van Everdingen-Hurst forward simulator (server/synthetic/aquifer.py).

It is the oracle of the history-match tests, so it is itself checked against the
published synthetic case of docs/domain-reference.md §7.2 (check value 25: p(8 yr) =
2292.97 psia, tolerance 0.5 psi for the same scheme) and against check values 18-19.
"""

import numpy as np
import pytest

from server.synthetic.aquifer import VehAquifer, simulate_veh, wd_bounded_stehfest, wd_edwardson_fit
from server.synthetic.tank import TankSpec
from tests.engine import section_7_2 as c72


@pytest.fixture(scope="module")
def history():
    spec = TankSpec(100.0, c72.PI_PSIA, c72.T_DEGF, c72.FLUID)
    t = c72.quarterly_times_days()
    return simulate_veh(
        spec, VehAquifer(c72.U_RB_PER_PSI, c72.TD_PER_DAY), t, np.full(t.size, c72.RATE_MSCF_PER_DAY)
    )


def test_reproduces_section_7_2_check_25(history):
    rows = c72.ROWS
    semi = np.arange(1, 32, 2)  # every second quarter
    # tD column (printed to 4 decimals) and Gp (exact).
    assert c72.TD_PER_DAY * history.t_days[semi] == pytest.approx(rows[:, 1], abs=5e-5)
    assert history.gp_bscf[semi] == pytest.approx(rows[:, 2], abs=1e-9)
    # Pressures: "same scheme" tolerance 0.5 psi of check value 25; we are within 0.02 psi.
    assert history.p1_psia[semi] == pytest.approx(rows[:, 3], abs=0.02)
    assert history.p1_psia[-1] == pytest.approx(2292.97, abs=0.5)
    # Cumulative influx, printed to 1e-4 MMrb.
    assert history.we_rb[semi] / 1e6 == pytest.approx(rows[:, 7], abs=1e-4)


def test_edwardson_fit_matches_section_3_1_column():
    # §3.1 table, Edwardson column (6 digits); the simulator's own copy of the fit.
    td = np.array([0.01, 0.1, 1.0, 10.0, 100.0, 1000.0])
    assert wd_edwardson_fit(td) == pytest.approx(
        [0.117733, 0.404275, 1.568300, 7.401559, 43.024981, 292.622004], rel=5e-6
    )


def test_bounded_stehfest_check_19():
    # Check value 19 (1e-4 relative): the simulator's Gaver-Stehfest, independent of the
    # engine's Talbot tables.
    assert wd_bounded_stehfest(10.0, 5.0)[0] == pytest.approx(6.9675, rel=1e-4)
    assert wd_bounded_stehfest(1000.0, 10.0)[0] == pytest.approx(49.4998, rel=1e-4)
    assert wd_bounded_stehfest(np.array([0.1, 1.0]), 5.0) == pytest.approx([0.4043, 1.5683], abs=1e-4)
