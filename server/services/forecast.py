"""The stored forecast: what the recompute keeps beside the estimate, and how it is read.

The engine's :class:`~server.engine.forecast.types.Forecast` goes into the estimate's
``detail["forecast"]`` whole (monthly arrays per case); this module adds each case's yearly
rows there, a compact yearly gas series per case (``estimate.forecast_yearly``, which the
portfolio reads without decoding ``detail``) and the summary columns. Pure functions over
plain data, shared by the recompute, the pages, the JSON API and ``tankbook analyse``.
"""

from __future__ import annotations

import calendar
import datetime as dt

import numpy as np

from ..engine.errors import EngineError
from ..engine.forecast.types import Forecast
from .serialize import to_jsonable
from .timebase import date_from_days

CASES = ("low", "best", "high")
#: Why production stops, in words (keys: engine/forecast/types.STOP_REASONS).
STOP_WORDS = {
    "economic limit": "the field rate falls below the economic limit",
    "abandonment pressure": "the reservoir pressure reaches the abandonment pressure",
    "licence end": "the licence ends",
    "watered out": "the wells water out",
    "horizon": "the forecast reached its horizon with the field still producing",
}
CAUTION = (
    "A tank forecast treats the field as one (or a few) tanks: it ignores interference between "
    "wells, liquid loading of wells as rates fall, and downtime beyond the uptime factor. It is an "
    "aid to the engineer; booking reserves is a decision for qualified engineers under the "
    "applicable reserves rules."
)


def stop_words(reason: str | None) -> str:
    if not reason:
        return ""
    return STOP_WORDS.get(reason, reason)


def _month_date(t_days: float) -> dt.date:
    """The calendar month a month-end time belongs to (its last day; an exclusive end, the
    first of the next month, belongs to the month before it)."""
    return date_from_days(t_days - 1.0)


def _years_and_month_days(t_days) -> tuple[list[int], list[int]]:
    """(calendar year, days in the month) of each month-end time, as :func:`_month_date` dates
    them (numpy's calendar in one pass: a forecast has hundreds of months a case)."""
    if len(t_days) == 0:
        return [], []
    day = np.datetime64("1970-01-01", "D") + np.rint(np.asarray(t_days, float) - 1.0).astype("timedelta64[D]")
    month = day.astype("datetime64[M]")
    days = (month + 1).astype("datetime64[D]") - month.astype("datetime64[D]")
    return (month.astype("datetime64[Y]").astype(int) + 1970).tolist(), days.astype(int).tolist()


def yearly_rows(profile: dict) -> list[dict]:
    """One row per calendar year of a stored profile (JSON form): gas produced [Bscf], the
    year's average calendar rate over its forecast months [Mscf/d], condensate and water [stb]
    (None without a condensate or water forecast) and the cumulative at the year's last
    forecast month [Bscf]."""
    t = profile.get("month_end_t_days") or []
    gas = profile.get("gas_bscf") or []
    cum = profile.get("cumulative_bscf") or []
    cond = profile.get("condensate_stb") or None
    water = profile.get("water_stb") or None
    years, month_days = _years_and_month_days(t)
    rows: dict[int, dict] = {}
    for i, year in enumerate(years):
        row = rows.get(year)
        if row is None:
            row = rows[year] = {
                "year": year,
                "gas_bscf": 0.0,
                "condensate_stb": 0.0,
                "water_stb": 0.0,
                "days": 0,
                "cumulative_bscf": None,
            }
        row["gas_bscf"] += gas[i] or 0.0
        if cond is not None:
            row["condensate_stb"] += cond[i] or 0.0
        if water is not None:
            row["water_stb"] += water[i] or 0.0
        row["days"] += month_days[i]
        row["cumulative_bscf"] = cum[i] if i < len(cum) else None
    out = []
    for year in sorted(rows):
        r = rows[year]
        days = r.pop("days")
        r["average_rate_mscf_per_day"] = r["gas_bscf"] * 1e6 / days
        if cond is None:
            r["condensate_stb"] = None
        if water is None:
            r["water_stb"] = None
        out.append(r)
    return out


def remaining_after(profile: dict, when: dt.date) -> float | None:
    """Gas the case still produces after ``when`` [Bscf]: its EUR less the cumulative at that
    date (within a month, in proportion to its days; before the forecast, from its start)."""
    t = profile.get("month_end_t_days") or []
    cum = profile.get("cumulative_bscf") or []
    gas = profile.get("gas_bscf") or []
    eur = profile.get("eur_bscf")
    if eur is None or not t:
        return None
    for ti, ci, gi in zip(t, cum, gas, strict=False):
        month = _month_date(ti)
        first = month.replace(day=1)
        if when < first:
            return max(eur - (ci - gi), 0.0)
        n_days = calendar.monthrange(month.year, month.month)[1]
        if when <= month:
            done = (when - first).days / n_days
            return max(eur - (ci - gi) - done * gi, 0.0)
    return 0.0


def _pz_path(pressure_psia: list, z_of_p) -> list | None:
    """p/z at each month end [psia] (None where the pressure is missing or z cannot be had)."""
    if z_of_p is None or not pressure_psia:
        return None
    p = np.array([np.nan if v is None else v for v in pressure_psia], float)
    ok = np.isfinite(p) & (p > 0)
    out = np.full(p.shape, np.nan)
    try:
        out[ok] = p[ok] / np.asarray(z_of_p(p[ok]), float)
    except (EngineError, ValueError, FloatingPointError):
        return None
    return to_jsonable(out)


def stored_forecast(forecast: Forecast | None, z_of_p=None) -> tuple[dict | None, dict]:
    """(the forecast as ``detail["forecast"]`` keeps it, with each case's yearly rows and, given
    the field's z(p) at reservoir temperature, its p/z path; the estimate's summary columns)."""
    columns = {
        "forecast_eur_low_bscf": None,
        "forecast_eur_best_bscf": None,
        "forecast_eur_high_bscf": None,
        "forecast_end_date": None,
        "forecast_stop_reason": None,
        "forecast_yearly": None,
    }
    if forecast is None:
        return None, columns
    data = to_jsonable(forecast)
    yearly: dict = {"years": []}
    by_case = {}
    for p in data["profiles"]:
        p["yearly"] = yearly_rows(p)
        p["pz_psia"] = _pz_path(p.get("pressure_psia") or [], z_of_p)
        p["end_date"] = (
            date_from_days(p["end_t_days"]).isoformat() if p.get("end_t_days") is not None else None
        )
        by_case[p["case"]] = p
        if p["case"] in CASES:
            columns[f"forecast_eur_{p['case']}_bscf"] = p.get("eur_bscf")
    years = sorted({r["year"] for p in by_case.values() for r in p["yearly"]})
    yearly["years"] = years
    for case, p in by_case.items():
        per_year = {r["year"]: r["gas_bscf"] for r in p["yearly"]}
        yearly[case] = [per_year.get(y, 0.0) for y in years]
    best = by_case.get("best")
    if best is not None:
        columns["forecast_end_date"] = date_from_days(best["end_t_days"]) if best.get("end_t_days") else None
        columns["forecast_stop_reason"] = best.get("stop_reason")
    columns["forecast_yearly"] = yearly
    return data, columns
