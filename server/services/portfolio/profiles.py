"""The portfolio's forecast: each field's yearly gas per case (the estimate's plain
``forecast_yearly`` column, never its ``detail`` JSON), the best case stacked by field with the
low and high totals, and the table the profile export writes."""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Estimate
from .rows import PortfolioRow, _newest_ids

CASES = ("low", "best", "high")


@dataclass(frozen=True)
class PortfolioProfile:
    years: list[int]
    best_by_field: list[tuple[str, list[float]]]  # (field name, best-case gas per year [Bscf])
    low_total: list[float]  # sums of the fields' low cases [Bscf]; percentiles do not add
    best_total: list[float]
    high_total: list[float]
    without: list[str]  # fields of the view without a forecast


def yearly_by_field(session: Session, field_ids) -> dict[int, dict]:
    """The newest estimate's yearly gas per case of each field that has a forecast."""
    ids = list(field_ids)
    if not ids:
        return {}
    newest = _newest_ids(ids)
    stmt = select(Estimate.field_id, Estimate.forecast_yearly).join(newest, Estimate.id == newest.c.id)
    return {fid: y for fid, y in session.execute(stmt) if y and y.get("years")}


def portfolio_profile(rows: list[PortfolioRow], yearly: dict[int, dict]) -> PortfolioProfile:
    """Best-case yearly gas stacked by field (in the rows' order) with the totals per case."""
    years = sorted({y for r in rows for y in (yearly.get(r.field_id) or {}).get("years", [])})
    index = {y: i for i, y in enumerate(years)}
    totals = {c: [0.0] * len(years) for c in CASES}
    stacked, without = [], []
    for r in rows:
        y = yearly.get(r.field_id)
        if not y:
            without.append(r.name)
            continue
        for case in CASES:
            for year, gas in zip(y["years"], y.get(case) or [], strict=False):
                totals[case][index[year]] += gas or 0.0
        best = [0.0] * len(years)
        for year, gas in zip(y["years"], y.get("best") or [], strict=False):
            best[index[year]] = gas or 0.0
        stacked.append((r.name, best))
    return PortfolioProfile(years, stacked, totals["low"], totals["best"], totals["high"], without)


def profile_table(rows: list[PortfolioRow], yearly: dict[int, dict]) -> tuple[list[int], list[list]]:
    """(years, rows of [field, asset, case, stop reason, EUR, gas per year...]) in stored units."""
    years = sorted({y for r in rows for y in (yearly.get(r.field_id) or {}).get("years", [])})
    out = []
    for r in rows:
        y = yearly.get(r.field_id)
        if not y:
            continue
        e = r.estimate
        for case in CASES:
            per_year = dict(zip(y["years"], y.get(case) or [], strict=False))
            eur = getattr(e, f"forecast_eur_{case}_bscf", None) if e else None
            reason = e.forecast_stop_reason if e and case == "best" else None
            out.append([r.name, r.asset, case, reason, eur, *[per_year.get(year, 0.0) for year in years]])
    return years, out
