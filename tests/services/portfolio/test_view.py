"""Filtering and sorting the portfolio rows (pure functions; the page tests check the wiring)."""

import datetime as dt

import pytest

from server.services.portfolio.rows import EstimateSummary, PortfolioRow, VolumetricRange
from server.services.portfolio.view import (
    SORT_COLUMNS,
    PortfolioQuery,
    PortfolioQueryError,
    apply_query,
    check_against,
    choices,
    describe,
)


def _row(fid, name, best=None, flags=(), asset="North", vol_best=100.0, survey=None):
    e = None
    if best is not None or flags:
        e = EstimateSummary(
            fid,
            "ok",
            "m",
            "",
            None if best is None else best * 0.9,
            best,
            None if best is None else best * 1.1,
            None,
            None,
            5.0,
            None,
            list(flags),
            "f",
            "v",
            dt.datetime(2026, 1, 1),
        )
    v = (
        VolumetricRange(0.8 * vol_best, vol_best, 1.25 * vol_best, dt.date(2020, 1, 1), "")
        if vol_best
        else None
    )
    return PortfolioRow(fid, name, asset, "B", e, v, survey)


ALERT = {"code": "dynamic_below_volumetric", "severity": "alert", "title": "Below", "reason": ""}
INFO = {"code": "data_gaps", "severity": "info", "title": "Gaps", "reason": ""}
ROWS = [
    _row(1, "delta", 50.0, [INFO]),
    _row(2, "Alpha", None, vol_best=None),
    _row(3, "charlie", 80.0, [ALERT, INFO], asset="South", survey=dt.date(2024, 1, 1)),
    _row(4, "bravo", 80.0),
]


def _names(rows):
    return [r.name for r in rows]


def test_missing_values_sort_last_either_way_and_ties_keep_name_order():
    asc = apply_query(ROWS, PortfolioQuery(sort="dynamic_best"))
    assert _names(asc) == ["delta", "bravo", "charlie", "Alpha"]
    desc = apply_query(ROWS, PortfolioQuery(sort="dynamic_best", order="desc"))
    assert _names(desc) == ["bravo", "charlie", "delta", "Alpha"]  # 80 = 80: by name
    assert _names(apply_query(ROWS, PortfolioQuery())) == ["Alpha", "bravo", "charlie", "delta"]  # case-blind


def test_flag_sort_puts_the_most_severe_first():
    assert _names(apply_query(ROWS, PortfolioQuery(sort="flags", order="desc"))) == [
        "charlie",
        "delta",
        "Alpha",
        "bravo",
    ]


def test_every_column_sorts_without_error():
    for col in SORT_COLUMNS:
        for order in ("asc", "desc"):
            assert len(apply_query(ROWS, PortfolioQuery(sort=col, order=order))) == 4


def test_filters():
    assert _names(apply_query(ROWS, PortfolioQuery(flag="data_gaps"))) == ["charlie", "delta"]
    assert _names(apply_query(ROWS, PortfolioQuery(flag="none"))) == ["Alpha", "bravo"]
    assert _names(apply_query(ROWS, PortfolioQuery(asset="South", flag="any"))) == ["charlie"]
    assert apply_query(ROWS, PortfolioQuery(flag="aquifer_signature")) == []


@pytest.mark.parametrize(
    ("kwargs", "parameter"),
    [({"sort": "giip"}, "sort"), ({"order": "down"}, "order"), ({"flag": "DROP TABLE"}, "flag")],
)
def test_bad_values_name_their_parameter(kwargs, parameter):
    with pytest.raises(PortfolioQueryError) as err:
        PortfolioQuery(**kwargs)
    assert err.value.parameter == parameter and str(err.value).startswith(f"{parameter}: ")


def test_unknown_asset_lists_only_the_users_own():
    options = choices(ROWS)
    assert options.assets == ["North", "South"] and [f.code for f in options.flags] == [
        "data_gaps",
        "dynamic_below_volumetric",
    ]
    with pytest.raises(PortfolioQueryError, match="asset: no asset named 'West'.*'North', 'South'"):
        check_against(PortfolioQuery(asset="West"), options)


def test_params_leave_defaults_out_and_describe_names_the_flag_title():
    q = PortfolioQuery(asset="North", flag="data_gaps", sort="name", order="desc")
    assert q.params() == {"asset": "North", "flag": "data_gaps", "order": "desc"}
    assert q.params(sort="eur", order="asc") == {"asset": "North", "flag": "data_gaps", "sort": "eur"}
    assert describe(q, choices(ROWS)) == "asset North; flag “Gaps” (data_gaps)"
    assert describe(PortfolioQuery()) == ""
