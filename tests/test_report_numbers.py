"""Tests for the fixed number and date formats of trackfit.report.numbers."""

from __future__ import annotations

from datetime import date, datetime

import numpy as np
import pytest

from trackfit.report.numbers import (
    fixed,
    iso_date,
    json_number,
    percent,
    percent_short,
    row_dates,
)


@pytest.mark.parametrize(
    ("value", "spec", "expected"),
    [
        (0.4125, ".10f", "0.4125000000"),
        (-0.0, ".10f", "0.0000000000"),
        (-4e-12, ".10f", "0.0000000000"),
        (-5e-11, ".10f", "-0.0000000001"),
        (-0.0375, ".4f", "-0.0375"),
        (-1e-20, ".1e", "-1.0e-20"),
        (-0.0, ".1e", "0.0e+00"),
        (float("nan"), ".4f", "n/a"),
        (float("inf"), ".4f", "n/a"),
        (None, ".4f", "n/a"),
        (np.float64(2.5e-9), ".1e", "2.5e-09"),
    ],
)
def test_fixed(value, spec, expected):
    assert fixed(value, spec) == expected


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (0.0123456, "1.23%"),
        (-0.0375, "-3.75%"),
        (-0.00001, "0.00%"),
        (1.0, "100.00%"),
        (float("nan"), "n/a"),
        (None, "n/a"),
    ],
)
def test_percent(value, expected):
    assert percent(value) == expected


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (0.05, "5.00%"),
        (0.07, "7.00%"),  # 0.07 * 100 is 7.000000000000001 in binary
        (0.00125, "0.125%"),
        (0.123456, "12.3456%"),
        (1.0 / 3.0, "33.3333%"),
        (0.3, "30.00%"),
        (-0.025, "-2.50%"),
        (0.0, "0.00%"),
        (-1e-9, "0.00%"),
        (float("-inf"), "n/a"),
        (None, "n/a"),
    ],
)
def test_percent_short_keeps_two_to_four_decimals(value, expected):
    assert percent_short(value) == expected


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (0.1234567890123456, 0.123456789012),
        (123456789012345.0, 123456789012000.0),
        (1.0 / 3.0, 0.333333333333),
        (-0.0, 0.0),
        (np.float32(0.5), 0.5),
        (float("nan"), None),
        (float("-inf"), None),
    ],
)
def test_json_number(value, expected):
    result = json_number(value)
    assert result == expected
    if expected == 0.0:
        assert str(result) == "0.0"  # not "-0.0"


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (np.datetime64("2026-11-30"), "2026-11-30"),
        (np.datetime64("2026-11-30T00:00:00.000000000"), "2026-11-30"),
        (date(2026, 11, 30), "2026-11-30"),
        (datetime(2026, 11, 30, 17, 45), "2026-11-30"),
    ],
)
def test_iso_date(value, expected):
    assert iso_date(value) == expected


@pytest.mark.parametrize(
    ("start", "stop", "expected"),
    [
        (0, 3, ("2026-01-31", "2026-03-31")),
        (1, 2, ("2026-02-28", "2026-02-28")),
        (2, 2, (None, None)),
        (3, 9, (None, None)),
        (2, 9, ("2026-03-31", "2026-03-31")),
    ],
)
def test_row_dates(start, stop, expected):
    dates = np.array(["2026-01-31", "2026-02-28", "2026-03-31"], dtype="datetime64[D]")
    assert row_dates(dates, start, stop) == expected
