"""Production and survey schedules for synthetic fields."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np

EPOCH = dt.date(1970, 1, 1)


def month_starts(first: dt.date, last: dt.date) -> list[dt.date]:
    """First days of every month from ``first`` to ``last`` inclusive."""
    out = []
    y, m = first.year, first.month
    while (y, m) <= (last.year, last.month):
        out.append(dt.date(y, m, 1))
        y, m = (y + 1, 1) if m == 12 else (y, m + 1)
    return out


def days(d: dt.date) -> float:
    return float((d - EPOCH).days)


@dataclass(frozen=True)
class Deliverability:
    """Plateau rate until the tank pressure falls to ``p_decline_psia``, then a
    back-pressure-like decline q = q_plateau (p^2 - pwf^2)/(p_decline^2 - pwf^2)."""

    plateau_mscf_per_day: float
    p_decline_psia: float
    pwf_min_psia: float

    def rate(self, p_psia: float) -> float:
        if p_psia >= self.p_decline_psia:
            return self.plateau_mscf_per_day
        num = max(p_psia**2 - self.pwf_min_psia**2, 0.0)
        return self.plateau_mscf_per_day * num / (self.p_decline_psia**2 - self.pwf_min_psia**2)


def survey_dates(rng: np.random.Generator, first: dt.date, last: dt.date, every_days: float) -> list[dt.date]:
    """Survey dates roughly every ``every_days`` with +/-20 % jitter."""
    out = []
    t = days(first)
    end = days(last)
    while t <= end:
        out.append(EPOCH + dt.timedelta(days=int(t)))
        t += every_days * rng.uniform(0.8, 1.2)
    return out
