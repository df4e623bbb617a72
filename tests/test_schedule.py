"""Tests for trackfit.evaluate.schedule.rebalance_rows on business-day and monthly calendars."""

from __future__ import annotations

from datetime import date

import numpy as np
import pandas as pd
import pytest

from trackfit.evaluate.schedule import rebalance_rows


def _days(index: pd.DatetimeIndex) -> np.ndarray:
    return index.values.astype("datetime64[D]")


def _pandas_last_of(index: pd.DatetimeIndex, keys) -> np.ndarray:
    """Reference: positions of the last date in each pandas group (pandas groupby max)."""
    pos = pd.Series(np.arange(len(index)), index=index)
    return np.sort(pos.groupby(keys).max().to_numpy())


BDAYS = pd.bdate_range("2024-01-01", "2026-11-18")  # ends mid-month, on a Wednesday


def test_month_end_matches_pandas_month_periods():
    rows = rebalance_rows(_days(BDAYS), every="month_end", start=None, end=None)
    # pandas DatetimeIndex.to_period("M"): calendar months; the last business day of each.
    expected = _pandas_last_of(BDAYS, BDAYS.to_period("M"))
    np.testing.assert_array_equal(rows, expected)
    assert rows.dtype == np.int64
    assert len(rows) == 35  # January 2024 .. November 2026


def test_month_end_dates_by_hand():
    rows = rebalance_rows(_days(BDAYS), every="month_end", start=None, end=None)
    got = _days(BDAYS)[rows]
    # By hand: 2024-03-31 is a Sunday, so March rebalances on Friday 2024-03-29; 2024-02-29
    # (leap year) is a Thursday; 2026-10-31 is a Saturday, so Friday 2026-10-30.
    for day in ("2024-02-29", "2024-03-29", "2026-10-30"):
        assert np.datetime64(day) in got
    # The data end mid-month: the partial final month rebalances on its last available date.
    assert got[-1] == np.datetime64("2026-11-18")
    assert rows[-1] == len(BDAYS) - 1


def test_week_end_matches_pandas_iso_weeks():
    rows = rebalance_rows(_days(BDAYS), every="week_end", start=None, end=None)
    # pandas DatetimeIndex.isocalendar(): ISO year and week of each date.
    iso = BDAYS.isocalendar()
    expected = _pandas_last_of(BDAYS, [iso.year.to_numpy(), iso.week.to_numpy()])
    np.testing.assert_array_equal(rows, expected)


def test_week_end_across_a_year_end_and_a_missing_friday():
    # ISO week 1 of 2026 runs Monday 2025-12-29 to Sunday 2026-01-04 (by hand from a calendar):
    # one week, not split at the year end. Friday 2026-01-09 is missing (a holiday), so that
    # week ends on Thursday 2026-01-08.
    index = pd.bdate_range("2025-12-22", "2026-01-16").drop(pd.Timestamp("2026-01-09"))
    rows = rebalance_rows(_days(index), every="week_end", start=None, end=None)
    got = [str(d) for d in _days(index)[rows]]
    assert got == ["2025-12-26", "2026-01-02", "2026-01-08", "2026-01-16"]
    month = rebalance_rows(_days(index), every="month_end", start=None, end=None)
    assert [str(d) for d in _days(index)[month]] == ["2025-12-31", "2026-01-16"]


def test_week_end_on_weekend_dates():
    # Calendar-daily data including weekends: the ISO week ends on Sunday.
    index = pd.date_range("2026-03-02", "2026-03-22", freq="D")
    rows = rebalance_rows(_days(index), every="week_end", start=None, end=None)
    assert [str(d) for d in _days(index)[rows]] == ["2026-03-08", "2026-03-15", "2026-03-22"]


def test_month_end_on_a_monthly_calendar_is_every_row():
    index = pd.date_range("2020-01-31", periods=24, freq="ME")
    rows = rebalance_rows(_days(index), every="month_end", start=None, end=None)
    np.testing.assert_array_equal(rows, np.arange(24))


def test_bounds_are_inclusive_and_applied_to_rebalance_dates():
    days = _days(BDAYS)
    rows = rebalance_rows(days, every="month_end", start=date(2025, 1, 31), end=date(2025, 6, 30))
    # 2025-01-31 is a Friday and 2025-06-30 a Monday: both month ends, both kept.
    assert [str(d) for d in days[rows]] == [
        "2025-01-31",
        "2025-02-28",
        "2025-03-31",
        "2025-04-30",
        "2025-05-30",
        "2025-06-30",
    ]
    # An end inside a month whose data go on: that month's rebalance (2025-06-30) is after
    # the end and left out; 2025-06-27 is not a month end.
    rows = rebalance_rows(days, every="month_end", start=date(2025, 1, 1), end=date(2025, 6, 27))
    assert str(days[rows][-1]) == "2025-05-30"


