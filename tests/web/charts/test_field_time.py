"""The field page's time charts (web/charts/field_time.py) by their trace data, in both unit systems."""

import datetime as dt

import pytest

from server.engine.analysis import analyse_field
from server.services.fieldwork.history import HistoryRow, ProductionSeries, SurveyRow
from server.services.serialize import to_jsonable
from server.web.charts.field_time import history_figure, pressure_time_figure, production_figure
from server.web.display import DisplayUnits
from tests.engine.forward_histories import history_inputs

SI = DisplayUnits("si")
# 1 psi = 6.894757 kPa (NIST SP 811, B.8); 1 bbl = 0.158987295 m3 (42 US gallons of 231 in3).
KPA_PER_PSI = 6.894757
M3_PER_BBL = 42 * 231 * 0.0254**3
T60F_K = (60.0 - 32.0) / 1.8 + 273.15
M3_ISO_PER_SCF = 0.3048**3 * (288.15 / T60F_K) * (14.696 * KPA_PER_PSI / 101.325)


def _by_name(fig):
    return {t["name"]: t for t in fig["data"]}


def test_pressure_by_well_with_set_aside_surveys_and_their_reasons():
    inputs, _ = history_inputs(seed=21, noise_psi=12.0, offsets_psi={4: -280.0}, excluded={9: "tool failure"})
    d = to_jsonable(analyse_field(inputs))
    fig = pressure_time_figure(d)
    t = _by_name(fig)
    pts = d["prepared"]["points"]
    aside = t["set aside"]
    assert len(aside["x"]) == 2  # the engineer's exclusion and the outlier
    assert any("tool failure" in x for x in aside["text"])
    assert aside["marker"]["symbol"] == "x-thin-open" and t["W-1"]["marker"]["symbol"] != "x-thin-open"
    n_used = len(t["W-1"]["x"]) + len(t["W-2"]["x"])
    assert n_used == len(pts) - 2
    w1 = [p for p in pts if p["well"] == "W-1" and p["index"] not in (4, 9)]
    assert t["W-1"]["y"] == [p["p_datum_psia"] for p in w1]
    assert t["W-1"]["x"][0] == (dt.date(1970, 1, 1) + dt.timedelta(days=round(w1[0]["t_days"]))).isoformat()
    assert fig["layout"]["yaxis"]["title"]["text"] == "Pressure at the datum (psia)"
    si = _by_name(pressure_time_figure(d, du=SI))
    assert si["W-1"]["y"] == pytest.approx([p["p_datum_psia"] * KPA_PER_PSI for p in w1], rel=1e-6)


def test_pressure_from_stored_surveys_when_there_is_no_estimate():
    surveys = [
        SurveyRow(1, "A-1", dt.date(2020, 1, 5), 4000.0, 9000.0, "good", False, None),
        SurveyRow(2, "A-1", dt.date(2020, 7, 5), 3900.0, 9000.0, "good", True, "gauge <b>drift</b>"),
        SurveyRow(3, "A-2", dt.date(2020, 7, 9), 3950.0, 9000.0, "fair", False, None),
    ]
    fig = pressure_time_figure({}, surveys, SI)
    t = _by_name(fig)
    assert t["A-1"]["x"] == ["2020-01-05"] and t["A-2"]["y"] == [pytest.approx(3950.0 * KPA_PER_PSI)]
    assert t["set aside"]["text"] == ["A-1: gauge &lt;b&gt;drift&lt;/b&gt;"]  # plotly reads tags: escaped
    assert fig["layout"]["yaxis"]["title"]["text"] == "Pressure at the gauge (kPa)"


