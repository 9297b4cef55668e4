"""The roll-forward of a review's reconciliation lines [Bscf]: the waterfalls, fields ranked by
their change and the reserves replacement ratio. Pure aggregation over the lines (no database);
:mod:`.movements` gathers them for the dashboard.

- Waterfall, per group (an asset, or the portfolio) and category: opening, then production
  (down), revisions, extensions and discoveries, improved recovery, acquisitions, disposals
  (down), closing: the reconciliation identity of :mod:`.reconcile` summed over the group.
- A field's change is its non-production change: revisions + extensions and discoveries +
  improved recovery + acquisitions - disposals = closing - opening + production. Fields are
  ranked by its size; production is shown beside it, never in it.
- Reserves replacement ratio (common practice; no single published definition):
  organic RRR = (revisions + extensions and discoveries + improved recovery) / production, and
  RRR with acquisitions and disposals = (organic additions + acquisitions - disposals) /
  production, both over the period between the two effective dates. Undefined (None) when the
  period's production is zero.
"""

from __future__ import annotations

from dataclasses import dataclass

from . import reconcile
from .rules import BALANCE_TOLERANCE_BSCF

#: (line column, words, sign in the roll-forward)
STEPS = (
    ("production_bscf", "production", -1),
    ("revisions_bscf", "revisions", +1),
    ("extensions_discoveries_bscf", "extensions and discoveries", +1),
    ("improved_recovery_bscf", "improved recovery", +1),
    ("acquisitions_bscf", "acquisitions", +1),
    ("disposals_bscf", "disposals", -1),
)
ORGANIC = ("revisions_bscf", "extensions_discoveries_bscf", "improved_recovery_bscf")
WORDS = {key: words for key, words, _ in STEPS}
SIGN = {key: sign for key, _, sign in STEPS}


@dataclass(frozen=True)
class Step:
    key: str
    label: str
    delta_bscf: float  # signed: production and disposals are negative


@dataclass(frozen=True)
class Waterfall:
    group: str  # "portfolio" or "asset NAME"
    category: str
    opening_bscf: float
    steps: tuple[Step, ...]
    closing_bscf: float
    imbalance_bscf: float  # closing - (opening + the steps); zero to rounding when the lines balance

    @property
    def balances(self) -> bool:
        return abs(self.imbalance_bscf) <= BALANCE_TOLERANCE_BSCF


def waterfalls(lines) -> list[Waterfall]:
    """One waterfall per asset and for the portfolio, per category (assets first)."""
    out = []
    for t in reconcile.totals(lines):
        steps = tuple(Step(k, w, s * getattr(t, k) + 0.0) for k, w, s in STEPS)  # + 0.0: no -0.0
        end = t.opening_bscf + sum(st.delta_bscf for st in steps)
        out.append(
            Waterfall(t.group, t.category, t.opening_bscf, steps, t.closing_bscf, t.closing_bscf - end)
        )
    return out


def change_bscf(line) -> float:
    """A line's non-production change [Bscf]: closing - opening + production."""
    return sum(SIGN[k] * getattr(line, k) for k in reconcile.ASSIGNABLE)


@dataclass(frozen=True)
class FieldChange:
    field_id: int
    field_name: str
    asset_name: str
    category: str
    presence: str  # both, new, left
    opening_bscf: float
    production_bscf: float
    change_bscf: float  # non-production change (see the module docstring)
    closing_bscf: float
    reason_key: str  # the largest non-production line ("" when nothing changed)
    reason: str  # the lines in words, largest first
    assigned: bool  # the engineer split the change; else the remainder went to revisions
    assigned_by_name: str
    justification: str


def _reason(line) -> tuple[str, str]:
    parts = sorted(
        ((k, SIGN[k] * getattr(line, k)) for k in reconcile.ASSIGNABLE),
        key=lambda kv: -abs(kv[1]),
    )
    parts = [(k, v) for k, v in parts if abs(v) > BALANCE_TOLERANCE_BSCF]
    if not parts:
        return "", "no change"
    words = ", ".join(f"{WORDS[k]} {v:+.3f}" for k, v in parts)
    if line.assigned:
        who = f" (assigned by {line.assigned_by_name})" if line.assigned_by_name else " (assigned)"
    else:
        who = " (not assigned yet: the remainder goes to revisions)"
    return parts[0][0], words + who


def ranked_changes(lines, justifications: dict[int, str] | None = None) -> list[FieldChange]:
    """Every field's line, largest non-production change first (by size), then by name."""
    justifications = justifications or {}
    out = []
    for ln in lines:
        key, reason = _reason(ln)
        out.append(
            FieldChange(
                ln.field_id,
                ln.field_name,
                ln.asset_name,
                ln.category,
                ln.presence,
                ln.opening_bscf,
                ln.production_bscf,
                change_bscf(ln),
                ln.closing_bscf,
                key,
                reason,
                bool(ln.assigned),
                ln.assigned_by_name or "",
                justifications.get(ln.field_id, ""),
            )
        )
    return sorted(out, key=lambda c: (c.category, -abs(c.change_bscf), c.field_name, c.field_id))


@dataclass(frozen=True)
class Replacement:
    group: str
    category: str
    production_bscf: float
    organic_additions_bscf: float  # revisions + extensions and discoveries + improved recovery
    net_acquisitions_bscf: float  # acquisitions - disposals
    organic_ratio: float | None  # None: no production in the period
    ratio_with_acquisitions: float | None


def replacement(lines) -> list[Replacement]:
    """The reserves replacement ratios of every asset and the portfolio, per category."""
    out = []
    for t in reconcile.totals(lines):
        organic = sum(getattr(t, k) for k in ORGANIC)
        net = t.acquisitions_bscf - t.disposals_bscf
        produced = t.production_bscf
        ok = produced > 0
        out.append(
            Replacement(
                t.group,
                t.category,
                produced,
                organic,
                net,
                organic / produced if ok else None,
                (organic + net) / produced if ok else None,
            )
        )
    return out
