"""Periods per year from the spacing of dates, on calendars built with pandas."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest

from trackfit.data.calendar import infer_periods_per_year, median_spacing_days
from trackfit.errors import DataError


def _days(index: pd.DatetimeIndex) -> np.ndarray:
    return index.to_numpy().astype("datetime64[D]")


CALENDARS = [
    ("business days", pd.bdate_range("2021-01-01", "2023-12-31"), 252),
    ("weekly", pd.date_range("2021-01-01", periods=150, freq="W-FRI"), 52),
    ("month ends", pd.date_range("2015-01-31", periods=60, freq="ME"), 12),
    ("business month ends", pd.date_range("2015-01-01", periods=60, freq="BME"), 12),
    ("quarter ends", pd.date_range("2000-03-31", periods=40, freq="QE"), 4),
    ("calendar days", pd.date_range("2021-01-01", periods=30, freq="D"), 252),
    ("three dates", pd.DatetimeIndex(["2021-01-01", "2021-01-08", "2021-01-15"]), 52),
]


@pytest.mark.parametrize(
    ("dates", "periods"), [c[1:] for c in CALENDARS], ids=[c[0] for c in CALENDARS]
)
def test_inferred_periods_per_year(dates, periods):
    assert infer_periods_per_year(_days(dates)) == periods


def test_median_spacing_of_business_days():
    # Mon..Fri then Mon: gaps 1, 1, 1, 1, 3
    dates = _days(pd.bdate_range("2024-01-01", periods=6))
    assert median_spacing_days(dates) == 1.0


FAILURES = [
    ("fortnightly", pd.date_range("2021-01-01", periods=20, freq="2W"), "is 14 calendar days"),
    ("half-yearly", pd.date_range("2000-06-30", periods=10, freq="6ME"), "is 184 calendar days"),
    ("two dates", pd.DatetimeIndex(["2021-01-01", "2021-01-08"]), "from 2 return date(s)"),
]


@pytest.mark.parametrize(
    ("dates", "match"), [c[1:] for c in FAILURES], ids=[c[0] for c in FAILURES]
)
def test_inference_failures(dates, match):
    with pytest.raises(DataError, match=re.escape(match)):
        infer_periods_per_year(_days(dates))
