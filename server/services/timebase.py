"""Dates to engine times (days since 1970-01-01) and back."""

from __future__ import annotations

import datetime as dt

EPOCH = dt.date(1970, 1, 1)


def days_from_date(d: dt.date) -> float:
    """Days since 1970-01-01."""
    return float((d - EPOCH).days)


def date_from_days(t_days: float) -> dt.date:
    """Calendar date of a day count since 1970-01-01."""
    return EPOCH + dt.timedelta(days=round(t_days))


def month_end_exclusive(month_start: dt.date) -> dt.date:
    """First day of the following month."""
    if month_start.month == 12:
        return dt.date(month_start.year + 1, 1, 1)
    return dt.date(month_start.year, month_start.month + 1, 1)
