"""The holdout study: nothing after the first holdout row shapes the weights judged on it."""

from __future__ import annotations

import numpy as np
import pytest

from trackfit.core.folds import ForwardChaining
from trackfit.core.models import ModelSpec
from trackfit.evaluate.holdout import StudyDesign, run_holdout

SPECS = (
    ModelSpec("lasso", "lasso", (1.0,)),
    ModelSpec("elastic_net", "elastic_net", (0.5,)),
    ModelSpec("ridge", "ridge", (0.0,)),
)


def _data(seed=3, n=160, p=12):
    rng = np.random.default_rng(seed)
    market = 0.01 * rng.standard_normal(n)
    X = market[:, None] * rng.uniform(0.6, 1.4, p) + 0.006 * rng.standard_normal((n, p))
    w = np.zeros(p)
    w[:5] = 0.2
    y = X @ w + 0.001 * rng.standard_normal(n)
    return X, y


def _study(X, y, n_holdout=40):
    design = StudyDesign(splitter=ForwardChaining(n_folds=4), count=30)
    names = [f"c{i}" for i in range(X.shape[1])]
    return run_holdout(X, y, names, SPECS, design, n_holdout=n_holdout, periods_per_year=52)


def test_holdout_rows_never_shape_the_judged_weights():
    X, y = _data()
    base = _study(X, y)
    X2, y2 = X.copy(), y.copy()
    rng = np.random.default_rng(99)
    X2[-40:] += 0.05 * rng.standard_normal((40, X.shape[1]))
    y2[-40:] += 0.05 * rng.standard_normal(40)
    moved = _study(X2, y2)
    for a, b in zip(base.models, moved.models):
        assert a.name == b.name
        np.testing.assert_array_equal(a.train_fit.weights, b.train_fit.weights)
        if a.cv is not None:
            assert a.cv.alpha == b.cv.alpha
        # The holdout metrics and the final refit do see the holdout rows.
        assert a.holdout.tracking_error != b.holdout.tracking_error


def test_final_fit_uses_the_whole_window_with_the_chosen_penalty():
    X, y = _data()
    study = _study(X, y)
    lasso = study.models[0]
    assert lasso.final_fit.alpha == lasso.cv.alpha == lasso.train_fit.alpha
    assert not np.array_equal(lasso.final_fit.weights, lasso.train_fit.weights)
    assert [m.name for m in study.models] == [
        "lasso",
        "elastic_net",
        "ridge",
        "ols",
        "equal_weight",
    ]
    assert study.n_train == 120 and study.n_holdout == 40


def test_metrics_are_those_of_the_train_weights_on_each_part():
    X, y = _data()
    study = _study(X, y)
    for m in study.models:
        w = m.train_fit.weights
        active = X[120:] @ w - y[120:]
        assert m.holdout.periods == 40
        assert m.holdout.tracking_error == pytest.approx(
            np.std(active, ddof=1) * np.sqrt(52), rel=1e-12
        )
        assert m.in_sample.periods == 120


def test_no_holdout_means_final_equals_train():
    X, y = _data()
    study = _study(X, y, n_holdout=0)
    for m in study.models:
        assert m.holdout is None
        assert m.final_fit is m.train_fit


def test_zero_variance_constituent_is_left_out_with_a_warning():
    X, y = _data()
    X[:, 3] = 0.0
    study = _study(X, y)
    assert any("c3" in w and "zero variance" in w for w in study.warnings)
    for m in study.models[:-1]:
        assert m.final_fit.weights[3] == 0.0


def test_the_held_weights_have_their_own_in_sample_figures_on_the_whole_window():
    # The weights to hold are the refit on the whole window: their figures are measured there,
    # apart from the judged fit's (tracking_metrics on the whole window, computed here directly).
    from trackfit.evaluate.metrics import tracking_metrics

    X, y = _data()
    study = _study(X, y)
    for m in study.models:
        w = m.final_fit.weights
        direct = tracking_metrics(X @ w, y, w, 52)
        assert m.final_in_sample == direct
        assert m.final_in_sample.periods == len(y)
