"""Hand-built forecasts for the storage, page and portfolio tests (the engine's own tests check
the engine). Each case produces at a constant calendar rate, month by month, until it stops, so
every stored number has a closed form from the calendar: gas in a month = rate × its days."""

from __future__ import annotations

import calendar
import datetime as dt

import numpy as np

from server.engine.forecast.types import Deliverability, Forecast, Profile
from server.services.timebase import days_from_date, month_end_exclusive

CASE_RATES = {"low": 8000.0, "best": 10000.0, "high": 12000.0}  # Mscf/d
CASE_MONTHS = {"low": 36, "best": 48, "high": 60}
CASE_REASONS = {"low": "economic limit", "best": "licence end", "high": "abandonment pressure"}


def constant_rate_profile(
    case: str,
    *,
    first_month: dt.date = dt.date(2027, 1, 1),
    months: int = 48,
    rate_mscf_per_day: float = 10000.0,
    history_bscf: float = 20.0,
    stop_reason: str = "licence end",
    giip_bscf: float = 100.0,
) -> Profile:
    """``months`` months at a constant calendar rate from ``first_month``; month ends are the
    first day of the next month (exclusive), as the production periods' ends."""
    starts, m = [], first_month
    for _ in range(months):
        starts.append(m)
        m = month_end_exclusive(m)
    ends = np.array([days_from_date(month_end_exclusive(s)) for s in starts])
    days = np.array([calendar.monthrange(s.year, s.month)[1] for s in starts], float)
    gas = rate_mscf_per_day * days / 1e6
    cum = history_bscf + np.cumsum(gas)
    return Profile(
        case=case,
        giip_bscf=giip_bscf,
        month_end_t_days=ends,
        rate_mscf_per_day=np.full(months, rate_mscf_per_day),
        gas_bscf=gas,
        cumulative_bscf=cum,
        pressure_psia=np.linspace(3000.0, 1200.0, months),
        condensate_stb=gas * 1e3 * 5.0,  # 5 stb/MMscf
        end_t_days=float(ends[-1]),
        stop_reason=stop_reason,
        eur_bscf=float(cum[-1]),
        remaining_bscf=float(cum[-1] - history_bscf),
    )


def make_forecast(
    *, history_bscf: float = 20.0, scale: float = 1.0, first_month=dt.date(2027, 1, 1)
) -> Forecast:
    """Low, best and high cases (8, 10 and 12 MMscf/d × ``scale`` for 3, 4 and 5 years)."""
    profiles = tuple(
        constant_rate_profile(
            case,
            first_month=first_month,
            months=CASE_MONTHS[case],
            rate_mscf_per_day=CASE_RATES[case] * scale,
            history_bscf=history_bscf,
            stop_reason=CASE_REASONS[case],
        )
        for case in ("low", "best", "high")
    )
    deliverability = (
        Deliverability("W-1", 0.0004, 0.85, "well test of 2021-03-04 (2 rates)", 2, 0.01),
        Deliverability("W-2", 0.0003, 0.85, "calibrated from the last 12 months", 12, None),
    )
    return Forecast("pz_line", deliverability, profiles, ("hand-built test forecast",))