def test_production_rates_per_calendar_day_and_cumulative_gas():
    series = ProductionSeries(
        [dt.date(2021, 1, 1), dt.date(2021, 2, 1), dt.date(2021, 3, 1)],
        [620_000.0, 560_000.0, 0.0],  # Mscf per month
        [3100.0, 2800.0, 0.0],  # stb
        [0.0, 0.0, 0.0],
    )
    fig = production_figure(series)
    t = _by_name(fig)
    gas = next(v for k, v in t.items() if k.startswith("separator gas rate"))
    # 620,000 Mscf over the 31 days of January = 20 MMscf/d; 560,000 over February's 28 = 20
    assert gas["y"] == pytest.approx([20.0, 20.0, 0.0])
    cond = next(v for k, v in t.items() if k.startswith("condensate"))
    assert cond["y"] == pytest.approx([100.0, 100.0, 0.0]) and cond["yaxis"] == "y2"
    assert not any(k.startswith("water") for k in t)  # no water produced: no trace
    cum = next(v for k, v in t.items() if k.startswith("cumulative"))
    assert cum["y"] == pytest.approx([0.62, 1.18, 1.18]) and cum["yaxis"] == "y3"
    assert fig["layout"]["yaxis3"]["title"]["text"] == "Cumulative separator gas<br>Bscf (60 °F, 14.696 psia)"
    si = _by_name(production_figure(series, SI))
    gas_si = next(v for k, v in si.items() if k.startswith("separator gas rate"))
    assert gas_si["y"][0] == pytest.approx(20.0e6 * M3_ISO_PER_SCF / 1e3, rel=1e-5)  # 10^3 m3/d
    cond_si = next(v for k, v in si.items() if k.startswith("condensate"))
    assert cond_si["y"][0] == pytest.approx(100.0 * M3_PER_BBL, rel=1e-6) and "m³/d" in cond_si["name"]


def _row(i, best, low, high, trigger="", status="ok"):
    t = dt.datetime(2026, 1, 1, 8, 0, 0) + dt.timedelta(hours=i)
    return HistoryRow(i, t, status, "pz-ols", low, best, high, best * 0.8 if best else None, "1", trigger)


def test_history_draws_each_stored_estimate_with_its_range_and_trigger():
    rows = [
        _row(1, 100.0, 90.0, 112.0, "upload 3"),
        _row(2, None, None, None, status="refused"),
        _row(3, 104.0, 96.0, 115.0, "set aside survey ... by eng"),
    ]
    fig = history_figure(rows)
    best = fig["data"][0]
    assert best["y"] == [100.0, 104.0] and best["customdata"] == [1, 3]  # refused rows have no number
    assert best["x"] == ["2026-01-01 09:00:00", "2026-01-01 11:00:00"]
    assert best["error_y"]["array"] == pytest.approx([12.0, 11.0])
    assert best["error_y"]["arrayminus"] == pytest.approx([10.0, 8.0])
    assert "upload 3" in best["text"][0] and "set aside survey" in best["text"][1]
    eur = _by_name(fig)["EUR at abandonment"]
    assert eur["y"] == pytest.approx([80.0, 83.2])
    si = history_figure(rows, SI)
    assert si["data"][0]["y"][0] == pytest.approx(100.0 * 1e9 * M3_ISO_PER_SCF / 1e6, rel=1e-5)
    assert "10⁶ m³" in si["layout"]["yaxis"]["title"]["text"]


def test_liquid_rates_get_their_own_round_ticks_and_no_axis_when_there_are_none():
    months = [dt.date(2021, 1, 1), dt.date(2021, 2, 1)]
    wet = production_figure(ProductionSeries(months, [6e5, 6e5], [0.0, 0.0], [4.9e3, 2.1e3]))
    y2 = wet["layout"]["yaxis2"]
    # plotly.js 4 defaults an overlaying axis to ticks synced with the left axis (157, 314, 471)
    assert y2["tickmode"] == "auto"
    assert y2["title"]["text"].startswith("Water<br>")  # names only what was produced
    dry = production_figure(ProductionSeries(months, [6e5, 6e5], [0.0, 0.0], [0.0, 0.0]))
    assert "yaxis2" not in dry["layout"]  # a dry-gas field: no empty "condensate, water" axis
    assert not any(t.get("yaxis") == "y2" for t in dry["data"])


def test_history_without_an_estimate_has_nothing_to_draw():
    fig = history_figure([_row(1, None, None, None, status="refused")])
    assert fig["layout"]["meta"]["n_estimates"] == 0  # the page shows a sentence, not a 2000-2001 axis
    assert fig["data"][0]["x"] == []
    assert history_figure([_row(1, 100.0, 90.0, 110.0)])["layout"]["meta"]["n_estimates"] == 1
