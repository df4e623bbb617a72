"""Tests for trackfit.core.cv.cross_validate: penalty choice by time-ordered cross-validation."""

from __future__ import annotations

import numpy as np
import pytest
from sklearn.compose import TransformedTargetRegressor
from sklearn.exceptions import ConvergenceWarning
from sklearn.linear_model import ElasticNetCV, Lasso, LassoCV
from sklearn.model_selection import GridSearchCV, TimeSeriesSplit
from sklearn.pipeline import Pipeline
from sklearn.preprocessing import StandardScaler
from synthetic import factor_sample

from trackfit.core.cv import cross_validate
from trackfit.core.fit import fit_penalized
from trackfit.core.folds import ForwardChaining
from trackfit.core.gram import standardized_gram
from trackfit.core.grid import penalty_grid
from trackfit.core.models import ModelSpec
from trackfit.core.scaling import fit_scaling

pytestmark = pytest.mark.filterwarnings("error", category=ConvergenceWarning)

LASSO = ModelSpec("lasso", "lasso", (1.0,))
L1_RATIOS = (0.2, 0.5, 0.8)
ENET = ModelSpec("elastic_net", "elastic_net", L1_RATIOS)
RIDGE = ModelSpec("ridge", "ridge", (0.0,))
SEEDS = [0, 1, 2, 3]


def _prescaled(X, y):
    # scikit-learn StandardScaler(with_mean=False) on all rows: what refit_scaling=False uses.
    Xs = StandardScaler(with_mean=False).fit_transform(X)
    y_scale = float(StandardScaler(with_mean=False).fit(y[:, None]).scale_[0])
    return Xs, y / y_scale, y_scale


def _assert_clear_minimum(mean_error: np.ndarray) -> None:
    """The best penalty beats the runner-up by far more than the reference's tolerance."""
    best, second = np.sort(mean_error)[:2]
    assert (second - best) / best > 1e-7


@pytest.mark.parametrize("seed", SEEDS)
def test_lasso_choice_equals_lassocv_on_prescaled_data(seed):
    s = factor_sample(seed, 120, 15, noise=0.01)
    res = cross_validate(s.X, s.y, LASSO, ForwardChaining(5), count=30, refit_scaling=False)
    curve = res.curves[0]
    assert len(curve.alphas) == 30 and res.notes == ()
    _assert_clear_minimum(curve.mean_error)
    Xs, ys, y_scale = _prescaled(s.X, s.y)
    # scikit-learn LassoCV(alphas=our grid, cv=TimeSeriesSplit(5), fit_intercept=False).
    ref = LassoCV(
        alphas=curve.alphas,
        cv=TimeSeriesSplit(5),
        fit_intercept=False,
        tol=1e-10,
        max_iter=100_000,
    ).fit(Xs, ys)
    np.testing.assert_array_equal(ref.alphas_, curve.alphas)
    assert res.alpha == ref.alpha_ and res.l1_ratio == 1.0
    # mse_path_ is in scaled units: ours / y_scale**2.
    mean_ref = ref.mse_path_.mean(axis=1)
    np.testing.assert_allclose(curve.mean_error / y_scale**2, mean_ref, rtol=1e-6)
    np.testing.assert_allclose(curve.fold_errors / y_scale**2, ref.mse_path_, rtol=1e-6)


@pytest.mark.parametrize("seed", SEEDS)
def test_elastic_net_choice_equals_elasticnetcv_on_prescaled_data(seed):
    s = factor_sample(seed, 120, 15, noise=0.01)
    res = cross_validate(s.X, s.y, ENET, ForwardChaining(5), count=20, refit_scaling=False)
    _assert_clear_minimum(np.concatenate([c.mean_error for c in res.curves]))
    Xs, ys, y_scale = _prescaled(s.X, s.y)
    # scikit-learn ElasticNetCV builds one grid per l1_ratio: max|X'y| / (n l1_ratio) down to
    # eps times that, log-spaced (sklearn/linear_model/_coordinate_descent.py, _alpha_grid).
    ref = ElasticNetCV(
        l1_ratio=list(L1_RATIOS),
        alphas=20,
        eps=1e-3,
        cv=TimeSeriesSplit(5),
        fit_intercept=False,
        tol=1e-10,
        max_iter=100_000,
    ).fit(Xs, ys)
    for i, curve in enumerate(res.curves):
        assert curve.l1_ratio == L1_RATIOS[i]
        np.testing.assert_allclose(curve.alphas, ref.alphas_[i], rtol=1e-13)
        np.testing.assert_allclose(
            curve.mean_error / y_scale**2, ref.mse_path_[i].mean(axis=1), rtol=1e-6
        )
    assert res.l1_ratio == ref.l1_ratio_
    assert res.alpha == pytest.approx(ref.alpha_, rel=1e-13)


