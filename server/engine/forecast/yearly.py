"""A profile by calendar year, and the remaining gas from any date.

A month belongs to the year its first day falls in (the month ending 1 January is December).
Yearly rates are calendar averages: the year's gas over the days of the year the forecast
covers (the first and last years may be part years). Volumes as the profile's [Bscf, stb]
(condensate and water).
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np

from .types import Profile

_EPOCH = dt.date(1970, 1, 1)


@dataclass(frozen=True)
class YearlyProfile:
    case: str
    year: np.ndarray  # calendar years, ascending
    gas_bscf: np.ndarray  # produced in the year
    rate_mscf_per_day: np.ndarray  # average over the year's forecast days
    cumulative_bscf: np.ndarray  # at the end of the year's last forecast month
    condensate_stb: np.ndarray | None
    water_stb: np.ndarray | None = None


def _year(t_days: float) -> int:
    return (_EPOCH + dt.timedelta(days=int(round(t_days)) - 1)).year


def yearly_profile(p: Profile, start_t_days: float) -> YearlyProfile:
    """Sum a monthly profile by calendar year; ``start_t_days`` is the end of the history."""
    ends = np.asarray(p.month_end_t_days, float)
    starts = np.concatenate([[start_t_days], ends[:-1]])
    years = np.array([_year(t) for t in ends], int)
    uniq = np.unique(years)
    idx = np.searchsorted(uniq, years)
    gas = np.bincount(idx, weights=p.gas_bscf, minlength=uniq.size)
    days = np.bincount(idx, weights=ends - starts, minlength=uniq.size)
    last = np.array([np.nonzero(idx == k)[0][-1] for k in range(uniq.size)], int)
    cond = None
    if p.condensate_stb is not None:
        cond = np.bincount(idx, weights=p.condensate_stb, minlength=uniq.size)
    water = None
    if p.water_stb is not None:
        water = np.bincount(idx, weights=p.water_stb, minlength=uniq.size)
    return YearlyProfile(
        case=p.case,
        year=uniq,
        gas_bscf=gas,
        rate_mscf_per_day=np.divide(gas * 1e6, days, out=np.zeros_like(gas), where=days > 0),
        cumulative_bscf=np.asarray(p.cumulative_bscf, float)[last] if uniq.size else np.zeros(0),
        condensate_stb=cond,
        water_stb=water,
    )


def remaining_from(p: Profile, t_days: float, start_t_days: float) -> float:
    """Gas the profile still produces after ``t_days`` [Bscf] (the month in progress pro rata).

    Before the end of the history (``start_t_days``) this is the whole forecast.
    """
    if t_days <= start_t_days or p.gas_bscf.size == 0:
        return float(p.remaining_bscf)
    knots_t = np.concatenate([[start_t_days], p.month_end_t_days])
    if knots_t[-2] < p.end_t_days < knots_t[-1]:  # the last month was cut short
        knots_t[-1] = p.end_t_days
    knots_v = np.concatenate([[0.0], np.cumsum(p.gas_bscf)])
    done = float(np.interp(t_days, knots_t, knots_v, right=knots_v[-1]))
    return max(float(p.remaining_bscf) - done, 0.0)