def test_periods_count_from_the_first_row_on_or_after_start():
    days = _days(BDAYS)
    # 2025-01-04 is a Saturday: the first row on or after it is Monday 2025-01-06.
    rows = rebalance_rows(
        days, every="periods", periods=5, start=date(2025, 1, 4), end=date(2025, 2, 7)
    )
    first = int(np.flatnonzero(days == np.datetime64("2025-01-06"))[0])
    np.testing.assert_array_equal(rows, first + 5 * np.arange(5))
    # Five business days apart on a holiday-free calendar: every Monday.
    assert [str(d) for d in days[rows]] == [
        "2025-01-06",
        "2025-01-13",
        "2025-01-20",
        "2025-01-27",
        "2025-02-03",
    ]


@pytest.mark.parametrize(
    ("n", "periods", "expected"),
    [
        (10, 1, list(range(10))),
        (10, 3, [0, 3, 6, 9]),
        (10, 4, [0, 4, 8]),
        (10, 10, [0]),
        (10, 11, [0]),
    ],
)
def test_periods_without_bounds(n, periods, expected):
    days = _days(pd.bdate_range("2026-01-05", periods=n))
    rows = rebalance_rows(days, every="periods", periods=periods, start=None, end=None)
    assert rows.tolist() == expected


def test_accepts_other_datetime64_units():
    ns = BDAYS.values  # datetime64[ns]
    np.testing.assert_array_equal(
        rebalance_rows(ns, every="month_end", start=None, end=None),
        rebalance_rows(_days(BDAYS), every="month_end", start=None, end=None),
    )


DAYS = _days(pd.bdate_range("2026-01-05", "2026-03-31"))


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        (
            dict(every="monthly"),
            r"'every' parameter .* must be one of 'month_end', 'week_end', "
            r"'periods'\. Got 'monthly'",
        ),
        (dict(every="periods"), r"'periods' parameter .* must be an int >= 1 .* Got None"),
        (dict(every="periods", periods=0), r"'periods' .* int >= 1 .* Got 0"),
        (dict(every="periods", periods=2.5), r"'periods' .* int >= 1 .* Got 2\.5"),
        (dict(every="periods", periods=True), r"'periods' .* int >= 1 .* Got True"),
        (dict(every="month_end", periods=5), r"only used with every='periods'"),
        (
            dict(every="month_end", start=date(2026, 3, 1), end=date(2026, 2, 1)),
            r"start 2026-03-01 is after end 2026-02-01",
        ),
        (
            dict(every="month_end", start=date(2026, 4, 1)),
            r"No month end rebalance date falls in \[2026-04-01, any\]: the data run from "
            r"2026-01-05 to 2026-03-31",
        ),
        (
            dict(every="week_end", start=date(2026, 1, 10), end=date(2026, 1, 11)),
            r"No week end rebalance date falls in \[2026-01-10, 2026-01-11\]",
        ),
        (
            dict(every="periods", periods=3, end=date(2026, 1, 1)),
            r"No periods rebalance date falls in \[any, 2026-01-01\]",
        ),
    ],
)
def test_errors(kwargs, match):
    kwargs = {"start": None, "end": None, **kwargs}
    with pytest.raises(ValueError, match=match):
        rebalance_rows(DAYS, **kwargs)


@pytest.mark.parametrize(
    ("dates", "match"),
    [
        (np.array([], dtype="datetime64[D]"), r"non-empty 1-d datetime64 .* shape \(0,\)"),
        (np.arange(5), r"non-empty 1-d datetime64 array\. Got dtype int64"),
        (DAYS.reshape(-1, 1), r"shape \(\d+, 1\)"),
        (
            DAYS[[0, 2, 1]],
            r"strictly increasing\. Got 2026-01-07 at row 1 followed by "
            r"2026-01-06 at row 2",
        ),
        (DAYS[[0, 1, 1]], r"strictly increasing"),
        (np.array(["2026-01-05", "NaT"], dtype="datetime64[D]"), r"NaT\) at row 1"),
    ],
)
def test_bad_dates(dates, match):
    with pytest.raises(ValueError, match=match):
        rebalance_rows(dates, every="month_end", start=None, end=None)
