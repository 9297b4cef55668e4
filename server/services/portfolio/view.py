"""Filtering and sorting the portfolio table (the page, its JSON twin and the exports share it).

Plain functions over :class:`PortfolioRow`; the web layer parses the query parameters into a
:class:`PortfolioQuery` and turns :class:`PortfolioQueryError` into a 422 naming the parameter.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass

from ...engine.diagnosis.flags import SEVERITIES
from .rows import PortfolioRow

ANY_FLAG = "any"  # the flag filter's value for "any flag at all"
NO_FLAG = "none"  # ... and for "no flag"
FLAG_CODE = re.compile(r"[a-z][a-z0-9_]{0,59}")


def _est(attr: str) -> Callable[[PortfolioRow], float | None]:
    return lambda r: getattr(r.estimate, attr) if r.estimate is not None else None


def _vol(attr: str) -> Callable[[PortfolioRow], float | None]:
    return lambda r: getattr(r.volumetric, attr) if r.volumetric is not None else None


def _status(r: PortfolioRow) -> str:
    return "not computed" if r.estimate is None else r.estimate.status


def _flag_rank(r: PortfolioRow) -> tuple[int, int] | None:
    """Most severe flag first, then the number of flags; None for an unflagged field."""
    if not r.flags:
        return None
    worst = max(SEVERITIES.index(f["severity"]) if f.get("severity") in SEVERITIES else 0 for f in r.flags)
    return worst, len(r.flags)


#: Sortable columns: query value -> (key of a row, None = missing, sorted last either way).
SORT_KEYS: dict[str, Callable[[PortfolioRow], object]] = {
    "name": lambda r: r.name.casefold(),
    "asset": lambda r: r.asset.casefold(),
    "basin": lambda r: r.basin.casefold(),
    "dynamic_low": _est("giip_low_bscf"),
    "dynamic_best": _est("giip_best_bscf"),
    "dynamic_high": _est("giip_high_bscf"),
    "basis": lambda r: (r.estimate.basis_words.casefold() or None) if r.estimate is not None else None,
    "volumetric_low": _vol("low_bscf"),
    "volumetric_best": _vol("best_bscf"),
    "volumetric_high": _vol("high_bscf"),
    "ratio": lambda r: r.dynamic_to_volumetric,
    "eur": _est("eur_bscf"),
    "recovery_factor": _est("recovery_factor_frac"),
    "remaining": _est("remaining_bscf"),
    "produced": _est("cumulative_gas_bscf"),
    "depletion": lambda r: r.depletion_frac,
    "last_survey": lambda r: r.last_survey_date,
    "status": _status,
    "flags": _flag_rank,
}
SORT_COLUMNS = tuple(SORT_KEYS)
ORDERS = ("asc", "desc")


class PortfolioQueryError(ValueError):
    """A query value that names nothing (``parameter`` says which one)."""

    def __init__(self, parameter: str, message: str):
        super().__init__(f"{parameter}: {message}")
        self.parameter = parameter
        self.message = message


@dataclass(frozen=True)
class PortfolioQuery:
    """What the user asked for; empty strings mean "all"."""

    asset: str = ""
    basin: str = ""
    flag: str = ""
    sort: str = "name"
    order: str = "asc"

    def __post_init__(self):
        if self.sort not in SORT_KEYS:
            raise PortfolioQueryError(
                "sort", f"unknown column {self.sort!r}; choose one of {', '.join(SORT_COLUMNS)}"
            )
        if self.order not in ORDERS:
            raise PortfolioQueryError("order", f"{self.order!r} is neither 'asc' nor 'desc'")
        if self.flag and not FLAG_CODE.fullmatch(self.flag):
            raise PortfolioQueryError(
                "flag", f"{self.flag[:60]!r} is not a flag code (lower-case letters, digits and _)"
            )

    @property
    def filtered(self) -> bool:
        return bool(self.asset or self.basin or self.flag)

    def params(self, **changes) -> dict[str, str]:
        """The query as URL parameters (defaults left out), with ``changes`` applied."""
        values = {
            "asset": self.asset,
            "basin": self.basin,
            "flag": self.flag,
            "sort": self.sort,
            "order": self.order,
        }
        values.update(changes)
        defaults = {"sort": "name", "order": "asc"}
        return {k: v for k, v in values.items() if v and defaults.get(k) != v}


@dataclass(frozen=True)
class FlagChoice:
    code: str
    title: str
    count: int


@dataclass(frozen=True)
class Choices:
    """The values the filter form offers, from the rows the user may see."""

    assets: list[str]
    basins: list[str]
    flags: list[FlagChoice]


def choices(rows: list[PortfolioRow]) -> Choices:
    flags: dict[str, list] = {}
    for r in rows:
        for f in r.flags:
            entry = flags.setdefault(f.get("code", ""), [f.get("title", ""), 0])
            entry[1] += 1
    return Choices(
        sorted({r.asset for r in rows}, key=str.casefold),
        sorted({r.basin for r in rows if r.basin}, key=str.casefold),
        [FlagChoice(c, t, n) for c, (t, n) in sorted(flags.items())],
    )


def check_against(query: PortfolioQuery, options: Choices) -> None:
    """An asset or basin the user cannot see is an error naming the parameter (a flag
    that no field carries today is not: it simply matches nothing)."""
    for name, value, known in (
        ("asset", query.asset, options.assets),
        ("basin", query.basin, options.basins),
    ):
        if value and value not in known:
            shown = ", ".join(repr(k) for k in known[:20]) + (", ..." if len(known) > 20 else "") or "none"
            raise PortfolioQueryError(
                name, f"no {name} named {value[:120]!r} in your portfolio; known: {shown}"
            )


def _matches(r: PortfolioRow, q: PortfolioQuery) -> bool:
    if q.asset and r.asset != q.asset:
        return False
    if q.basin and r.basin != q.basin:
        return False
    if q.flag == ANY_FLAG:
        return bool(r.flags)
    if q.flag == NO_FLAG:
        return not r.flags
    return not q.flag or q.flag in r.flag_codes


def apply_query(rows: list[PortfolioRow], q: PortfolioQuery) -> list[PortfolioRow]:
    """The rows that match the filters, sorted; missing values last in either order,
    ties by field name."""
    kept = sorted((r for r in rows if _matches(r, q)), key=lambda r: (r.name.casefold(), r.field_id))
    key = SORT_KEYS[q.sort]
    present = [r for r in kept if key(r) is not None]
    missing = [r for r in kept if key(r) is None]
    present.sort(key=key, reverse=q.order == "desc")  # stable: ties keep the name order
    return present + missing


def describe(q: PortfolioQuery, options: Choices | None = None) -> str:
    """The filters in words, for the totals and the exports ("" when none); with
    ``options`` a flag is named by its title too."""
    parts = []
    if q.asset:
        parts.append(f"asset {q.asset}")
    if q.basin:
        parts.append(f"basin {q.basin}")
    if q.flag == ANY_FLAG:
        parts.append("fields with any flag")
    elif q.flag == NO_FLAG:
        parts.append("fields without flags")
    elif q.flag:
        title = next((f.title for f in (options.flags if options else []) if f.code == q.flag), None)
        parts.append(f"flag “{title}” ({q.flag})" if title else f"flag {q.flag}")
    return "; ".join(parts)
