"""The probabilistic aggregate of a review's bookings, per asset and for the portfolio: shown
beside the reported totals, never booked (the reported totals are arithmetic sums).

Each field's booked 1P/2P/3P (or 1C/2C/3C) remaining volumes are read as its P90/P50/P10 and
fitted by the two-piece lognormal through all three (ln X normal about ln P50, with one spread
below and another above; :func:`server.engine.volumetrics.estimate.split_lognormal_quantile`),
so a field alone gives back its own three values (the two-piece normal: S. John, Commun.
Statist. Theory Meth. 11, 1982, 879-885, from memory). Fields are added as independent, trial by
trial (stratified trials of each field in a random order of their own, fixed seed;
:func:`server.engine.volumetrics.aggregation.aggregate_portfolio`, the portfolio page's method).
For independent fields the total's P90 lies above the sum of the P90s and its P10 below the sum
of the P10s (the portfolio effect, common practice); fields that depend on each other (one
price, one contractor, one model) narrow that effect, so the aggregate is an upper bound of the
diversification and is for information only. Reserves and contingent resources are never added
together. A field without a volume in some case, or with 1P zero under a positive 2P (no
lognormal passes through zero), is left out of the aggregate and named.

No database here: the input is the review's field rows (``views.FieldBooking``).
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass

from ...engine.volumetrics.aggregation import FieldVolume, aggregate_portfolio

LABEL = "probabilistic aggregate (not for booking: reported totals are arithmetic sums)"
METHOD = (
    "each field's 1P/2P/3P read as P90/P50/P10 and fitted by the two-piece lognormal through "
    "the three; fields added as independent by stratified Monte Carlo trials (fixed seed)"
)
TRIALS = 20000
SEED = 20261203


@dataclass(frozen=True)
class ProbabilisticTotal:
    """The probabilistic sum of one group's fields in one class [Bscf]; P90 = 10th percentile."""

    group: str  # "asset <name>" or "portfolio"
    resource_class: str  # "reserves" (1P/2P/3P) or "contingent" (1C/2C/3C)
    categories: tuple[str, str, str]
    p90_bscf: float
    p50_bscf: float
    p10_bscf: float
    mean_bscf: float
    arithmetic_p90_bscf: float  # the sums of the fields' P90, P50, P10 (the reported totals)
    arithmetic_p50_bscf: float
    arithmetic_p10_bscf: float
    fields: int
    left_out: tuple[str, ...]  # fields not in the aggregate (no volume in some case, or 1P zero)
    dependence: str
    trials: int
    seed: int


def _volume(row) -> FieldVolume | None:
    """The row's volume as the engine takes it; None when no distribution can be fitted."""
    lo, best, hi = row.booked_low_bscf, row.booked_best_bscf, row.booked_high_bscf
    if lo is None or best is None or hi is None or not 0.0 <= lo <= best <= hi:
        return None
    if lo <= 0.0 and hi > 0.0:
        return None
    return FieldVolume(row.field_name, low_bscf=lo, best_bscf=best, high_bscf=hi)


def probabilistic_totals(rows, *, trials: int = TRIALS, seed: int = SEED) -> list[ProbabilisticTotal]:
    """Per asset and for the portfolio, per resource class: the independent probabilistic sum."""
    groups: dict[tuple[str, str], list] = defaultdict(list)
    for r in rows:
        for group in ("asset " + r.asset_name, "portfolio"):
            groups[(group, r.resource_class)].append(r)
    out = []
    for (group, cls), members in sorted(groups.items(), key=lambda kv: (kv[0][0] == "portfolio", kv[0])):
        volumes, left_out, zero = [], [], 0
        for r in members:
            v = _volume(r)
            if v is None:
                left_out.append(r.field_name)
            elif v.high_bscf == 0.0:
                zero += 1  # nothing remains in any case: adds zero
            else:
                volumes.append(v)
        cats = tuple(members[0].categories)
        if not volumes:
            total = (0.0,) * 7
            dependence = "no field with a volume"
        else:
            t = aggregate_portfolio(volumes, rank_correlation=0.0, trials=trials, seed=seed)
            total = (
                t.p90_bscf,
                t.p50_bscf,
                t.p10_bscf,
                t.mean_bscf,
                t.arithmetic_p90_bscf,
                t.arithmetic_p50_bscf,
                t.arithmetic_p10_bscf,
            )
            dependence = t.dependence
        out.append(
            ProbabilisticTotal(
                group, cls, cats, *total, len(volumes) + zero, tuple(left_out), dependence, trials, seed
            )
        )
    return out