def test_lasso_grid_equals_lassocv_grid():
    s = factor_sample(5, 90, 12)
    Xs, ys, _ = _prescaled(s.X, s.y)
    data = standardized_gram(s.X, s.y, fit_scaling(s.X, s.y))
    # scikit-learn LassoCV(alphas=25, eps=1e-2) builds its own grid from all rows.
    ref = LassoCV(alphas=25, eps=1e-2, cv=TimeSeriesSplit(3), fit_intercept=False).fit(Xs, ys)
    np.testing.assert_allclose(penalty_grid(data, 1.0, 25, 1e-2), ref.alphas_, rtol=1e-13)


def _grid_search(X, y, alphas):
    # scikit-learn: scaling refitted inside every fold by the Pipeline, y scaled the same way by
    # TransformedTargetRegressor, errors scored in original units.
    pipe = Pipeline(
        [
            ("scale", StandardScaler(with_mean=False)),
            (
                "model",
                TransformedTargetRegressor(
                    regressor=Lasso(fit_intercept=False, tol=1e-12, max_iter=100_000),
                    transformer=StandardScaler(with_mean=False),
                ),
            ),
        ]
    )
    search = GridSearchCV(
        pipe,
        {"model__regressor__alpha": list(alphas)},
        scoring="neg_mean_squared_error",
        cv=TimeSeriesSplit(5),
        refit=False,
    )
    return search.fit(X, y)


@pytest.mark.parametrize("seed", [0, 1])
def test_refit_scaling_choice_equals_grid_search_over_scaled_pipeline(seed):
    s = factor_sample(seed, 120, 15, noise=0.01)
    res = cross_validate(s.X, s.y, LASSO, ForwardChaining(5), count=20)
    curve = res.curves[0]
    _assert_clear_minimum(curve.mean_error)
    ref = _grid_search(s.X, s.y, curve.alphas)
    np.testing.assert_allclose(curve.mean_error, -ref.cv_results_["mean_test_score"], rtol=1e-8)
    assert res.alpha == ref.best_params_["model__regressor__alpha"]
    # Refitting the scaling per fold is a different estimate from scaling once on all rows.
    once = cross_validate(s.X, s.y, LASSO, ForwardChaining(5), count=20, refit_scaling=False)
    assert not np.allclose(once.curves[0].mean_error, curve.mean_error, rtol=1e-6)


def test_fold_errors_are_validation_mse_of_active_returns_in_original_units():
    s = factor_sample(6, 100, 10, noise=0.01)
    splitter = ForwardChaining(4, gap=2)
    res = cross_validate(s.X, s.y, ENET, splitter, count=12)
    assert res.folds == splitter.split(100)
    curve = res.curves[1]
    for f, fold in enumerate(res.folds):
        rows = slice(fold.train_start, fold.train_stop)
        val = slice(fold.val_start, fold.val_stop)
        for i in (0, 5, 11):
            w = fit_penalized(s.X[rows], s.y[rows], curve.alphas[i], curve.l1_ratio).weights
            active = s.X[val] @ w - s.y[val]
            assert curve.fold_errors[i, f] == pytest.approx(np.mean(active**2), rel=1e-10)
    np.testing.assert_allclose(curve.mean_error, curve.fold_errors.mean(axis=1), rtol=1e-15)
    # standard error of the mean over folds: sd (ddof=1) / sqrt(folds), common practice.
    se = curve.fold_errors.std(axis=1, ddof=1) / np.sqrt(4)
    np.testing.assert_allclose(curve.std_error, se, rtol=1e-12)


