"""One month's field rate: the mid-point equation q = rate((p_start + p_end(q))/2) and its solver.

The excess F(q) = q − rate(p̄(q)) [Mscf/d] is increasing with a slope of at least 1: the
wells' rate does not fall as the average pressure rises, and the month's end pressure does
not rise as more gas is withdrawn. So the equation has one root q* in [0, q_hi], q_hi the
rate at the start-of-month pressure, and any q is within |F(q)| of it (mean value theorem):
the solver stops when |F(q)| <= 1e-10 q_hi, a bound on the error itself, not on a step.

The iteration is a secant method kept inside a bracket (a step that leaves the bracket is
replaced by a bisection), seeded by the profile's extrapolation of the last months' rates and
the last month's slope of F; a month on the plateau is recognised by F(q_hi) <= 0. Months
cost three or four stepper trials instead of a dozen. Should the iteration ever fail to
converge it falls back to scipy's Brent method on the whole bracket (Brent 1973,
*Algorithms for Minimization without Derivatives*, ch. 4). The secant method and its
safeguarding are textbook numerics (common practice).
"""

from __future__ import annotations

import math

from scipy.optimize import brentq

from .steppers import Stepper

#: The solver's bound on |q − q*| as a share of the start-of-month rate q_hi.
RATE_RTOL = 1e-10
_MAX_ITER = 60


class MonthSeed:
    """Where the next month's solve starts: the drawdown's effect extrapolated from the last months.

    A month's rate is q = q_hi / (1 + g days), with g [1/day] the share of the start-of-month
    rate q_hi the month's own withdrawal takes off per day of the month; g changes slowly from
    month to month, so the last two months' g extrapolate linearly to the next.
    """

    def __init__(self):
        self.g1 = self.g2 = None  # the last and the previous month's g [1/day]
        self.slope = 1.0  # the last month's slope of F

    def guess(self, q_hi: float, days: float) -> float | None:
        g1, g2 = self.g1, self.g2
        if g1 is None:
            return None
        nxt = g1 if g2 is None else 2.0 * g1 - g2
        return q_hi / (1.0 + nxt * days) if nxt > 0.0 else q_hi

    def update(self, q: float, q_hi: float, days: float, slope: float) -> None:
        g = (q_hi / q - 1.0) / days if q > 0.0 and days > 0.0 else None
        self.g1, self.g2 = g, self.g1 if g is not None else None
        self.slope = slope


def month_rate_mscf_per_day(
    stepper: Stepper,
    rate,
    pwf_psia: float,
    days: float,
    wet: float,
    seed: MonthSeed | None = None,
) -> float:
    """The month's rate q [Mscf/d] with q = rate((p_start + p_end(q))/2), p_end never below p_wf.

    Parameters
    ----------
    stepper : Stepper
        The basis model at the start of the month (left unchanged; its last trial is at q).
    rate : callable
        Field rate [Mscf/d] at an average pressure [psia], nondecreasing.
    pwf_psia : float
        The wells' minimum flowing pressure: the month never ends below it.
    days, wet : float
        The month's length [days] and the model gas per Mscf of separator gas [scf/Mscf].
    seed : MonthSeed, optional
        Where to start, from the last months (updated with this month's solve).
    """
    p0, trial = stepper.p_psia, stepper.trial

    def excess(q):  # the withdrawal q days wet is the profile's own product, so trials are reused
        return q - rate(0.5 * (p0 + trial(q * days * wet, days)))

    q_hi = rate(p0)
    if not q_hi > 0:
        if seed is not None:
            seed.update(0.0, q_hi, days, 1.0)
        return q_hi
    if seed is None:
        q, _ = _solve(excess, q_hi, None, 1.0)
    else:
        q, slope = _solve(excess, q_hi, seed.guess(q_hi, days), seed.slope)
        seed.update(q, q_hi, days, slope)
    if q > 0 and trial(q * days * wet, days) < pwf_psia:  # the mid-point rate overshot: not below p_wf
        q = brentq(lambda x: trial(x * days * wet, days) - pwf_psia, 0.0, q, xtol=1e-9 * q)
    return q


def _solve(excess, q_hi: float, guess: float | None, slope: float) -> tuple[float, float]:
    """The root of the increasing ``excess`` in [0, q_hi] (q_hi when excess(q_hi) <= 0)."""
    tol = RATE_RTOL * q_hi
    lo, hi, f_hi = 0.0, q_hi, None  # excess(0) <= 0; excess(q_hi) not yet known
    x = guess if guess is not None and 0.0 < guess < q_hi else q_hi
    s = slope if slope >= 1.0 and math.isfinite(slope) else 1.0
    x_prev = f_prev = None
    for _ in range(_MAX_ITER):
        fx = excess(x)
        if x == q_hi and fx <= 0.0:  # the plateau (or the wells' rate) holds over the month
            return q_hi, s
        if abs(fx) <= tol:
            return x, s
        if fx > 0.0:
            hi, f_hi = x, fx
        else:
            lo = x
        if x_prev is not None and x != x_prev:
            s_new = (fx - f_prev) / (x - x_prev)
            if s_new > 0.0:
                s = s_new
        x_prev, f_prev = x, fx
        x = x - fx / s
        if not lo < x < hi:
            # Outside the bracket: test the top first (is it the plateau?), then halve the bracket.
            x = q_hi if hi == q_hi and f_hi is None else 0.5 * (lo + hi)
    if f_hi is None and excess(q_hi) <= 0.0:
        return q_hi, 1.0
    if excess(0.0) >= 0.0:
        return 0.0, 1.0
    q = brentq(excess, 0.0, q_hi, xtol=1e-3 * tol, rtol=1e-14)
    excess(q)  # leave the stepper's last trial at q
    return q, 1.0
