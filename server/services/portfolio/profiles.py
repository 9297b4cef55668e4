"""The portfolio's forecast: each field's yearly gas per case (the estimate's plain
``forecast_yearly`` column, never its ``detail`` JSON), the best case stacked by field with the
low and high totals, and the table the profile export writes."""

from __future__ import annotations

import threading
from collections import OrderedDict
from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Estimate
from .rows import PortfolioRow

CASES = ("low", "best", "high")


@dataclass(frozen=True)
class PortfolioProfile:
    years: list[int]
    best_by_field: list[tuple[str, list[float]]]  # (field name, best-case gas per year [Bscf])
    low_total: list[float]  # sums of the fields' low cases [Bscf]; percentiles do not add
    best_total: list[float]
    high_total: list[float]
    without: list[str]  # fields of the view without a forecast


#: Most fields of a view stacked one by one; the rest are one bar ("N other fields"): a chart of
#: 2,000 bars says nothing and cost the 2,000-field page about 0.1 s to build.
MAX_STACKED = 12
#: Estimates' yearly profiles kept in this process. A stored estimate never changes (a recompute
#: writes a new row), so its id, fingerprint and time of computation name its profile; the time
#: and fingerprint keep another database's estimate of the same id (a restore, a test) apart.
_YEARLY_CACHE_SIZE = 50_000
_yearly_cache: OrderedDict[tuple, dict | None] = OrderedDict()
_yearly_lock = threading.Lock()


def yearly_by_field(session: Session, rows: list[PortfolioRow]) -> dict[int, dict]:
    """The current estimate's yearly gas per case of each row's field that has a forecast.

    Read once per estimate and kept (decoding 2,000 profiles took the 2,000-field page about
    0.15 s a view)."""
    keys = {_key(r.estimate): r.field_id for r in rows if r.estimate is not None}
    with _yearly_lock:
        missing = {k[0]: k for k in keys if k not in _yearly_cache}
    fetched = {}
    ids = list(missing)
    for n in range(0, len(ids), 500):
        stmt = select(Estimate.id, Estimate.forecast_yearly).where(Estimate.id.in_(ids[n : n + 500]))
        fetched.update({missing[i]: (y if y and y.get("years") else None) for i, y in session.execute(stmt)})
    out = {}
    with _yearly_lock:
        _yearly_cache.update(fetched)
        for k, fid in keys.items():
            y = fetched[k] if k in fetched else _yearly_cache.get(k)
            if k in _yearly_cache:
                _yearly_cache.move_to_end(k)
            if y:
                out[fid] = y
        while len(_yearly_cache) > _YEARLY_CACHE_SIZE:
            _yearly_cache.popitem(last=False)
    return out


def _key(e) -> tuple:
    return (e.id, e.inputs_fingerprint, e.engine_version, e.computed_at)


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
    return PortfolioProfile(
        years, _fold_small(stacked), totals["low"], totals["best"], totals["high"], without
    )


def _fold_small(stacked: list[tuple[str, list[float]]]) -> list[tuple[str, list[float]]]:
    """The largest fields (by best-case gas over all years) in the rows' order, the rest summed
    into one "N other fields" bar, so at most :data:`MAX_STACKED` bars."""
    if len(stacked) <= MAX_STACKED:
        return stacked
    keep = set(sorted(range(len(stacked)), key=lambda i: -sum(stacked[i][1]))[: MAX_STACKED - 1])
    rest = [gas for i, (_, gas) in enumerate(stacked) if i not in keep]
    other = [sum(col) for col in zip(*rest, strict=True)]
    return [stacked[i] for i in sorted(keep)] + [(f"{len(rest)} other fields", other)]


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
