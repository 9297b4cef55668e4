"""Well deliverability: the back-pressure equation q = C (p̄² − p_wf²)^n.

Rawlins, E.L. and Schellhardt, M.A. (1936), *Back-pressure data on natural-gas wells and
their application to production practices*, U.S. Bureau of Mines Monograph 7: the rate of
a stabilised gas well q [Mscf/d] against the drawdown in pressure squared, a straight line
of slope n on log-log paper. n = 1 is laminar (Darcy) flow, n = 0.5 fully turbulent flow;
values outside [0.5, 1.0] come from unstabilised or mis-recorded tests (common practice).

Two ways to C and n:

* a **multi-rate test** (:func:`fit_back_pressure`): least squares of ln q on
  ln(p̄² − p_wf²), n clipped to [0.5, 1.0] with a note (C then refitted at the bound);
* **calibration** (:func:`calibrate`): C = q / (p̄² − p_wf²)^n from a recent on-stream rate,
  the average pressure of recent surveys and the flowing pressure the well is assumed to
  produce against, with n given (the plan's exponent; 0.85 by default, common practice).
  A well held back by a contract rate produced below its potential, so its calibrated C
  is a lower bound.

Rates are separator gas [Mscf/d], pressures psia, C in Mscf/d/psi^(2n).
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Sequence

import numpy as np

from ..errors import InputRangeError
from ..plan import WellTest
from .types import Deliverability

N_MIN, N_MAX = 0.5, 1.0
#: Points of one test: the flow periods of a well within this many days of its latest one.
TEST_WINDOW_DAYS = 31.0


def date_text(t_days: float) -> str:
    return (dt.date(1970, 1, 1) + dt.timedelta(days=round(t_days))).isoformat()


def potential_mscf_per_day(wells, p_psia: float, pwf_psia: float) -> float:
    """Σ C (p̄² − p_wf²)^n over ``wells``, pairs (C, n) [Mscf/d]; zero when p̄ <= p_wf."""
    x = p_psia * p_psia - pwf_psia * pwf_psia
    if x <= 0.0:
        return 0.0
    return sum(c * x**n for c, n in wells)


def fit_back_pressure(
    tests: Sequence[WellTest], *, default_n: float = 0.85
) -> tuple[Deliverability, str | None]:
    """C and n of one well from its latest multi-rate test, with a note when n was clipped.

    Parameters
    ----------
    tests : sequence of WellTest
        Flow periods of one well (the latest test's periods are used: those within
        ``TEST_WINDOW_DAYS`` of the last one).
    default_n : float
        n used when the test has a single distinct drawdown (C alone is then determined).

    Returns
    -------
    (Deliverability, note or None)

    References
    ----------
    Rawlins & Schellhardt (1936); the log-log least-squares fit is common practice.
    """
    if not tests:
        raise InputRangeError("no well test to fit")
    well = tests[0].well
    last = max(t.t_days for t in tests)
    pts = [t for t in tests if t.t_days >= last - TEST_WINDOW_DAYS]
    for t in pts:
        if not (t.rate_mscf_per_day > 0 and t.static_pressure_psia > t.flowing_bhp_psia > 0):
            raise InputRangeError(
                f"well test of {well} on {date_text(t.t_days)}: needs a positive rate and a static pressure "
                f"above the flowing pressure (got {t.rate_mscf_per_day} Mscf/d, "
                f"{t.flowing_bhp_psia} psia flowing, {t.static_pressure_psia} psia static)"
            )
    x = np.log([t.static_pressure_psia**2 - t.flowing_bhp_psia**2 for t in pts])
    y = np.log([t.rate_mscf_per_day for t in pts])
    source = f"well test of {date_text(last)} ({len(pts)} rate{'s' if len(pts) != 1 else ''})"
    note = None
    if len(pts) < 2 or np.ptp(x) < 1e-6:
        n = default_n
        note = f"{well}: the test has one drawdown only, so n = {n:g} is assumed and C fitted"
    else:
        n, _ = np.polyfit(x, y, 1)
        if not N_MIN <= n <= N_MAX:
            clipped = min(max(n, N_MIN), N_MAX)
            note = (
                f"{well}: the test's exponent n = {n:.2f} lies outside {N_MIN}-{N_MAX} (an unstabilised "
                f"or mis-recorded test?); n = {clipped:g} is used and C refitted"
            )
            n = clipped
    ln_c = float(np.mean(y - n * x))
    rms = float(np.sqrt(np.mean((y - ln_c - n * x) ** 2))) if len(pts) > 1 else None
    return Deliverability(well, math.exp(ln_c), float(n), source, len(pts), rms), note


def calibrate(
    well: str, rate_mscf_per_day: float, p_psia: float, pwf_psia: float, n: float, source: str
) -> Deliverability:
    """C = q / (p̄² − p_wf²)^n of a well from an on-stream rate [Mscf/d] at p̄ and p_wf [psia]."""
    if not N_MIN <= n <= N_MAX:
        raise InputRangeError(f"the deliverability exponent must lie in {N_MIN}-{N_MAX}; got {n}")
    drawdown = p_psia * p_psia - pwf_psia * pwf_psia
    if not drawdown > 0:
        raise InputRangeError(
            f"{well or 'the field'}: the recent average pressure {p_psia:,.0f} psia is not above the "
            f"minimum flowing pressure {pwf_psia:,.0f} psia, so C cannot be calibrated"
        )
    if not rate_mscf_per_day > 0:
        raise InputRangeError(f"{well or 'the field'}: no recent production to calibrate C from")
    return Deliverability(well, rate_mscf_per_day / drawdown**n, n, source, 1, None)
