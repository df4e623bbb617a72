"""Tests of row blocks shared across windows (walk-forward) and of the elastic-net factor updates."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import linalg
from sklearn.exceptions import ConvergenceWarning
from sklearn.linear_model import ElasticNet
from sklearn.model_selection import TimeSeriesSplit
from synthetic import factor_sample

from trackfit.core.cv import cross_validate, window_bounds
from trackfit.core.folds import ForwardChaining
from trackfit.core.gram import gram_from_blocks, prefix_blocks, row_blocks, standardized_gram
from trackfit.core.models import ModelSpec
from trackfit.core.scaling import fit_scaling
from trackfit.core.solvers.enet_path import _factor, _grow, _shrink, enet_path_gram

pytestmark = pytest.mark.filterwarnings("error", category=ConvergenceWarning)

LASSO = ModelSpec("lasso", "lasso", (1.0,))
ENET = ModelSpec("elastic_net", "elastic_net", (0.25, 0.75))


@pytest.mark.parametrize(("start", "stop"), [(0, 90), (30, 90), (0, 30), (60, 120), (0, 120)])
def test_prefix_blocks_equal_direct_computation(start, stop):
    s = factor_sample(51, 120, 15)
    X = s.X.copy()
    X[:60, 3] = 0.01  # constant on the first half: unusable on windows inside it
    blocks = prefix_blocks(X, s.y, [0, 30, 60, 90, 120])
    assert blocks.cumulative and blocks.xtx.shape == (5, 15, 15)
    scaling = fit_scaling(X[start:stop], s.y[start:stop])
    got = gram_from_blocks(blocks, start, stop, scaling)
    want = standardized_gram(X[start:stop], s.y[start:stop], scaling)
    np.testing.assert_array_equal(got.columns, want.columns)
    assert got.n == want.n == stop - start
    # A difference of running sums rounds like a sum over every earlier row: the tolerance
    # is a few units of 1e-16 of the whole series' statistics, not of the window's.
    np.testing.assert_allclose(got.gram, want.gram, rtol=1e-11, atol=1e-13)
    np.testing.assert_allclose(got.xty, want.xty, rtol=1e-11, atol=1e-13)
    assert got.yty == pytest.approx(want.yty, rel=1e-11)
    np.testing.assert_array_equal(got.gram, got.gram.T)


@pytest.mark.parametrize("build", [row_blocks, prefix_blocks])
@pytest.mark.parametrize(("start", "stop"), [(10, 90), (0, 100), (0, 130)])
def test_blocks_need_whole_blocks(build, start, stop):
    s = factor_sample(52, 120, 5)
    blocks = build(s.X, s.y, [0, 30, 60, 90, 120])
    with pytest.raises(ValueError, match=r"are not a run of whole blocks"):
        gram_from_blocks(blocks, start, stop, fit_scaling(s.X, s.y))


def test_window_bounds_are_every_window_and_fold_boundary():
    # n = 12, 3 folds: validation blocks of 12 // 4 = 3 rows, training ends 3, 6, 9
    # (TimeSeriesSplit(3) on 12 rows: train [0, 3), [0, 6), [0, 9)).
    got = window_bounds([(0, 12), (3, 15)], ForwardChaining(3))
    np.testing.assert_array_equal(got, [0, 3, 6, 9, 12, 15])
    splits = [tr for tr, _ in TimeSeriesSplit(3).split(np.zeros(12))]
    assert [int(tr[-1]) + 1 for tr in splits] == [3, 6, 9]
    # Rolling folds start later: first training length 3, so starts 0, 3, 6.
    got = window_bounds([(5, 17)], ForwardChaining(3, rolling=True, gap=1))
    folds = ForwardChaining(3, rolling=True, gap=1).split(12)
    want = {0, 12} | {b for f in folds for b in (f.train_start, f.train_stop)}
    np.testing.assert_array_equal(got, sorted(5 + b for b in want))


@pytest.mark.parametrize("spec", [LASSO, ENET])
@pytest.mark.parametrize("refit_scaling", [False, True])
@pytest.mark.parametrize("splitter", [ForwardChaining(4), ForwardChaining(3, gap=2, rolling=True)])
def test_shared_blocks_give_the_same_cross_validation(spec, refit_scaling, splitter):
    # Walk-forward windows of one series: CV on blocks built once equals CV on each window.
    s = factor_sample(53, 200, 14)
    window, step = 120, 20
    spans = [(e - window, e) for e in range(window, 201, step)]
    blocks = prefix_blocks(s.X, s.y, window_bounds(spans, splitter))
    for start, stop in spans:
        Xw, yw = s.X[start:stop], s.y[start:stop]
        kw = dict(count=25, refit_scaling=refit_scaling)
        shared = cross_validate(Xw, yw, spec, splitter, blocks=blocks, row_offset=start, **kw)
        alone = cross_validate(Xw, yw, spec, splitter, **kw)
        assert shared.alpha == pytest.approx(alone.alpha, rel=1e-12)
        assert shared.l1_ratio == alone.l1_ratio
        assert shared.folds == alone.folds
        for a, b in zip(shared.curves, alone.curves):
            np.testing.assert_allclose(a.alphas, b.alphas, rtol=1e-12)
            np.testing.assert_allclose(a.fold_errors, b.fold_errors, rtol=1e-9)


def test_shared_blocks_must_match_the_columns_and_boundaries():
    s = factor_sample(54, 120, 6)
    splitter = ForwardChaining(3)
    blocks = prefix_blocks(s.X[:, :5], s.y, window_bounds([(0, 120)], splitter))
    with pytest.raises(ValueError, match=r"blocks hold 5 constituents but X has 6"):
        cross_validate(s.X, s.y, LASSO, splitter, blocks=blocks)
    blocks = prefix_blocks(s.X, s.y, [0, 60, 120])
    with pytest.raises(ValueError, match=r"are not a run of whole blocks"):
        cross_validate(s.X, s.y, LASSO, splitter, blocks=blocks)


def test_factor_grow_and_shrink_equal_a_fresh_factorization():
    rng = np.random.default_rng(55)
    A = rng.standard_normal((40, 25))
    G = A.T @ A / 40
    l2 = 0.3
    active, joining = np.array([3, 7, 1, 20, 11]), np.array([0, 15, 9])
    R = _grow(G, _factor(G, active, l2), active, joining, l2)
    order = np.concatenate([active, joining])
    want = linalg.cholesky(G[np.ix_(order, order)] + l2 * np.eye(8), lower=False)
    np.testing.assert_allclose(np.triu(R), want, rtol=0, atol=1e-13)
    keep = np.array([True, True, False, True, True, False, True, True])
    shrunk = _shrink(G, R, order, keep, l2)
    kept = order[keep]
    want = linalg.cholesky(G[np.ix_(kept, kept)] + l2 * np.eye(len(kept)), lower=False)
    np.testing.assert_allclose(np.triu(shrunk), want, rtol=0, atol=1e-13)
    assert _grow(G, np.zeros((0, 0)), active[:0], joining, l2) is None  # nothing to extend


@pytest.mark.parametrize(("seed", "n", "p"), [(56, 300, 60), (57, 60, 150)])
@pytest.mark.parametrize("positive", [False, True])
def test_enet_fine_grid_path_equals_sklearn(seed, n, p, positive):
    # A fine grid: the joins predicted from the last two solutions are right most of the
    # time, and every wrong one must still end on the exact solution.
    s = factor_sample(seed, n, p, n_short=4)
    scaling = fit_scaling(s.X, s.y)
    data = standardized_gram(s.X, s.y, scaling)
    l1_ratio = 0.5
    top = float(np.max(data.xty) if positive else np.max(np.abs(data.xty))) / l1_ratio
    alphas = np.geomspace(top, 1e-3 * top, 150)
    coefs, _steps = enet_path_gram(data.gram, data.xty, alphas, l1_ratio, positive=positive)
    Xs, ys = s.X / scaling.x_scale, s.y / scaling.y_scale
    for i in (10, 60, 149):
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
