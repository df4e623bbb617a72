"""Tests of the exact solvers at fixed penalties: fit_penalized and ExactPathSolver.

The reference is scikit-learn's coordinate descent (Lasso, ElasticNet) and its direct Ridge on
the same uncentered scaled data, run to a tolerance far below the comparison.
"""

from __future__ import annotations

import numpy as np
import pytest
from sklearn.exceptions import ConvergenceWarning
from sklearn.linear_model import ElasticNet, Lasso, Ridge
from sklearn.preprocessing import StandardScaler
from synthetic import Sample, factor_sample

from trackfit.core.fit import fit_penalized
from trackfit.core.gram import standardized_gram
from trackfit.core.grid import penalty_grid
from trackfit.core.scaling import fit_scaling
from trackfit.core.solvers import ExactPathSolver, default_solver

# A ConvergenceWarning would mean the reference itself is not accurate: make it an error.
pytestmark = pytest.mark.filterwarnings("error", category=ConvergenceWarning)

SAMPLES = {
    # correlated factor-model returns, n > p
    "factor": lambda: factor_sample(21, 120, 20),
    # some true weights negative, so the long-only constraint binds
    "factor-short": lambda: factor_sample(22, 120, 20, n_short=3),
    # more constituents than periods
    "wide": lambda: factor_sample(23, 40, 120),
    "wide-short": lambda: factor_sample(24, 40, 120, n_held=12, n_short=4),
}


def _scaled(s: Sample) -> tuple[np.ndarray, np.ndarray]:
    # scikit-learn StandardScaler(with_mean=False): the uncentered scaling trackfit documents.
    Xs = StandardScaler(with_mean=False).fit_transform(s.X)
    ys = StandardScaler(with_mean=False).fit_transform(s.y[:, None])[:, 0]
    return Xs, ys


def _alpha_max(Xs: np.ndarray, ys: np.ndarray, l1_ratio: float) -> float:
    # scikit-learn's LassoCV grid top without intercept: max|X'y| / (n * l1_ratio).
    return float(np.max(np.abs(Xs.T @ ys))) / (len(ys) * l1_ratio)


def _reference(Xs, ys, alpha, l1_ratio, positive):
    """scikit-learn's solution of the same standardized problem."""
    n = len(ys)
    if l1_ratio == 0.0:
        # sklearn Ridge minimizes |y - Xw|^2 + a|w|^2, so a = n * alpha matches 1/(2n) scaling.
        return Ridge(alpha=n * alpha, fit_intercept=False).fit(Xs, ys).coef_
    if l1_ratio == 1.0:
        model = Lasso(
            alpha=alpha, positive=positive, fit_intercept=False, tol=1e-14, max_iter=1_000_000
        )
    else:
        model = ElasticNet(
            alpha=alpha,
            l1_ratio=l1_ratio,
            positive=positive,
            fit_intercept=False,
            tol=1e-14,
            max_iter=1_000_000,
        )
    return model.fit(Xs, ys).coef_


def _kkt(Xs, ys, coef, alpha, l1_ratio, positive) -> float:
    """Largest violation of the elastic-net optimality conditions, from the rows themselves."""
    n = len(ys)
    l1, l2 = alpha * l1_ratio, alpha * (1.0 - l1_ratio)
    r = Xs.T @ (ys - Xs @ coef) / n - l2 * coef
    on = coef != 0
    viol = np.where(on, np.abs(r - l1 * np.sign(coef)), 0.0)
    slack = r - l1 if positive else np.abs(r) - l1
    viol = np.where(on, viol, np.maximum(slack, 0.0))
    if positive:
        viol = np.maximum(viol, np.maximum(-coef, 0.0))
    return float(viol.max() / (np.max(np.abs(Xs.T @ ys)) / n))


CASES = [
    (name, l1_ratio, positive, frac)
    for name in SAMPLES
    for l1_ratio in (1.0, 0.5, 0.9)
    for positive in ((False, True) if name.endswith("short") else (False,))
    for frac in (0.3, 0.1, 0.03)
]


