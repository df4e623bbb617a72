"""Tests of the exact lasso path (least angle regression on the Gram matrix)."""

from __future__ import annotations

import numpy as np
import pytest
from sklearn.exceptions import ConvergenceWarning
from sklearn.linear_model import Lasso, lars_path_gram
from synthetic import factor_sample

from trackfit.core.gram import standardized_gram
from trackfit.core.kkt import enet_kkt_residual
from trackfit.core.scaling import fit_scaling
from trackfit.core.solvers import ExactPathSolver
from trackfit.core.solvers.lars import lasso_path_gram
from trackfit.core.solvers.threads import single_threaded

pytestmark = pytest.mark.filterwarnings("error", category=ConvergenceWarning)

SAMPLES = {
    "tall": (31, 120, 20, 0),
    "tall-short": (32, 120, 20, 2),
    "wide": (33, 40, 120, 0),
    "wide-short": (34, 40, 120, 6),
}


def _data(name):
    seed, n, p, n_short = SAMPLES[name]
    s = factor_sample(seed, n, p, n_short=n_short) if n_short else factor_sample(seed, n, p)
    return s, standardized_gram(s.X, s.y, fit_scaling(s.X, s.y))


def _grid(data, positive, count=60, ratio=1e-3):
    top = float(np.max(data.xty) if positive else np.max(np.abs(data.xty)))
    return np.geomspace(top, top * ratio, count)


@pytest.mark.parametrize("name", list(SAMPLES))
def test_path_equals_sklearn_lars_path_gram(name):
    # Unconstrained only: on these samples scikit-learn's positive=True path violates the
    # optimality conditions by up to 1e-3 (checked with enet_kkt_residual while writing this
    # test), so the positive path is checked against coordinate descent below instead.
    positive = False
    s, data = _data(name)
    alphas = _grid(data, positive)
    coefs, _steps, solved = lasso_path_gram(
        data.gram, data.xty, alphas, positive=positive, max_active=data.n
    )
    assert solved == len(alphas)
    # scikit-learn lars_path_gram(method="lasso") on the same Gram statistics (n_samples=1 so
    # that its alphas are ours), with max_iter far above the knots so that it does not stop early.
    ref_alphas, _, ref_coefs = lars_path_gram(
        data.xty,
        data.gram,
        n_samples=1,
        method="lasso",
        positive=positive,
        alpha_min=alphas[-1],
        max_iter=100_000,
    )
    ref = np.array(
        [[np.interp(-a, -ref_alphas, ref_coefs[j]) for j in range(len(data.xty))] for a in alphas]
    )
    np.testing.assert_allclose(coefs, ref, rtol=0, atol=1e-9)


@pytest.mark.parametrize("name", list(SAMPLES))
@pytest.mark.parametrize("positive", [False, True])
def test_path_equals_lasso_at_tight_tolerance(name, positive):
    s, data = _data(name)
    alphas = _grid(data, positive, count=6, ratio=1e-2)
    coefs, _steps, _ = lasso_path_gram(
        data.gram, data.xty, alphas, positive=positive, max_active=data.n
    )
    Xs = s.X / fit_scaling(s.X, s.y).x_scale
    ys = s.y / np.std(s.y)
    for alpha, coef in zip(alphas, coefs):
        # scikit-learn Lasso(fit_intercept=False, tol=1e-14) on the same scaled rows.
        ref = (
            Lasso(
                alpha=alpha, fit_intercept=False, positive=positive, tol=1e-14, max_iter=1_000_000
            )
            .fit(Xs, ys)
            .coef_
        )
        np.testing.assert_allclose(coef, ref, rtol=0, atol=1e-8)
        assert enet_kkt_residual(data, coef, alpha, 0.0, positive=positive) < 1e-12
        if positive:
            assert coef.min() >= 0.0


