"""Tests for trackfit.evaluate.metrics.tracking_metrics."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.stats
import statsmodels.api as sm
from sklearn.metrics import r2_score

from trackfit.evaluate.metrics import TrackingMetrics, tracking_metrics

PPY = 12


@pytest.fixture
def returns() -> tuple[np.ndarray, np.ndarray]:
    """Seeded benchmark and a portfolio that follows it with noise and a small tilt."""
    rng = np.random.default_rng(20261130)
    benchmark = rng.normal(0.006, 0.04, size=120)
    portfolio = 0.0005 + 0.97 * benchmark + rng.normal(0.0, 0.004, size=120)
    return portfolio, benchmark


def test_tracking_error_against_scipy_tstd(returns):
    p, b = returns
    m = tracking_metrics(p, b, np.ones(3), PPY)
    # scipy.stats.tstd: sample standard deviation with ddof=1.
    expected = scipy.stats.tstd(p - b) * math.sqrt(PPY)
    assert m.tracking_error == pytest.approx(expected, rel=1e-12)


def test_mean_active_and_information_ratio_against_scipy_describe(returns):
    p, b = returns
    m = tracking_metrics(p, b, np.ones(3), PPY)
    # scipy.stats.describe: mean and ddof=1 variance of the active return.
    d = scipy.stats.describe(p - b)
    assert m.mean_active == pytest.approx(d.mean * PPY, rel=1e-12)
    expected_ir = d.mean * PPY / (math.sqrt(d.variance) * math.sqrt(PPY))
    assert m.information_ratio == pytest.approx(expected_ir, rel=1e-12)


def test_correlation_against_scipy_pearsonr(returns):
    p, b = returns
    m = tracking_metrics(p, b, np.ones(3), PPY)
    # scipy.stats.pearsonr: Pearson correlation coefficient.
    assert m.correlation == pytest.approx(scipy.stats.pearsonr(p, b).statistic, rel=1e-12)


def test_beta_against_statsmodels_ols_and_scipy_linregress(returns):
    p, b = returns
    m = tracking_metrics(p, b, np.ones(3), PPY)
    # statsmodels OLS of portfolio on a constant and the benchmark: the slope is the beta.
    ols = sm.OLS(p, sm.add_constant(b)).fit()
    assert m.beta == pytest.approx(ols.params[1], rel=1e-10)
    # scipy.stats.linregress: the same least-squares slope.
    assert m.beta == pytest.approx(scipy.stats.linregress(b, p).slope, rel=1e-10)


def test_r_squared_against_sklearn_r2_score(returns):
    p, b = returns
    m = tracking_metrics(p, b, np.ones(3), PPY)
    # sklearn.metrics.r2_score(y_true=b, y_pred=p) = 1 - sum((b - p)**2) / sum((b - mean b)**2).
    assert m.r_squared == pytest.approx(r2_score(b, p), rel=1e-12)


def test_sum_sq_active_against_numpy_dot(returns):
    p, b = returns
    m = tracking_metrics(p, b, np.ones(3), PPY)
    # numpy.dot of the active return with itself.
    assert m.sum_sq_active == pytest.approx(float(np.dot(p - b, p - b)), rel=1e-12)
    assert m.periods == 120


def test_information_ratio_hand_checked():
    # Active returns 0.01 and 0.03, 4 periods a year: mean 0.02, ddof=1 std sqrt(2)/100,
    # so mean_active = 0.08, tracking error = 2 * sqrt(2) / 100, IR = 2 * sqrt(2).
    b = np.array([0.00, 0.00])
    p = np.array([0.01, 0.03])
    m = tracking_metrics(p, b, np.array([1.0]), 4)
    assert m.mean_active == pytest.approx(0.08, rel=1e-12)
    assert m.tracking_error == pytest.approx(2 * math.sqrt(2) / 100, rel=1e-12)
    assert m.information_ratio == pytest.approx(2 * math.sqrt(2), rel=1e-12)


@pytest.mark.parametrize(
    ("active", "expected"),
    [
        # Cumulative 0.01, 0.03, -0.01, 0, 0.03, 0.02; peak 0.03 from t=2; worst fall 0.04.
        ([0.01, 0.02, -0.04, 0.01, 0.03, -0.01], 0.04),
        # Cumulative -0.02, -0.03, 0.02: the peak starts at 0, so the fall is 0.03.
        ([-0.02, -0.01, 0.05], 0.03),
        # Never falls.
        ([0.01, 0.0, 0.02, 0.005], 0.0),
        # Two dips. Cumulative 0.02, 0.00, 0.05, 0.03, -0.01: the first falls 0.02 from
        # 0.02, the second 0.06 from 0.05; the larger counts.
        ([0.02, -0.02, 0.05, -0.02, -0.04], 0.06),
        # Single row below zero.
        ([-0.015], 0.015),
        # No rows.
        ([], 0.0),
    ],
)
def test_max_drawdown_active_hand_checked(active, expected):
    active = np.array(active, dtype=float)
    b = np.linspace(-0.01, 0.01, active.size)
    m = tracking_metrics(b + active, b, np.array([0.5, 0.5]), PPY)
    assert m.max_drawdown_active == pytest.approx(expected, abs=1e-15)
    assert m.max_drawdown_active >= 0.0


def test_identical_portfolio_tracks_perfectly(returns):
    _, b = returns
    m = tracking_metrics(b.copy(), b, np.ones(4), PPY)
    assert m.tracking_error == 0.0
    assert math.isnan(m.information_ratio)
    assert m.mean_active == 0.0
    assert m.sum_sq_active == 0.0
    assert m.r_squared == 1.0
    assert m.correlation == pytest.approx(1.0, abs=1e-15)
    assert m.beta == pytest.approx(1.0, rel=1e-14)
    assert m.max_drawdown_active == 0.0


def test_constant_active_return_has_zero_tracking_error_and_nan_ir():
    # Dyadic values, so p - b is exactly 0.125 on every row.
    b = np.array([0.5, 0.25, 0.75, 1.0, -0.5])
    p = b + 0.125
    m = tracking_metrics(p, b, np.ones(2), PPY)
    assert m.tracking_error == 0.0
    assert math.isnan(m.information_ratio)
    assert m.mean_active == 0.125 * PPY


def test_constant_benchmark_gives_nan_for_benchmark_ratios():
    b = np.full(10, 0.01)
    p = np.linspace(-0.02, 0.03, 10)
    m = tracking_metrics(p, b, np.ones(2), PPY)
    assert math.isnan(m.r_squared)
    assert math.isnan(m.correlation)
    assert math.isnan(m.beta)
    assert m.tracking_error > 0.0


def test_constant_portfolio_gives_nan_correlation_and_zero_beta():
    b = np.linspace(-0.02, 0.03, 10)
    p = np.zeros(10)
    m = tracking_metrics(p, b, np.zeros(2), PPY)
    assert math.isnan(m.correlation)
    assert m.beta == 0.0
    # r2_score(y_true=b, y_pred=0) from sklearn.metrics, as above.
    assert m.r_squared == pytest.approx(r2_score(b, p), rel=1e-12)


@pytest.mark.parametrize("n", [0, 1])
def test_fewer_than_two_rows_gives_nan_without_crashing(n):
    b = np.full(n, 0.01)
    p = np.full(n, 0.02)
    m = tracking_metrics(p, b, np.array([0.4, 0.0, 0.6]), PPY)
    assert m.periods == n
    for value in (m.tracking_error, m.information_ratio, m.r_squared, m.correlation, m.beta):
        assert math.isnan(value)
    assert m.names_held == 2
    assert m.gross_exposure == pytest.approx(1.0)
    if n == 0:
        assert math.isnan(m.mean_active)
        assert m.sum_sq_active == 0.0
        assert m.max_drawdown_active == 0.0
    else:
        assert m.mean_active == pytest.approx(0.01 * PPY)
        assert m.sum_sq_active == pytest.approx(1e-4)
        assert m.max_drawdown_active == 0.0


def test_names_held_counts_exact_nonzeros_and_gross_exposure_sums_absolutes():
    w = np.array([0.5, 0.0, -0.0, 1e-300, -0.25, 0.0])
    b = np.linspace(0.0, 0.01, 5)
    m = tracking_metrics(b, b, w, PPY)
    # -0.0 == 0, so it is not held; 1e-300 is (no display threshold).
    assert m.names_held == 3
    assert m.gross_exposure == pytest.approx(0.75, rel=1e-15)
    assert isinstance(m.names_held, int)


def test_result_is_tracking_metrics_of_plain_floats(returns):
    p, b = returns
    m = tracking_metrics(p, b, np.ones(3), PPY)
    assert isinstance(m, TrackingMetrics)
    for name in (
        "tracking_error",
        "mean_active",
        "information_ratio",
        "sum_sq_active",
        "r_squared",
        "correlation",
        "beta",
        "max_drawdown_active",
        "gross_exposure",
    ):
        assert type(getattr(m, name)) is float, name
    assert type(m.periods) is int


_ZERO3, _ONES2 = np.zeros(3), np.ones(2)


@pytest.mark.parametrize(
    ("portfolio", "bench", "weights", "ppy", "match"),
    [
        (np.zeros((3, 2)), _ZERO3, _ONES2, 12, r"'portfolio' param.* 1-d .* Got shape \(3, 2\)"),
        (_ZERO3, np.zeros((3, 1)), _ONES2, 12, r"'benchmark' param.* 1-d .* Got shape \(3, 1\)"),
        (_ZERO3, _ZERO3, np.ones((2, 2)), 12, r"'weights' param.* 1-d .* Got shape \(2, 2\)"),
        (_ZERO3, np.zeros(4), _ONES2, 12, r"same length\. Got 3 and 4\."),
        (_ZERO3, _ZERO3, _ONES2, 0, r"'periods_per_year' .* int >= 1\. Got 0\."),
        (_ZERO3, _ZERO3, _ONES2, 12.0, r"'periods_per_year' .* int >= 1\. Got 12\.0\."),
        (_ZERO3, _ZERO3, _ONES2, True, r"'periods_per_year' .* int >= 1\. Got True\."),
    ],
)
def test_invalid_arguments_are_named(portfolio, bench, weights, ppy, match):
    with pytest.raises(ValueError, match=match):
        tracking_metrics(portfolio, bench, weights, ppy)


def test_numpy_integer_periods_per_year_is_accepted(returns):
    p, b = returns
    m = tracking_metrics(p, b, np.ones(3), np.int64(PPY))
    assert m.tracking_error == pytest.approx(scipy.stats.tstd(p - b) * math.sqrt(PPY), rel=1e-12)
