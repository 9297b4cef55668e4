"""The booking chart of a reserves field page, by its trace data, in both unit systems."""

from types import SimpleNamespace

import pytest

from server.engine.units import M3_PER_FT3
from server.web.charts.booking import booking_figure
from server.web.display import DisplayUnits


def _row(**kw):
    base = dict(
        field_name="<b>Upland</b>",
        categories=("1P", "2P", "3P"),
        produced_gas_bscf=2.0,
        booked_low_bscf=38.0,
        booked_best_bscf=45.0,
        booked_high_bscf=58.0,
        eur_low_bscf=40.0,
        eur_best_bscf=50.0,
        eur_high_bscf=60.0,
    )
    return SimpleNamespace(**(base | kw))


def test_bars_stack_produced_and_booked_against_the_eur():
    fig = booking_figure(_row(), DisplayUnits("oilfield"))
    produced, booked, eur = fig["data"]
    assert fig["layout"]["barmode"] == "stack"
    assert produced["x"] == ["1P", "2P", "3P"] and produced["y"] == [2.0, 2.0, 2.0]
    assert booked["y"] == [38.0, 45.0, 58.0] and eur["y"] == [40.0, 50.0, 60.0]
    # an override shows as the gap between the stacked bar and the EUR marker (2P: 47 against 50)
    assert produced["y"][1] + booked["y"][1] == 47.0
    assert "<b>" not in booked["hovertemplate"] and "&lt;b&gt;Upland" in booked["hovertemplate"]


def test_si_units_and_nothing_to_draw():
    si = DisplayUnits("si")
    fig = booking_figure(_row(), si)
    # 1 ft = 0.3048 m exactly (international yard and pound agreement, 1959), so 1 Bscf = 1e9 ft³ x
    # 0.0283168 m³/ft³ = 28.3 10⁶ m³; the ISO basis (15 °C) differs from 60 °F by < 1 %
    assert fig["data"][0]["y"][0] == pytest.approx(2.0 * 1e9 * M3_PER_FT3 / 1e6, rel=0.01)
    assert "10⁶ m³" in fig["layout"]["yaxis"]["title"]["text"]
    nothing = dict.fromkeys(
        (
            "booked_low_bscf",
            "booked_best_bscf",
            "booked_high_bscf",
            "eur_low_bscf",
            "eur_best_bscf",
            "eur_high_bscf",
        )
    )
    assert booking_figure(_row(**nothing), si) is None
    missing = booking_figure(_row(booked_low_bscf=None), si)["data"][1]["y"]
    assert missing[0] is None and missing[1] is not None