@pytest.mark.parametrize(("name", "l1_ratio", "positive", "frac"), CASES)
def test_lasso_and_elastic_net_equal_sklearn(name, l1_ratio, positive, frac):
    s = SAMPLES[name]()
    Xs, ys = _scaled(s)
    alpha = frac * _alpha_max(Xs, ys, l1_ratio)
    fit = fit_penalized(s.X, s.y, alpha, l1_ratio, positive=positive)
    ref = _reference(Xs, ys, alpha, l1_ratio, positive)
    # Lasso / ElasticNet(fit_intercept=False, tol=1e-14), scikit-learn coordinate descent.
    np.testing.assert_allclose(fit.coef_std, ref, rtol=0, atol=1e-8)
    assert fit.kkt_residual < 1e-10
    assert _kkt(Xs, ys, fit.coef_std, alpha, l1_ratio, positive) < 1e-10
    assert fit.alpha == alpha and fit.l1_ratio == l1_ratio
    if positive:
        assert fit.coef_std.min() >= 0.0


@pytest.mark.parametrize("name", list(SAMPLES))
@pytest.mark.parametrize("alpha", [3.0, 0.3, 0.03, 0.003])
def test_ridge_equals_sklearn(name, alpha):
    s = SAMPLES[name]()
    Xs, ys = _scaled(s)
    fit = fit_penalized(s.X, s.y, alpha, 0.0)
    # sklearn Ridge(alpha = n * alpha, fit_intercept=False): a direct solve, exact to rounding.
    ref = _reference(Xs, ys, alpha, 0.0, False)
    np.testing.assert_allclose(fit.coef_std, ref, rtol=0, atol=1e-10)
    assert fit.kkt_residual < 1e-10
    assert _kkt(Xs, ys, fit.coef_std, alpha, 0.0, False) < 1e-10
    assert np.count_nonzero(fit.coef_std) == s.X.shape[1]


@pytest.mark.parametrize("name", ["factor-short", "wide-short"])
@pytest.mark.parametrize("l1_ratio", [1.0, 0.5])
def test_long_only_constraint_binds(name, l1_ratio):
    s = SAMPLES[name]()
    Xs, ys = _scaled(s)
    alpha = 0.03 * _alpha_max(Xs, ys, l1_ratio)
    free = fit_penalized(s.X, s.y, alpha, l1_ratio)
    long = fit_penalized(s.X, s.y, alpha, l1_ratio, positive=True)
    assert free.weights.min() < 0.0  # the data need a short position ...
    assert long.weights.min() == 0.0  # ... which the long-only fit sets to exactly 0
    assert not np.signbit(long.weights).any()
    # scikit-learn Lasso / ElasticNet(positive=True) on the same scaled data.
    np.testing.assert_allclose(
        long.coef_std, _reference(Xs, ys, alpha, l1_ratio, True), rtol=0, atol=1e-8
    )


@pytest.mark.parametrize("name", list(SAMPLES))
@pytest.mark.parametrize(
    ("l1_ratio", "positive"), [(1.0, False), (0.5, False), (1.0, True), (0.0, False)]
)
def test_exact_path_solver_equals_sklearn_along_a_path(name, l1_ratio, positive):
    s = SAMPLES[name]()
    Xs, ys = _scaled(s)
    data = standardized_gram(s.X, s.y, fit_scaling(s.X, s.y))
    if l1_ratio > 0:
        top = penalty_grid(data, l1_ratio, 2, 1.0, positive=positive)[0]
        alphas = np.geomspace(top, 0.03 * top, 8)
    else:
        alphas = np.geomspace(10.0, 0.01, 8)
    sol = ExactPathSolver().path(data, alphas, l1_ratio, positive=positive)
    assert sol.coefs.shape == (8, s.X.shape[1])
    assert sol.kkt_residuals.shape == (8,) and sol.iterations.shape == (8,)
    assert sol.kkt_residuals.max() < 1e-10
    for coef, alpha in zip(sol.coefs, alphas):
        # scikit-learn Lasso / ElasticNet / Ridge at each penalty of the path.
        ref = _reference(Xs, ys, alpha, l1_ratio, positive)
        np.testing.assert_allclose(coef, ref, rtol=0, atol=1e-8)
    if l1_ratio > 0:
        # At the top of the grid no weight enters: exactly zero, as in LassoCV's first alpha.
        assert np.all(sol.coefs[0] == 0.0)