@pytest.mark.parametrize("seed", [0, 1, 2, 3])
@pytest.mark.parametrize("spec", [LASSO, ENET], ids=["lasso", "elastic_net"])
def test_one_standard_error_rule_by_hand(spec, seed):
    s = factor_sample(seed, 120, 15, noise=0.01)
    best = cross_validate(s.X, s.y, spec, ForwardChaining(5), count=30)
    res = cross_validate(s.X, s.y, spec, ForwardChaining(5), count=30, rule="one_standard_error")
    assert res.rule == "one_standard_error" and best.rule == "min_error"
    # min_error: the smallest mean CV error over every curve.
    ci = int(np.argmin([c.mean_error.min() for c in res.curves]))
    curve = res.curves[ci]
    ai = int(np.argmin(curve.mean_error))
    assert (best.alpha, best.l1_ratio) == (curve.alphas[ai], curve.l1_ratio)
    assert (res.best_alpha, res.best_l1_ratio) == (best.alpha, best.l1_ratio)
    # one-standard-error rule (Hastie, Tibshirani and Friedman, The Elements of Statistical
    # Learning, 2nd ed., sec. 7.10; from memory): the largest penalty of the best mix whose mean
    # error is within one standard error of the minimum.
    limit = curve.mean_error[ai] + curve.std_error[ai]
    within = [a for a, m in zip(curve.alphas, curve.mean_error) if m <= limit]
    assert res.alpha == max(within) and res.l1_ratio == curve.l1_ratio
    assert res.alpha >= res.best_alpha


def test_one_standard_error_rule_picks_a_larger_penalty_on_noisy_data():
    s = factor_sample(2, 120, 15, noise=0.01)
    res = cross_validate(s.X, s.y, LASSO, ForwardChaining(5), count=30, rule="one_standard_error")
    assert res.alpha > res.best_alpha  # the rule is exercised, not a no-op on this sample


def test_grid_extends_below_when_the_least_penalized_fit_is_best():
    # A benchmark that is an exact weighted sum plus tiny noise, many more rows than names:
    # the smaller the penalty, the better, so the minimum sits on the grid's lower edge.
    s = factor_sample(7, 240, 6, n_held=4, noise=1e-7)
    data = standardized_gram(s.X, s.y, fit_scaling(s.X, s.y))
    base = penalty_grid(data, 1.0, 20, 1e-3)
    res = cross_validate(s.X, s.y, LASSO, ForwardChaining(5), count=20)
    alphas = res.curves[0].alphas
    assert len(alphas) > 20
    np.testing.assert_array_equal(alphas[:20], base)
    steps = np.diff(np.log10(alphas))
    np.testing.assert_allclose(steps, steps[0], rtol=1e-9)  # same log spacing past the edge
    assert alphas[-1] < base[-1] / 10
    assert res.notes and all("on the edge of the grid" in n for n in res.notes)
    assert res.notes[0].startswith(
        "lasso (l1_ratio=1): the smallest CV error was on the edge of the grid; "
        "extended the grid below to "
    )
    assert res.alpha < base[-1]


def test_grid_edge_note_when_extensions_are_not_allowed():
    s = factor_sample(7, 240, 6, n_held=4, noise=1e-7)
    res = cross_validate(s.X, s.y, LASSO, ForwardChaining(5), count=20, max_extensions=0)
    assert len(res.curves[0].alphas) == 20
    assert res.notes == (
        f"lasso (l1_ratio=1): the smallest CV error is still on the edge of the grid "
        f"(alpha={res.curves[0].alphas[-1]:.4g}) after 0 extensions",
    )


def test_ridge_grid_extends_above_when_the_most_penalized_fit_is_best():
    # Pure noise benchmark: nothing helps, so the heaviest ridge penalty wins.
    rng = np.random.default_rng(8)
    X = rng.normal(0.0, 0.05, (120, 10))
    y = rng.normal(0.0, 0.05, 120)
    res = cross_validate(X, y, RIDGE, ForwardChaining(5), count=15)
    data = standardized_gram(X, y, fit_scaling(X, y))
    base = penalty_grid(data, 0.0, 15, 1e-3)
    alphas = res.curves[0].alphas
    assert len(alphas) > 15 and alphas[0] > base[0]
    np.testing.assert_array_equal(alphas[-15:], base)
    assert any("extended the grid above" in n for n in res.notes)


