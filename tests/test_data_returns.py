"""Prices to returns, percent to decimal, and risk-free rates per period, checked by hand."""

from __future__ import annotations

import re

import numpy as np
import pytest

from trackfit.data.returns import per_period_rate, percent_to_decimal, simple_returns
from trackfit.errors import DataError


def test_simple_returns_by_hand():
    prices = np.array(
        [
            [100.0, 50.0],
            [110.0, 25.0],
            [99.0, 50.0],
            [99.0, np.nan],
        ]
    )
    # by hand: 110/100 - 1 = 0.1, 99/110 - 1 = -0.1, 99/99 - 1 = 0;
    # 25/50 - 1 = -0.5, 50/25 - 1 = 1, a missing price gives a missing return
    expected = np.array([[0.1, -0.5], [-0.1, 1.0], [0.0, np.nan]])
    got = simple_returns(prices)
    assert got.shape == (3, 2)
    np.testing.assert_allclose(got, expected, rtol=1e-14, atol=1e-15)


def test_percent_to_decimal():
    np.testing.assert_allclose(percent_to_decimal([1.5, -250.0, 0.0]), [0.015, -2.5, 0.0])


RATES = [
    # (rate, unit, quote, periods, expected): worked by hand
    (0.02, "decimal", "per_period", 12, 0.02),
    (2.0, "percent", "per_period", 12, 0.02),
    (0.21, "decimal", "annual", 2, 0.1),  # 1.1 ** 2 = 1.21
    (46.41, "percent", "annual", 4, 0.1),  # 1.1 ** 4 = 1.4641
    (0.0, "percent", "annual", 252, 0.0),
    (-19.0, "percent", "annual", 2, -0.1),  # 0.9 ** 2 = 0.81
]


@pytest.mark.parametrize(("rate", "unit", "quote", "periods", "expected"), RATES)
def test_per_period_rate_by_hand(rate, unit, quote, periods, expected):
    got = per_period_rate(np.array([rate]), unit=unit, quote=quote, periods_per_year=periods)
    np.testing.assert_allclose(got, [expected], rtol=1e-12, atol=1e-15)


def test_annual_rate_compounds_back():
    rate = np.array([0.5, 2.0, 4.0])  # percent a year
    daily = per_period_rate(rate, unit="percent", quote="annual", periods_per_year=252)
    np.testing.assert_allclose((1 + daily) ** 252 - 1, rate / 100, rtol=1e-10)


def test_annual_rate_at_or_below_minus_100_percent():
    message = "annual risk-free rate of -100 % is at or below -100 %"
    with pytest.raises(DataError, match=re.escape(message)):
        per_period_rate(
            np.array([1.0, -100.0]), unit="percent", quote="annual", periods_per_year=12
        )
