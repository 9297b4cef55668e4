"""SPE-PRMS (2018) category arithmetic: cumulative 1P/2P/3P (or 1C/2C/3C) against incremental
proved / probable / possible, and the labels of the booking classes.

PRMS 2018 (section 2.2.2, "Range of Uncertainty", and Table 3, from memory): the cumulative
categories are 1P = proved, 2P = proved + probable, 3P = proved + probable + possible, so that
1P <= 2P <= 3P; under the probabilistic method there is at least a 90 % probability of
recovering 1P or more, 50 % for 2P and 10 % for 3P. The incremental probable volume is 2P - 1P
and possible is 3P - 2P. Contingent resources use 1C/2C/3C the same way. The low/best/high
cases of the estimate map onto them (low -> 1P/1C, best -> 2P/2C, high -> 3P/3C).
"""

from __future__ import annotations

from dataclasses import dataclass

CLASS_TITLES = {"reserves": "Reserves", "contingent": "Contingent resources"}
STATUS_TITLES = {
    "developed_producing": "Developed producing",
    "developed_non_producing": "Developed non-producing",
    "undeveloped": "Undeveloped",
    "development_pending": "Development pending",
    "development_on_hold": "Development on hold",
    "development_unclarified": "Development unclarified",
    "development_not_viable": "Development not viable",
}


def category_names(resource_class: str) -> tuple[str, str, str]:
    """The cumulative category names of a class: ("1P", "2P", "3P") or ("1C", "2C", "3C")."""
    return ("1C", "2C", "3C") if resource_class == "contingent" else ("1P", "2P", "3P")


class CategoryOrderError(ValueError):
    """Cumulative categories that do not satisfy 0 <= 1P <= 2P <= 3P."""


@dataclass(frozen=True)
class Incremental:
    """Incremental volumes [Bscf]: proved, probable, possible (or C1, C2, C3 increments)."""

    proved_bscf: float
    probable_bscf: float
    possible_bscf: float


def check_order(low_bscf: float, best_bscf: float, high_bscf: float) -> None:
    """Raise unless 0 <= low <= best <= high (the cumulative categories nest)."""
    if not (0.0 <= low_bscf <= best_bscf <= high_bscf):
        raise CategoryOrderError(
            "the categories must nest, 0 <= 1P <= 2P <= 3P; "
            f"got {low_bscf:g}, {best_bscf:g}, {high_bscf:g} Bscf"
        )


def incremental_from_cumulative(p1_bscf: float, p2_bscf: float, p3_bscf: float) -> Incremental:
    """Proved = 1P, probable = 2P - 1P, possible = 3P - 2P [Bscf]."""
    check_order(p1_bscf, p2_bscf, p3_bscf)
    return Incremental(p1_bscf, p2_bscf - p1_bscf, p3_bscf - p2_bscf)


def cumulative_from_incremental(inc: Incremental) -> tuple[float, float, float]:
    """1P = proved, 2P = proved + probable, 3P = 2P + possible [Bscf]."""
    if min(inc.proved_bscf, inc.probable_bscf, inc.possible_bscf) < 0:
        raise CategoryOrderError("incremental volumes cannot be negative")
    p1 = inc.proved_bscf
    p2 = p1 + inc.probable_bscf
    return p1, p2, p2 + inc.possible_bscf
