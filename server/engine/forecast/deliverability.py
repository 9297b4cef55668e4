"""Well deliverability: the back-pressure equation q = C (p̄² − p_wf²)^n, or its pseudo-pressure
form q = C [m(p̄) − m(p_wf)]^n.

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

The **pseudo-pressure form** (``form="pseudo_pressure"``) puts the real-gas pseudo-pressure
m(p) = 2 ∫ p/(μ z) dp (Al-Hussainy, Ramey & Crawford 1966; :mod:`..pvt.pseudopressure`) in
place of p²: the same least squares on ln q against ln Δm, the same calibration with Δm.
At low pressure, where μ z is nearly a constant (μ z)₀, Δm = Δ(p²)/(μ z)₀, so the two forms
agree with C_p² = C_m / (μ z)₀^n and the same n. At high pressure p/(μ z) levels off and
Δm falls less than Δ(p²) as the reservoir depletes, so a C found at high pressure
extrapolates to more deliverability at lower pressures in the m(p) form than in the p² form.

Rates are separator gas [Mscf/d], pressures psia; C in Mscf/d/psi^(2n) in the p² form and
Mscf/d/(psi²/cP)^n in the m(p) form.
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
#: The two forms of the back-pressure equation (the same keys as the tank networks' potentials).
FORMS = ("pressure_squared", "pseudo_pressure")
FORM_WORDS = {"pressure_squared": "p²", "pseudo_pressure": "m(p)"}
#: Points of one test: the flow periods of a well within this many days of its latest one.
TEST_WINDOW_DAYS = 31.0


def date_text(t_days: float) -> str:
    return (dt.date(1970, 1, 1) + dt.timedelta(days=round(t_days))).isoformat()


def drawdown(p_psia: float, pwf_psia: float, pseudo_pressure=None) -> float:
    """p̄² − p_wf² [psi²], or m(p̄) − m(p_wf) [psi²/cP] given the field's m(p) table."""
    if pseudo_pressure is None:
        return p_psia * p_psia - pwf_psia * pwf_psia
    return pseudo_pressure(p_psia) - pseudo_pressure(pwf_psia) if p_psia > pwf_psia else 0.0


def potential_mscf_per_day(wells, p_psia: float, pwf_psia: float, pseudo_pressure=None) -> float:
    """Σ C Δ^n over ``wells`` [Mscf/d]; zero when p̄ <= p_wf.

    ``wells`` are pairs (C, n) in the p² form, or triples (C, n, form); a well in the
    ``"pseudo_pressure"`` form needs ``pseudo_pressure``, the field's m(p) table.
    """
    x = p_psia * p_psia - pwf_psia * pwf_psia
    if x <= 0.0:
        return 0.0
    xm = None
    total = 0.0
    for w in wells:
        if len(w) > 2 and w[2] == "pseudo_pressure":
            if xm is None:
                xm = drawdown(p_psia, pwf_psia, pseudo_pressure)
            total += w[0] * xm ** w[1]
        else:
            total += w[0] * x ** w[1]
    return total


def fit_back_pressure(
    tests: Sequence[WellTest], *, default_n: float = 0.85, pseudo_pressure=None
) -> tuple[Deliverability, str | None]:
    """C and n of one well from its latest multi-rate test, with a note when n was clipped.

    Parameters
    ----------
    tests : sequence of WellTest
        Flow periods of one well (the latest test's periods are used: those within
        ``TEST_WINDOW_DAYS`` of the last one).
    default_n : float
        n used when the test has a single distinct drawdown (C alone is then determined).
    pseudo_pressure : callable, optional
        The field's m(p) [psi²/cP] (:class:`..pvt.pseudopressure.PseudoPressureTable`): the
        fit is then in the pseudo-pressure form, ln q on ln(m(p̄) − m(p_wf)).

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
    x = np.log([drawdown(t.static_pressure_psia, t.flowing_bhp_psia, pseudo_pressure) for t in pts])
    y = np.log([t.rate_mscf_per_day for t in pts])
    form = FORMS[0] if pseudo_pressure is None else FORMS[1]
    source = f"well test of {date_text(last)} ({len(pts)} rate{'s' if len(pts) != 1 else ''})"
    if pseudo_pressure is not None:
        source += ", fitted in m(p)"
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
    return Deliverability(well, math.exp(ln_c), float(n), source, len(pts), rms, form), note


def calibrate(
    well: str,
    rate_mscf_per_day: float,
    p_psia: float,
    pwf_psia: float,
    n: float,
    source: str,
    pseudo_pressure=None,
) -> Deliverability:
    """C = q / Δ^n of a well from an on-stream rate [Mscf/d] at p̄ and p_wf [psia], with
    Δ = p̄² − p_wf², or m(p̄) − m(p_wf) given the field's m(p) table ``pseudo_pressure``."""
    if not N_MIN <= n <= N_MAX:
        raise InputRangeError(f"the deliverability exponent must lie in {N_MIN}-{N_MAX}; got {n}")
    x = drawdown(p_psia, pwf_psia, pseudo_pressure) if p_psia > pwf_psia else 0.0
    if not x > 0:
        raise InputRangeError(
            f"{well or 'the field'}: the recent average pressure {p_psia:,.0f} psia is not above the "
            f"minimum flowing pressure {pwf_psia:,.0f} psia, so C cannot be calibrated"
        )
    if not rate_mscf_per_day > 0:
        raise InputRangeError(f"{well or 'the field'}: no recent production to calibrate C from")
    form = FORMS[0] if pseudo_pressure is None else FORMS[1]
    return Deliverability(well, rate_mscf_per_day / x**n, n, source, 1, None, form)
