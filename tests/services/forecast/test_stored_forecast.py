"""What the recompute keeps of a forecast: yearly rows, the summary columns, remaining from a date.

Each expected number follows from the Gregorian calendar (Python's ``calendar``/``datetime``:
2027 has 365 days, 2028 366) and the constant rates of tests/forecast_cases.py."""

import datetime as dt

import numpy as np
import pytest

from server.services.forecast import remaining_after, stop_words, stored_forecast, yearly_rows
from server.services.serialize import to_jsonable
from tests.forecast_cases import constant_rate_profile, make_forecast


def test_yearly_rows_add_calendar_days():
    p = to_jsonable(constant_rate_profile("best", months=24, rate_mscf_per_day=10000.0, history_bscf=20.0))
    rows = yearly_rows(p)
    assert [r["year"] for r in rows] == [2027, 2028]
    assert rows[0]["gas_bscf"] == pytest.approx(10000.0 * 365 / 1e6)  # 2027: 365 days
    assert rows[1]["gas_bscf"] == pytest.approx(10000.0 * 366 / 1e6)  # 2028: leap year
    assert [r["average_rate_mscf_per_day"] for r in rows] == pytest.approx([10000.0, 10000.0])
    assert rows[1]["cumulative_bscf"] == pytest.approx(20.0 + 10000.0 * 731 / 1e6)
    assert rows[0]["condensate_stb"] == pytest.approx(5.0 * 10000.0 * 365 / 1e3)  # 5 stb/MMscf


def test_a_part_year_averages_over_its_own_months():
    p = to_jsonable(constant_rate_profile("best", first_month=dt.date(2027, 7, 1), months=6))
    (row,) = yearly_rows(p)
    assert row["gas_bscf"] == pytest.approx(10000.0 * 184 / 1e6)  # July-December: 184 days
    assert row["average_rate_mscf_per_day"] == pytest.approx(10000.0)


def test_remaining_after_a_date():
    p = to_jsonable(constant_rate_profile("best", months=24, rate_mscf_per_day=10000.0))
    eur = p["eur_bscf"]
    assert remaining_after(p, dt.date(2020, 1, 1)) == pytest.approx(eur - 20.0)  # before the forecast
    # after 2027-07-01: July 2027 to December 2028 = 184 + 366 days
    assert remaining_after(p, dt.date(2027, 7, 1)) == pytest.approx(10000.0 * 550 / 1e6)
    # mid-month: 2027-07-16 leaves 16 of July's 31 days
    assert remaining_after(p, dt.date(2027, 7, 16)) == pytest.approx(10000.0 * (550 - 15) / 1e6)
    assert remaining_after(p, dt.date(2031, 1, 1)) == 0.0


def test_summary_columns_and_yearly_series():
    forecast = make_forecast(history_bscf=20.0)
    data, cols = stored_forecast(forecast)
    best = forecast.case("best")
    assert cols["forecast_eur_best_bscf"] == pytest.approx(best.eur_bscf)
    assert cols["forecast_eur_low_bscf"] < cols["forecast_eur_best_bscf"] < cols["forecast_eur_high_bscf"]
    assert cols["forecast_stop_reason"] == "licence end"
    assert cols["forecast_end_date"] == dt.date(2031, 1, 1)  # 48 months from 2027-01: exclusive end
    yearly = cols["forecast_yearly"]
    assert yearly["years"] == [2027, 2028, 2029, 2030, 2031]
    assert yearly["low"][3:] == [0.0, 0.0]  # the low case stops after 3 years
    assert sum(yearly["best"]) == pytest.approx(best.eur_bscf - 20.0)  # the years add to the remaining
    assert [p["case"] for p in data["profiles"]] == ["low", "best", "high"]
    assert data["profiles"][1]["yearly"][0]["year"] == 2027
    assert data["profiles"][1]["end_date"] == "2031-01-01"


def test_no_forecast_stores_nothing():
    data, cols = stored_forecast(None)
    assert data is None and set(cols.values()) == {None}


def test_stop_reasons_read_in_words():
    from server.engine.forecast.types import STOP_REASONS

    for reason in STOP_REASONS:
        words = stop_words(reason)
        assert words and "_" not in words and words != reason


def test_the_pz_path_divides_each_pressure_by_its_z():
    import numpy as np

    data, _ = stored_forecast(make_forecast(), z_of_p=lambda p: np.full_like(p, 0.9))
    best = data["profiles"][1]
    assert best["pz_psia"][0] == pytest.approx(best["pressure_psia"][0] / 0.9)
    assert stored_forecast(make_forecast())[0]["profiles"][1]["pz_psia"] is None  # no z: no path


def test_yearly_rows_carry_water_when_the_profile_has_it():
    p = to_jsonable(constant_rate_profile("best", months=24, rate_mscf_per_day=10000.0))
    assert [r["water_stb"] for r in yearly_rows(p)] == [None, None]  # no water forecast
    p["water_stb"] = [4.0 * g * 1e3 for g in p["gas_bscf"]]  # 4 stb/MMscf
    rows = yearly_rows(p)
    assert rows[0]["water_stb"] == pytest.approx(4.0 * 10000.0 * 365 / 1e3)  # 2027: 365 days
    assert rows[1]["water_stb"] == pytest.approx(4.0 * 10000.0 * 366 / 1e3)  # 2028: leap year


def test_years_and_month_days_follow_the_python_calendar():
    # numpy's calendar (issue 17: one pass instead of a date a month) against the standard
    # library's, on month ends from 1888 to 2134, half days included (both round half to even).
    import calendar

    from server.services.forecast import _month_date, _years_and_month_days

    t = np.concatenate([np.arange(-30000.0, 60000.0, 0.5), [59.5, 60.5, 11016.5]])
    years, days = _years_and_month_days(t)
    expected = [(d.year, calendar.monthrange(d.year, d.month)[1]) for d in map(_month_date, t)]
    assert list(zip(years, days, strict=True)) == expected
    assert _years_and_month_days([]) == ([], [])
