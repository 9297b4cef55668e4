"""The portfolio chart builder, tested by its trace data in both unit systems."""

import dataclasses
import datetime as dt

import pytest

from server.engine.units import OILFIELD_60F
from server.services.portfolio.rows import EstimateSummary, PortfolioRow, VolumetricRange
from server.web.charts.portfolio import FLAG_STYLE, NO_FLAG, OKABE_ITO, portfolio_figure
from server.web.display import DisplayUnits

# Okabe & Ito (2008), "Color Universal Design": the eight colours as published.
PUBLISHED_OKABE_ITO = {"#000000", "#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"}

# m3 at 15 °C/101.325 kPa per scf at 60 °F/14.696 psia, by hand: 1 ft = 0.3048 m exactly; equal
# moles of ideal gas, V2/V1 = (T2/T1)(p1/p2) with 60 °F = 519.67 °R = 288.7056 K and
# 14.696 psi = 14.696 x 6.894757 kPa (NIST SP 811: 1 psi = 6.894757 kPa).
M3_PER_SCF_BY_HAND = 0.3048**3 * (288.15 / (519.67 / 1.8)) * (14.696 * 6.894757 / 101.325)


def _flag(code, severity="warning", title=None):
    return {"code": code, "severity": severity, "title": title or code.replace("_", " "), "reason": "r"}


def _row(fid, name, dyn, vol, flags=(), status="ok"):
    e = EstimateSummary(
        fid,
        status,
        "pz-wls",
        "",
        *dyn,
        None,
        None,
        10.0,
        None,
        list(flags),
        "x" * 64,
        "t",
        dt.datetime(2026, 1, 1),
    )
    v = VolumetricRange(*vol, dt.date(2020, 1, 1), "") if vol else None
    return PortfolioRow(fid, name, "North", "Basin", e, v, None)


ROWS = [
    _row(1, "Alpha", (50.0, 60.0, 72.0), (80.0, 100.0, 125.0), [_flag("dynamic_below_volumetric", "alert")]),
    _row(2, "Bravo", (95.0, 100.0, 108.0), (85.0, 102.0, 120.0)),
    _row(
        3,
        "Charlie",
        (110.0, 130.0, 150.0),
        (60.0, 70.0, 90.0),
        [_flag("compartment_signature"), _flag("data_gaps")],
    ),
    _row(4, "Delta", (90.0, 99.0, 111.0), (80.0, 98.0, 118.0)),
    _row(5, "Echo", (None, None, None), (10.0, 20.0, 30.0), status="refused"),  # not plotted
    _row(6, "Foxtrot", (40.0, 42.0, 45.0), None),  # no volumetric: not plotted
]


def _traces(fig):
    return {t["name"]: t for t in fig["data"]}


def test_groups_by_most_severe_flag_with_asymmetric_bars_oilfield():
    du = DisplayUnits("oilfield", OILFIELD_60F)
    fig = portfolio_figure(ROWS, du)
    t = _traces(fig)
    assert set(t) == {
        "no flag",
        "dynamic below volumetric (1)",
        "compartment signature (1)",
        "1:1 (dynamic = volumetric)",
    }
    clean = t["no flag"]
    assert clean["text"] == ["Bravo", "Delta"]
    assert clean["x"] == [102.0, 98.0] and clean["y"] == [100.0, 99.0]
    assert clean["error_y"]["array"] == [8.0, 12.0] and clean["error_y"]["arrayminus"] == [5.0, 9.0]
    assert clean["error_x"]["array"] == [18.0, 20.0] and clean["error_x"]["arrayminus"] == [17.0, 18.0]
    assert clean["error_x"]["symmetric"] is False
    below = t["dynamic below volumetric (1)"]
    assert (below["x"], below["y"]) == ([100.0], [60.0])
    assert below["error_y"]["array"] == [12.0] and below["error_y"]["arrayminus"] == [10.0]
    # Charlie's most severe (first) flag decides its group; hover lists every flag
    assert t["compartment signature (1)"]["customdata"] == ["compartment signature; data gaps"]
    one = t["1:1 (dynamic = volumetric)"]
    assert one["x"] == one["y"] and one["x"][0] == 0.0 and one["x"][1] >= 150.0
    assert fig["layout"]["meta"]["not_plotted"] == 2
    assert fig["layout"]["xaxis"]["title"]["text"].endswith("[Bscf (60 °F, 14.696 psia)]")
    assert fig["layout"]["yaxis"]["title"]["text"].startswith("Dynamic GIIP")


def test_groups_differ_in_both_colour_and_shape():
    fig = portfolio_figure(ROWS, DisplayUnits())
    markers = [t["marker"] for t in fig["data"] if t["mode"] == "markers"]
    assert len({m["color"] for m in markers}) == len(markers) == 3
    assert len({m["symbol"] for m in markers}) == 3
    assert {m["color"] for m in markers} <= PUBLISHED_OKABE_ITO


def test_palette_is_okabe_ito_and_every_flag_has_its_own_shape():
    assert set(OKABE_ITO.values()) == PUBLISHED_OKABE_ITO
    assert {c for c, _ in FLAG_STYLE.values()} <= PUBLISHED_OKABE_ITO
    symbols = [s for _, s in FLAG_STYLE.values()]
    assert len(set(symbols)) == len(symbols)
    # mechanism and volume flags each have a colour of their own (data-quality flags share yellow)
    mechanisms = [
        c for k, (c, _) in FLAG_STYLE.items() if not k.startswith("data_") and k != "survey_above_initial"
    ]
    assert len(set(mechanisms)) == len(mechanisms)
    assert FLAG_STYLE[NO_FLAG][0] == "#000000"


def test_si_values_and_axis_titles():
    oil = portfolio_figure(ROWS, DisplayUnits("oilfield", OILFIELD_60F))
    si = portfolio_figure(ROWS, DisplayUnits("si", OILFIELD_60F))
    factor = 1e9 * M3_PER_SCF_BY_HAND / 1e6  # 10^6 m3 per Bscf
    assert factor == pytest.approx(28.26, abs=0.01)
    for a, b in zip(oil["data"][:-1], si["data"][:-1], strict=True):
        assert a["name"] == b["name"]
        for key in ("x", "y"):
            assert b[key] == pytest.approx([v * factor for v in a[key]], rel=1e-6)
        for bars in ("error_x", "error_y"):
            assert b[bars]["array"] == pytest.approx([v * factor for v in a[bars]["array"]], rel=1e-6)
    assert si["layout"]["xaxis"]["title"]["text"].endswith("[10⁶ m³ (15 °C, 101.325 kPa)]")
    assert "Bscf" not in si["layout"]["yaxis"]["title"]["text"]


def test_empty_portfolio_gives_only_the_reference_line():
    fig = portfolio_figure([], DisplayUnits())
    assert [t["name"] for t in fig["data"]] == ["1:1 (dynamic = volumetric)"]
    assert fig["layout"]["meta"]["not_plotted"] == 0


def test_a_field_on_its_volumetric_estimate_is_not_plotted_against_itself():
    young = _row(7, "Golf", (80.0, 100.0, 125.0), (80.0, 100.0, 125.0), [_flag("too_little_depletion")])
    young = dataclasses.replace(young, estimate=dataclasses.replace(young.estimate, basis_model="volumetric"))
    assert young.dynamic_to_volumetric is None and young.volumetric_position is None
    fig = portfolio_figure([*ROWS, young], DisplayUnits())
    assert all("Golf" not in (t.get("text") or []) for t in fig["data"])
    assert fig["layout"]["meta"]["not_plotted"] == 3
