"""Tests of block sufficient statistics and the elastic-net grid path."""

from __future__ import annotations

import numpy as np
import pytest
from sklearn.exceptions import ConvergenceWarning
from sklearn.linear_model import ElasticNet
from synthetic import factor_sample

from trackfit.core.cv import cross_validate
from trackfit.core.folds import ForwardChaining
from trackfit.core.gram import gram_from_blocks, row_blocks, standardized_gram
from trackfit.core.models import ModelSpec
from trackfit.core.scaling import fit_scaling
from trackfit.core.solvers import ExactPathSolver
from trackfit.core.solvers.enet_path import enet_path_gram

pytestmark = pytest.mark.filterwarnings("error", category=ConvergenceWarning)


@pytest.mark.parametrize(("start", "stop"), [(0, 90), (30, 90), (0, 30), (60, 120), (0, 120)])
def test_block_statistics_equal_direct_computation(start, stop):
    s = factor_sample(41, 120, 15)
    X = s.X.copy()
    X[:60, 3] = 0.01  # constant on the first half: unusable on windows inside it
    blocks = row_blocks(X, s.y, [0, 30, 60, 90, 120])
    scaling = fit_scaling(X[start:stop], s.y[start:stop])
    got = gram_from_blocks(blocks, start, stop, scaling)
    want = standardized_gram(X[start:stop], s.y[start:stop], scaling)
    np.testing.assert_array_equal(got.columns, want.columns)
    assert got.n == want.n == stop - start
    np.testing.assert_allclose(got.gram, want.gram, rtol=1e-12, atol=1e-14)
    np.testing.assert_allclose(got.xty, want.xty, rtol=1e-12, atol=1e-14)
    assert got.yty == pytest.approx(want.yty, rel=1e-12)
    np.testing.assert_array_equal(got.gram, got.gram.T)


@pytest.mark.parametrize(("start", "stop"), [(10, 90), (0, 100)])
def test_block_statistics_need_whole_blocks(start, stop):
    s = factor_sample(42, 120, 5)
    blocks = row_blocks(s.X, s.y, [0, 30, 60, 90, 120])
    with pytest.raises(ValueError, match=r"are not a run of whole blocks"):
        gram_from_blocks(blocks, start, stop, fit_scaling(s.X, s.y))


@pytest.mark.parametrize("splitter", [ForwardChaining(4, gap=3), ForwardChaining(4, rolling=True)])
def test_cross_validation_on_blocks_equals_direct_fold_fits(splitter):
    # The same folds fitted from standardized_gram on each fold's rows: the chosen penalty
    # and the fold errors agree (block sums only reorder the rounding).
    s = factor_sample(43, 150, 12)
    spec = ModelSpec("lasso", "lasso", (1.0,))
    res = cross_validate(s.X, s.y, spec, splitter, count=20)
    alphas = res.curves[0].alphas
    for f, fold in enumerate(res.folds):
        Xt, yt = s.X[fold.train_start : fold.train_stop], s.y[fold.train_start : fold.train_stop]
        scaling = fit_scaling(Xt, yt)
        data = standardized_gram(Xt, yt, scaling)
        coefs = ExactPathSolver().path(data, alphas, 1.0).coefs
        w = coefs * (scaling.y_scale / scaling.x_scale[data.columns])
        Xv, yv = s.X[fold.val_start : fold.val_stop], s.y[fold.val_start : fold.val_stop]
        err = np.mean((Xv[:, data.columns] @ w.T - yv[:, None]) ** 2, axis=0)
        np.testing.assert_allclose(res.curves[0].fold_errors[:, f], err, rtol=1e-9)


@pytest.mark.parametrize(
    ("seed", "n", "p", "n_short"), [(44, 120, 20, 0), (45, 40, 120, 0), (46, 40, 120, 6)]
)
@pytest.mark.parametrize("l1_ratio", [0.25, 0.75])
@pytest.mark.parametrize("positive", [False, True])
def test_enet_grid_path_equals_sklearn(seed, n, p, n_short, l1_ratio, positive):
    s = factor_sample(seed, n, p, n_short=n_short)
    scaling = fit_scaling(s.X, s.y)
    data = standardized_gram(s.X, s.y, scaling)
    top = float(np.max(data.xty) if positive else np.max(np.abs(data.xty))) / l1_ratio
    alphas = np.geomspace(top, 1e-3 * top, 40)
    coefs, _steps = enet_path_gram(data.gram, data.xty, alphas, l1_ratio, positive=positive)
    Xs, ys = s.X / scaling.x_scale, s.y / scaling.y_scale
    for i in (5, 20, 39):
        # scikit-learn ElasticNet(fit_intercept=False, tol=1e-14) on the same scaled rows.
        ref = (
            ElasticNet(
                alpha=alphas[i],
                l1_ratio=l1_ratio,
                fit_intercept=False,
                positive=positive,
                tol=1e-14,
                max_iter=1_000_000,
            )
            .fit(Xs, ys)
            .coef_
        )
        np.testing.assert_allclose(coefs[i], ref, rtol=0, atol=1e-8)
