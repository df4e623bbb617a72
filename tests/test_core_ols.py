"""Tests for trackfit.core.fit.fit_ols: least squares without an intercept."""

from __future__ import annotations

import numpy as np
import pytest
import statsmodels.api as sm
from synthetic import factor_sample, independent_sample

from trackfit.core.fit import equal_weights, fit_ols


@pytest.mark.parametrize(
    "sample",
    [
        pytest.param(lambda: factor_sample(31, 120, 15), id="factor"),
        pytest.param(lambda: factor_sample(32, 60, 40, noise=0.01), id="factor-near-square"),
        pytest.param(lambda: independent_sample(33, 250, 8, n_held=5, noise=0.002), id="indep"),
        pytest.param(lambda: factor_sample(34, 30, 1, n_held=1), id="one-name"),
    ],
)
def test_ols_equals_statsmodels_without_constant(sample):
    s = sample()
    fit = fit_ols(s.X, s.y)
    # statsmodels OLS(y, X) with no constant added: plain least squares through the origin.
    ref = sm.OLS(s.y, s.X).fit()
    np.testing.assert_allclose(fit.weights, ref.params, rtol=1e-10, atol=1e-13)
    assert fit.cash == 1.0 - float(fit.weights.sum())
    assert fit.alpha is None and fit.l1_ratio is None
    assert fit.kkt_residual < 1e-10
    # The normal equations hold in original units too.
    grad = s.X.T @ (s.y - s.X @ fit.weights)
    assert np.max(np.abs(grad)) <= 1e-10 * np.max(np.abs(s.X.T @ s.y))


# NIST Statistical Reference Datasets, linear regression, "NoInt1" and "NoInt2" (no-intercept
# models, certified to 15 digits). Data and certified values typed from memory.
NIST = {
    "NoInt1": dict(
        x=np.arange(60.0, 71.0),
        y=np.arange(130.0, 141.0),
        b1=2.07438016528926,
        sd_b1=0.165289256198347e-01,
        resid_sd=3.56753034006338,
        r2=0.999365492298663,
    ),
    "NoInt2": dict(
        x=np.array([4.0, 5.0, 6.0]),
        y=np.array([3.0, 4.0, 4.0]),
        b1=0.727272727272727,
        sd_b1=0.420827318078432e-01,
        resid_sd=0.369274472937998,
        r2=0.993348115299335,
    ),
}


@pytest.mark.parametrize("name", list(NIST))
def test_nist_no_intercept_certified_values(name):
    case = NIST[name]
    x, y = case["x"], case["y"]
    n = len(y)
    # The typed-in values are checked against the closed form first: b = sum(xy) / sum(x^2).
    b_closed = float(x @ y / (x @ x))
    assert b_closed == pytest.approx(case["b1"], rel=1e-12)

    fit = fit_ols(x[:, None], y)
    b1 = float(fit.weights[0])
    assert b1 == pytest.approx(case["b1"], rel=1e-12)
    assert b1 == pytest.approx(b_closed, rel=1e-13)

    # NIST's statistics for a no-intercept model, computed here from fit_ols's weight:
    # residual sd with n - 1 degrees of freedom, sd(B1) = s / sqrt(sum x^2), and the
    # uncentered R-squared 1 - RSS / sum(y^2).
    resid = y - b1 * x
    rss = float(resid @ resid)
    resid_sd = np.sqrt(rss / (n - 1))
    assert resid_sd == pytest.approx(case["resid_sd"], rel=1e-10)
    assert resid_sd / np.sqrt(x @ x) == pytest.approx(case["sd_b1"], rel=1e-10)
    assert 1.0 - rss / float(y @ y) == pytest.approx(case["r2"], rel=1e-10)

    # statsmodels OLS without a constant reports the same (its rsquared is uncentered then).
    ref = sm.OLS(y, x[:, None]).fit()
    assert ref.params[0] == pytest.approx(case["b1"], rel=1e-12)
    assert ref.bse[0] == pytest.approx(case["sd_b1"], rel=1e-10)
    assert ref.rsquared == pytest.approx(case["r2"], rel=1e-10)


def test_ols_recovers_an_exact_weighted_sum():
    s = factor_sample(35, 80, 12, n_held=5, noise=0.0)
    fit = fit_ols(s.X, s.y)
    np.testing.assert_allclose(fit.weights, s.weights, rtol=0, atol=1e-10)
    assert fit.kkt_residual < 1e-10


def test_equal_weight_baseline():
    base = equal_weights(8)
    np.testing.assert_array_equal(base.weights, np.full(8, 0.125))
    assert base.cash == 0.0 and base.alpha is None and base.scaling is None
    assert base.weights.sum() == 1.0
