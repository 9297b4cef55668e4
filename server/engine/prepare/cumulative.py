"""Cumulative production at survey times."""

from __future__ import annotations

import numpy as np


def production_start_t_days(period_end_t_days) -> float:
    """Start of the first production period: one period length before its end.

    The first period is taken as long as the second (30.4375 days when there is only one).
    """
    ends = np.asarray(period_end_t_days, float)
    if ends.size == 0:
        raise ValueError("no production periods")
    return float(ends[0] - (ends[1] - ends[0] if ends.size > 1 else 30.4375))


def cumulative_at_times(t_days, period_end_t_days, period_volume):
    """Cumulative volume at given times from per-period volumes.

    Each period's volume is taken as produced evenly between the previous period's
    end and its own end, so the cumulative is piecewise linear; before the first
    period it is zero and after the last it stays at the total.

    Parameters
    ----------
    t_days : array
        Times at which the cumulative is wanted [days from any common epoch].
    period_end_t_days : array
        End of each production period, ascending [days].
    period_volume : array
        Volume produced in each period [any unit; the result has the same unit].
    """
    t = np.asarray(t_days, float)
    ends = np.asarray(period_end_t_days, float)
    vol = np.asarray(period_volume, float)
    if ends.size == 0:
        return np.zeros_like(t)
    if np.any(np.diff(ends) <= 0):
        raise ValueError("production periods must be in ascending order without repeats")
    knots_t = np.concatenate([[production_start_t_days(ends)], ends])
    knots_v = np.concatenate([[0.0], np.cumsum(vol)])
    return np.interp(t, knots_t, knots_v, left=0.0, right=knots_v[-1])


def recent_rate_bscf_per_day(period_end_t_days, cumulative_at_end_bscf, window_days: float = 365.25) -> float:
    """Average gas rate over the last ``window_days`` of production [Bscf/day].

    A field shut in over that window gets its average rate over the whole history
    instead, so a forecast at this rate still produces; zero without production.
    """
    ends = np.asarray(period_end_t_days, float)
    cum = np.asarray(cumulative_at_end_bscf, float)
    if ends.size == 0 or cum[-1] <= 0:
        return 0.0
    knots_t = np.concatenate([[production_start_t_days(ends)], ends])
    knots_v = np.concatenate([[0.0], cum])
    t_end = float(knots_t[-1])
    start = max(t_end - window_days, float(knots_t[0]))
    recent = (float(knots_v[-1]) - float(np.interp(start, knots_t, knots_v))) / max(t_end - start, 1.0)
    if recent > 0:
        return recent
    return float(knots_v[-1]) / max(t_end - float(knots_t[0]), 1.0)