def test_wide_path_holds_at_most_n_names_and_reaches_the_last_penalty():
    s = factor_sample(7, 40, 120)
    data = standardized_gram(s.X, s.y, fit_scaling(s.X, s.y))
    alphas = _grid(data, False, count=100, ratio=1e-6)
    coefs, steps, solved = lasso_path_gram(data.gram, data.xty, alphas, max_active=data.n)
    assert solved == 100
    assert np.count_nonzero(coefs, axis=1).max() <= 40
    assert steps.sum() > 40  # more knots than names: some names left and came back
    assert max(enet_kkt_residual(data, w, a, 0.0) for w, a in zip(coefs, alphas)) < 1e-12


def test_penalties_at_the_top_hold_nothing_and_order_does_not_matter():
    _s, data = _data("tall")
    alphas = _grid(data, False, count=10)
    forward = ExactPathSolver().path(data, alphas, 1.0)
    backward = ExactPathSolver().path(data, alphas[::-1], 1.0)
    assert np.all(forward.coefs[0] == 0.0)
    np.testing.assert_array_equal(forward.coefs, backward.coefs[::-1])


def test_duplicate_columns_are_finished_by_the_active_set_solver():
    s = factor_sample(35, 60, 10)
    X = np.column_stack([s.X, s.X[:, 0]])  # a duplicated constituent
    data = standardized_gram(X, s.y, fit_scaling(X, s.y))
    alphas = _grid(data, False, count=30, ratio=1e-4)
    sol = ExactPathSolver().path(data, alphas, 1.0)
    assert sol.kkt_residuals.max() < 1e-10


def test_single_threaded_guard_nests_and_changes_no_result():
    _s, data = _data("wide")
    alphas = _grid(data, False, count=20)
    plain = lasso_path_gram(data.gram, data.xty, alphas, max_active=data.n)[0]
    with single_threaded(), single_threaded():
        inner = lasso_path_gram(data.gram, data.xty, alphas, max_active=data.n)[0]
    np.testing.assert_array_equal(plain, inner)


@pytest.mark.parametrize("positive", [False, True])
@pytest.mark.parametrize("shape", [(60, 150), (150, 60)])
def test_long_path_with_many_leaves_meets_its_conditions_and_matches_lars_path_gram(
    shape, positive
):
    # A long path down to 1e-5 of the top penalty, where names leave and come back many times:
    # every removal rotates the Cholesky factor, and errors there would accumulate along it.
    n, p = shape
    s = factor_sample(41 + positive, n, p)
    data = standardized_gram(s.X, s.y, fit_scaling(s.X, s.y))
    alphas = _grid(data, positive, count=200, ratio=1e-5)
    coefs, steps, solved = lasso_path_gram(
        data.gram, data.xty, alphas, positive=positive, max_active=data.n
    )
    assert solved == len(alphas)
    held = np.count_nonzero(coefs, axis=1)
    # Every knot is a join or a leave, and a name that left had joined first: knots minus the
    # names held at the end is twice the leaves (about 6 to 30 on these samples).
    assert steps.sum() - held[-1] > 10
    assert (
        max(enet_kkt_residual(data, w, a, 0.0, positive=positive) for w, a in zip(coefs, alphas))
        < 1e-11
    )
    if positive:
        assert coefs.min() >= 0.0
        return  # scikit-learn's positive path is not exact here (see the first test)
    # scikit-learn lars_path_gram(method="lasso"), max_iter far above the knots.
    ref_alphas, _, ref_coefs = lars_path_gram(
        data.xty,
        data.gram,
        n_samples=1,
        method="lasso",
        alpha_min=alphas[-1],
        max_iter=100_000,
    )
    ref = np.array([[np.interp(-a, -ref_alphas, ref_coefs[j]) for j in range(p)] for a in alphas])
    np.testing.assert_allclose(coefs, ref, rtol=0, atol=1e-8)


def test_same_bytes_on_every_run():
    _s, data = _data("wide-short")
    alphas = _grid(data, False, count=50)
    first = lasso_path_gram(data.gram, data.xty, alphas, max_active=data.n)
    again = lasso_path_gram(data.gram, data.xty, alphas, max_active=data.n)
    assert first[0].tobytes() == again[0].tobytes()
    np.testing.assert_array_equal(first[1], again[1])
