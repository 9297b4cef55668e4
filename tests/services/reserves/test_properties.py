"""Properties of the reconciliation and the PRMS categories (no database).

The balance oracle here is independent of ``reconcile.balance_problems``: exact rational
arithmetic (``fractions.Fraction`` of the stored floats) of the roll-forward identity
closing = opening - production + revisions + extensions + improved recovery + acquisitions
- disposals (common practice in reserves reconciliations), per field, per asset and in total.
"""

from dataclasses import dataclass
from fractions import Fraction

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from server.services.reserves import categories as cat
from server.services.reserves.reconcile import ASSIGNABLE, balance_problems, expected_closing
from server.services.reserves.rules import BALANCE_TOLERANCE_BSCF


@dataclass
class Line:
    field_name: str
    asset_name: str
    category: str
    opening_bscf: float
    production_bscf: float
    closing_bscf: float
    revisions_bscf: float = 0.0
    extensions_discoveries_bscf: float = 0.0
    improved_recovery_bscf: float = 0.0
    acquisitions_bscf: float = 0.0
    disposals_bscf: float = 0.0


vol = st.floats(0, 500, allow_nan=False)
amount = st.one_of(st.just(0.0), vol, st.floats(0, 0.001))  # zeros, volumes and rounding-sized slips
line = st.builds(
    Line,
    field_name=st.sampled_from(["A", "B", "C", "D"]),
    asset_name=st.sampled_from(["North", "South"]),
    category=st.sampled_from(["1P", "2P", "3P"]),
    opening_bscf=vol,
    production_bscf=st.floats(0, 50),
    closing_bscf=vol,
    revisions_bscf=st.one_of(amount, st.floats(-500, 0)),
    extensions_discoveries_bscf=amount,
    improved_recovery_bscf=amount,
    acquisitions_bscf=amount,
    disposals_bscf=amount,
)


def _gap(lines) -> Fraction:
    f = Fraction
    return sum(
        (
            f(x.closing_bscf)
            - (
                f(x.opening_bscf)
                - f(x.production_bscf)
                + f(x.revisions_bscf)
                + f(x.extensions_discoveries_bscf)
                + f(x.improved_recovery_bscf)
                + f(x.acquisitions_bscf)
                - f(x.disposals_bscf)
            )
            for x in lines
        ),
        Fraction(0),
    )


def _unique(lines):
    seen, out = set(), []
    for x in lines:
        if (x.field_name, x.category) not in seen:
            seen.add((x.field_name, x.category))
            out.append(x)
    return out


@settings(max_examples=150, deadline=None, derandomize=True, database=None)
@given(st.lists(line, min_size=1, max_size=12).map(_unique))
def test_any_assignment_balances_or_is_refused_with_its_reasons(lines):
    tol = Fraction(BALANCE_TOLERANCE_BSCF)
    problems = balance_problems(lines)
    groups = [(f"{x.field_name} {x.category}", [x]) for x in lines]
    for c in {x.category for x in lines}:
        groups.append((f"portfolio {c}", [x for x in lines if x.category == c]))
        for a in {x.asset_name for x in lines}:
            members = [x for x in lines if x.category == c and x.asset_name == a]
            if members:
                groups.append((f"asset {a} {c}", members))
    # float rounding in the summation may move a gap within 1e-9 of the tolerance: skip those
    if any(abs(abs(_gap(m)) - tol) < Fraction(1, 10**9) for _, m in groups):
        return
    unbalanced = {name for name, m in groups if abs(_gap(m)) > tol}
    assert {p.split(": out of balance")[0] for p in problems} == unbalanced
    assert (problems == []) == (not unbalanced)  # submission goes through only when nothing is named


@settings(max_examples=100, deadline=None, derandomize=True, database=None)
@given(st.lists(line, min_size=1, max_size=12).map(_unique))
def test_the_default_split_remainder_to_revisions_always_balances(lines):
    for x in lines:
        for k in ASSIGNABLE:
            setattr(x, k, 0.0)
        x.revisions_bscf = x.closing_bscf - expected_closing(x)
    assert balance_problems(lines) == []


# SPE-PRMS (2018), section 2.2.2 (Range of Uncertainty) and Table 3 (from memory): 1P = proved,
# 2P = proved + probable, 3P = proved + probable + possible; the same nesting for 1C/2C/3C.
def test_prms_incremental_and_cumulative_categories():
    inc = cat.incremental_from_cumulative(38.0, 48.0, 58.0)
    assert (inc.proved_bscf, inc.probable_bscf, inc.possible_bscf) == (38.0, 10.0, 10.0)
    assert cat.cumulative_from_incremental(cat.Incremental(5.0, 2.5, 4.0)) == (5.0, 7.5, 11.5)
    assert cat.category_names("reserves") == ("1P", "2P", "3P")
    assert cat.category_names("contingent") == ("1C", "2C", "3C")
    with pytest.raises(cat.CategoryOrderError, match="must nest"):
        cat.incremental_from_cumulative(10.0, 8.0, 12.0)  # 2P below 1P is not a PRMS range
    with pytest.raises(cat.CategoryOrderError):
        cat.cumulative_from_incremental(cat.Incremental(1.0, -0.5, 1.0))


@settings(max_examples=100, deadline=None, derandomize=True, database=None)
@given(st.tuples(vol, vol, vol).map(sorted))
def test_prms_round_trip_keeps_the_categories(p):
    inc = cat.incremental_from_cumulative(*p)
    assert cat.cumulative_from_incremental(inc) == pytest.approx(tuple(p), abs=1e-9)
    assert min(inc.proved_bscf, inc.probable_bscf, inc.possible_bscf) >= 0
