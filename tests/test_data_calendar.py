"""Periods per year measured on the dates, on calendars built with pandas."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest

from trackfit.data.calendar import irregular_warning, measure_periods_per_year, median_spacing_days
from trackfit.errors import DataError


def _days(index: pd.DatetimeIndex) -> np.ndarray:
    return index.to_numpy().astype("datetime64[D]")


def _exchange(first: str, last: str, per_year: int = 252) -> pd.DatetimeIndex:
    """Weekdays with holidays dropped until every year holds ``per_year`` rows.

    The holidays are invented: the weekdays falling on the 10th of each month, then on the
    20th, as many as it takes (ground truth built here, not any exchange's calendar).
    """
    days = pd.bdate_range(first, last)
    keep = np.ones(len(days), bool)
    for year in sorted(set(days.year)):
        in_year = np.flatnonzero(days.year == year)
        extra = len(in_year) - per_year
        candidates = [i for day in (10, 20) for i in in_year if days[i].day == day]
        keep[candidates[:extra]] = False
    return days[keep]


#: (name, dates, value, usual calendar, measured rate or None to skip, full years or None)
CALENDARS = [
    # pandas bdate_range: 261 + 260 + 260 weekdays in 2021, 2022, 2023. This case was 252 when
    # the value was looked up from the median spacing; it moved with the measured rate.
    ("weekdays", pd.bdate_range("2021-01-01", "2023-12-31"), 261, "weekdays", 781 / 3, 3),
    ("exchange days", _exchange("2020-01-01", "2024-12-31"), 252, "trading days", 252.0, 5),
    # 250 a year is 0.8 % from 252: the usual value
    (
        "exchange days, 250 a year",
        _exchange("2021-01-01", "2022-12-31", 250),
        252,
        "trading days",
        250.0,
        2,
    ),
    ("weekly", pd.date_range("2021-01-01", periods=150, freq="W-FRI"), 52, "weekly", 52.5, 2),
    (
        "weekly Fridays of 2020",
        pd.date_range("2020-01-03", "2020-12-25", freq="W-FRI"),
        52,
        "weekly",
        52.0,
        1,
    ),
    ("month ends", pd.date_range("2015-01-31", periods=60, freq="ME"), 12, "monthly", 12.0, 5),
    (
        "business month ends",
        pd.date_range("2015-01-01", periods=60, freq="BME"),
        12,
        "monthly",
        12.0,
        5,
    ),
    ("quarter ends", pd.date_range("2000-03-31", periods=40, freq="QE"), 4, "quarterly", 4.0, 10),
    # 30 calendar days: 29 intervals over 29 days, 365.25 a year (was 252 by the spacing rule).
    (
        "calendar days",
        pd.date_range("2021-01-01", periods=30, freq="D"),
        365,
        "calendar days",
        365.25,
        0,
    ),
    (
        "three dates",
        pd.DatetimeIndex(["2021-01-01", "2021-01-08", "2021-01-15"]),
        52,
        "weekly",
        2 * 365.25 / 14,
        0,
    ),
    # 26 weeks of weekdays, Monday to Friday: 129 intervals over 179 days.
    (
        "weekdays, half a year",
        pd.bdate_range("2026-01-05", periods=130),
        261,
        "weekdays",
        129 * 365.25 / 179,
        0,
    ),
    ("weekdays, a quarter", pd.bdate_range("2026-01-07", periods=65), 261, "weekdays", None, 0),
    (
        "business month ends, half a year",
        pd.date_range("2024-01-01", periods=6, freq="BME"),
        12,
        "monthly",
        None,
        0,
    ),
]


@pytest.mark.parametrize(
    ("dates", "value", "usual", "measured", "full_years"),
    [c[1:] for c in CALENDARS],
    ids=[c[0] for c in CALENDARS],
)
def test_measured_periods_per_year(dates, value, usual, measured, full_years):
    rate = measure_periods_per_year(_days(dates))
    assert (rate.value, rate.usual, rate.full_years) == (value, usual, full_years)
    if measured is not None:
        assert rate.measured == pytest.approx(measured, rel=1e-12)
    assert irregular_warning(rate) is None


def test_exchange_calendar_is_built_as_intended():
    # the test's own ground truth: every year of the invented calendar holds 252 rows
    days = _exchange("2020-01-01", "2024-12-31")
    assert set(pd.Series(days.year).value_counts()) == {252}


def test_full_years_and_the_rows_counted():
    # 2024-01-08 start: 2024 is not full; 2026-11-30 end: 2026 is not; 2025 holds 261 weekdays
    rate = measure_periods_per_year(_days(pd.bdate_range("2024-01-08", "2026-11-30")))
    assert (rate.first_year, rate.last_year, rate.rows) == (2025, 2025, 261)
    assert (rate.first, rate.last) == ("2024-01-08", "2026-11-30")


IRREGULAR = [
    # these two raised a DataError when the value was looked up from the spacing; a measured
    # rate close to no usual value is now used rounded, with a warning
    ("fortnightly", pd.date_range("2021-01-01", periods=20, freq="2W"), 26, 19 * 365.25 / 266),
    ("half-yearly", pd.date_range("2000-06-30", periods=10, freq="6ME"), 2, 2.0),
    ("every third weekday", pd.bdate_range("2021-01-01", "2023-12-31")[::3], 87, 261 / 3),
    # 256 a year over 5 years: 4 from 252 and 5 from 261, beyond 1.5 % + 1/5 of either
    ("256 days a year", _exchange("2020-01-01", "2024-12-31", 256), 256, 256.0),
]


@pytest.mark.parametrize(
    ("dates", "value", "measured"), [c[1:] for c in IRREGULAR], ids=[c[0] for c in IRREGULAR]
)
def test_irregular_calendars_warn(dates, value, measured):
    rate = measure_periods_per_year(_days(dates))
    assert rate.usual is None and rate.value == value
    assert rate.measured == pytest.approx(measured, abs=0.01)
    warning = irregular_warning(rate)
    assert warning.startswith(f"the fit window's dates ({rate.first} to {rate.last}) come at")
    assert f"annualized with {value} periods a year; set data.periods_per_year" in warning


def test_median_spacing_of_business_days():
    # Mon..Fri then Mon: gaps 1, 1, 1, 1, 3
    dates = _days(pd.bdate_range("2024-01-01", periods=6))
    assert median_spacing_days(dates) == 1.0


FAILURES = [
    ("two dates", pd.DatetimeIndex(["2021-01-01", "2021-01-08"]), "from 2 return date(s)"),
    ("one date", pd.DatetimeIndex(["2021-01-01"]), "from 1 return date(s)"),
]


@pytest.mark.parametrize(
    ("dates", "match"), [c[1:] for c in FAILURES], ids=[c[0] for c in FAILURES]
)
def test_measure_failures(dates, match):
    with pytest.raises(DataError, match=re.escape(match)):
        measure_periods_per_year(_days(dates))


def test_years_of_a_weekday_span_agree_with_the_calendar():
    # A backtest annualizes over m / periods_per_year years; on weekdays from 2022-11-30 to
    # 2026-11-30 (1461 days, 4.0 Julian years) that must be 4.0 years, not m / 252 = 4.14.
    days = _days(pd.bdate_range("2020-01-01", "2026-11-30"))
    rate = measure_periods_per_year(days)
    assert (rate.value, rate.first_year, rate.last_year) == (261, 2020, 2025)
    m = int((days > np.datetime64("2022-11-30")).sum())
    assert m == 1043
    assert m / rate.value == pytest.approx(1461 / 365.25, rel=1e-3)