def test_default_solver_is_the_exact_solver():
    assert isinstance(default_solver(), ExactPathSolver)


@pytest.mark.parametrize("name", list(SAMPLES))
@pytest.mark.parametrize(("alpha", "l1_ratio"), [(0.01, 1.0), (0.01, 0.5), (0.1, 0.0)])
def test_back_transform_to_original_units(name, alpha, l1_ratio):
    s = SAMPLES[name]()
    fit = fit_penalized(s.X, s.y, alpha, l1_ratio)
    # scikit-learn StandardScaler(with_mean=False).scale_ for both sides of w = b * sy / sx.
    x_scale = StandardScaler(with_mean=False).fit(s.X).scale_
    y_scale = float(np.std(s.y))
    np.testing.assert_allclose(fit.weights, fit.coef_std * y_scale / x_scale, rtol=1e-12, atol=0)
    assert fit.cash == 1.0 - float(fit.weights.sum())
    assert np.array_equal(fit.weights == 0, fit.coef_std == 0)
    # The original-unit weights fit the original rows as the standardized ones fit scaled rows.
    Xs, ys = _scaled(s)
    np.testing.assert_allclose(s.X @ fit.weights, (Xs @ fit.coef_std) * y_scale, rtol=1e-10)


@pytest.mark.parametrize(("l1_ratio", "positive"), [(1.0, False), (0.5, False), (1.0, True)])
def test_penalty_at_or_above_alpha_max_holds_nothing(l1_ratio, positive):
    s = SAMPLES["factor"]()
    Xs, ys = _scaled(s)
    top = _alpha_max(Xs, ys, l1_ratio)
    for alpha in (top * (1 + 1e-9), 2 * top):
        fit = fit_penalized(s.X, s.y, alpha, l1_ratio, positive=positive)
        assert fit.weights.tolist() == [0.0] * 20
        assert fit.cash == 1.0
    just_below = fit_penalized(s.X, s.y, top * 0.999, l1_ratio, positive=positive)
    assert np.count_nonzero(just_below.weights) == 1


# --- Known bug: the active set can outgrow the number of rows when p > n --------------------
#
# A lasso solution on data in general position holds at most n names (Tibshirani, "The lasso
# problem and uniqueness", Electron. J. Statist. 2013; from memory). With more names than rows
# the restricted Gram matrix can become singular; the solver must then step along its null
# space instead of trusting a Cholesky factor of a singular matrix.


@pytest.mark.parametrize(("seed", "frac"), [(4, 0.003), (10, 0.001), (19, 0.001)])
def test_lasso_with_more_names_than_rows_at_small_penalty(seed, frac):
    s = factor_sample(seed, 20, 30)
    Xs, ys = _scaled(s)
    alpha = frac * _alpha_max(Xs, ys, 1.0)
    ref = _reference(Xs, ys, alpha, 1.0, False)  # converges (no ConvergenceWarning)
    assert np.count_nonzero(ref) <= 20
    fit = fit_penalized(s.X, s.y, alpha, 1.0)
    np.testing.assert_allclose(fit.coef_std, ref, rtol=0, atol=1e-8)
    assert np.count_nonzero(fit.coef_std) <= 20


@pytest.mark.parametrize("seed", [7])
def test_lasso_path_with_more_names_than_rows_stays_exact(seed):
    s = factor_sample(seed, 40, 120)
    data = standardized_gram(s.X, s.y, fit_scaling(s.X, s.y))
    alphas = penalty_grid(data, 1.0, 100, 1e-3)  # the default grid of cross_validate
    sol = ExactPathSolver().path(data, alphas, 1.0)
    assert np.count_nonzero(sol.coefs, axis=1).max() <= 40
    assert sol.kkt_residuals.max() < 1e-10