@pytest.mark.parametrize("seed", [0, 1, 2, 3, 4])
@pytest.mark.parametrize(
    ("spec", "rule"),
    [
        (LASSO, "min_error"),
        (LASSO, "one_standard_error"),
        (ENET, "min_error"),
        (RIDGE, "min_error"),
    ],
    ids=["lasso-min", "lasso-1se", "enet-min", "ridge-min"],
)
def test_choice_is_stable_under_rounding_size_perturbation(spec, rule, seed):
    s = factor_sample(seed, 120, 15, noise=0.01)
    rng = np.random.default_rng(1000 + seed)
    X2 = s.X * (1.0 + 1e-12 * rng.standard_normal(s.X.shape))
    y2 = s.y * (1.0 + 1e-12 * rng.standard_normal(s.y.shape))
    a = cross_validate(s.X, s.y, spec, ForwardChaining(5), rule=rule)
    b = cross_validate(X2, y2, spec, ForwardChaining(5), rule=rule)
    assert b.l1_ratio == a.l1_ratio
    assert b.alpha == pytest.approx(a.alpha, rel=1e-9)
    # The same grid point, not merely a close penalty (the grids move by ~1e-12 themselves).
    ca = next(c for c in a.curves if c.l1_ratio == a.l1_ratio)
    cb = next(c for c in b.curves if c.l1_ratio == b.l1_ratio)
    assert len(cb.alphas) == len(ca.alphas)
    at_a, at_b = np.flatnonzero(ca.alphas == a.alpha), np.flatnonzero(cb.alphas == b.alpha)
    assert len(at_a) == 1 and at_b.tolist() == at_a.tolist()
    for c1, c2 in zip(a.curves, b.curves):
        np.testing.assert_allclose(c2.mean_error, c1.mean_error, rtol=1e-8)


def test_cross_validate_when_early_folds_have_fewer_rows_than_names():
    # 60 periods and 30 names is an ordinary window, but 5 expanding folds train on 10..50 rows.
    s = factor_sample(19, 60, 30)
    res = cross_validate(s.X, s.y, LASSO, ForwardChaining(5))
    assert res.alpha in res.curves[0].alphas
    assert np.isfinite(res.curves[0].mean_error).all()


@pytest.mark.parametrize("positive", [False, True])
@pytest.mark.parametrize("seed", [21, 22])
def test_choice_equals_lassocv_when_folds_have_fewer_rows_than_names(seed, positive):
    # 5 expanding folds of 60 periods train on 10, 20, 30, 40 and 50 rows of 40 names: p > n in
    # the first four; the exact path holds at most as many names as rows there.
    s = factor_sample(seed, 60, 40, noise=0.01)
    res = cross_validate(
        s.X, s.y, LASSO, ForwardChaining(5), count=30, refit_scaling=False, positive=positive
    )
    curve = res.curves[0]
    _assert_clear_minimum(curve.mean_error)
    Xs, ys, y_scale = _prescaled(s.X, s.y)
    # scikit-learn LassoCV(alphas=our grid, cv=TimeSeriesSplit(5), positive=...) at a tight
    # tolerance, on the same scaled rows.
    ref = LassoCV(
        alphas=curve.alphas,
        cv=TimeSeriesSplit(5),
        fit_intercept=False,
        positive=positive,
        tol=1e-12,
        max_iter=1_000_000,
    ).fit(Xs, ys)
    np.testing.assert_array_equal(ref.alphas_, curve.alphas)
    assert res.alpha == ref.alpha_
    np.testing.assert_allclose(curve.fold_errors / y_scale**2, ref.mse_path_, rtol=1e-6)


def test_unknown_rule_is_refused():
    s = factor_sample(0, 60, 5)
    match = r"rule must be one of \('min_error', 'one_standard_error'\); got 'smallest'"
    with pytest.raises(ValueError, match=match):
        cross_validate(s.X, s.y, LASSO, ForwardChaining(5), rule="smallest")
