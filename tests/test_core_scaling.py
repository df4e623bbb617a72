"""Tests for trackfit.core.scaling: uncentered ddof=0 scales, unusable columns, flat benchmarks."""

from __future__ import annotations

import numpy as np
import pytest
from sklearn.preprocessing import StandardScaler
from synthetic import factor_sample

from trackfit.core.cv import cross_validate
from trackfit.core.fit import fit_ols, fit_penalized
from trackfit.core.folds import ForwardChaining
from trackfit.core.gram import standardized_gram
from trackfit.core.models import ModelSpec
from trackfit.core.results import Scaling
from trackfit.core.scaling import fit_scaling, to_original_units
from trackfit.errors import SolverError

SHAPES = [(120, 15), (60, 4), (40, 120), (7, 3)]


@pytest.mark.parametrize(("n", "p"), SHAPES)
def test_scales_equal_standard_scaler_without_mean(n, p):
    s = factor_sample(11, n, p)
    scaling = fit_scaling(s.X, s.y)
    # scikit-learn StandardScaler(with_mean=False): scale_ is the ddof=0 standard deviation.
    x_ref = StandardScaler(with_mean=False).fit(s.X).scale_
    y_ref = StandardScaler(with_mean=False).fit(s.y[:, None]).scale_[0]
    np.testing.assert_allclose(scaling.x_scale, x_ref, rtol=1e-12, atol=0)
    assert scaling.y_scale == pytest.approx(y_ref, rel=1e-12)
    assert scaling.usable.dtype == bool and scaling.usable.all()


def test_standardized_statistics_are_uncentered():
    s = factor_sample(12, 90, 8)
    scaling = fit_scaling(s.X, s.y)
    data = standardized_gram(s.X, s.y, scaling)
    # scikit-learn StandardScaler(with_mean=False).transform divides by scale_ and never centers.
    Xs = StandardScaler(with_mean=False).fit_transform(s.X)
    ys = StandardScaler(with_mean=False).fit_transform(s.y[:, None])[:, 0]
    n = len(s.y)
    np.testing.assert_allclose(data.gram, Xs.T @ Xs / n, rtol=1e-12, atol=0)
    np.testing.assert_allclose(data.xty, Xs.T @ ys / n, rtol=1e-12, atol=0)
    assert data.yty == pytest.approx(float(ys @ ys) / n, rel=1e-12)
    assert data.n == n
    np.testing.assert_array_equal(data.columns, np.arange(s.X.shape[1]))
    # The means are far from zero, so a centered Gram matrix would differ visibly.
    Xc = Xs - Xs.mean(axis=0)
    assert np.max(np.abs(Xs.T @ Xs / n - Xc.T @ Xc / n)) > 1e-3
    # Uncentered second moments of standardized columns exceed 1 by their squared mean.
    np.testing.assert_allclose(np.diag(data.gram), 1.0 + Xs.mean(axis=0) ** 2, rtol=1e-12)


def test_scaling_uses_only_the_rows_given():
    s = factor_sample(13, 100, 5)
    head = fit_scaling(s.X[:40], s.y[:40])
    # scikit-learn StandardScaler(with_mean=False) fitted on the same 40 rows.
    ref = StandardScaler(with_mean=False).fit(s.X[:40])
    np.testing.assert_allclose(head.x_scale, ref.scale_, rtol=1e-12, atol=0)
    assert not np.allclose(head.x_scale, fit_scaling(s.X, s.y).x_scale, rtol=1e-3)


def _fit(kind: str, X: np.ndarray, y: np.ndarray):
    if kind == "ols":
        return fit_ols(X, y)
    l1_ratio = {"lasso": 1.0, "ridge": 0.0, "elastic_net": 0.5}[kind]
    return fit_penalized(X, y, 0.01, l1_ratio)


# 0.0013 and 0.1 are not exact in binary, so numpy's std of the column is a rounding speck, not 0.
@pytest.mark.parametrize("value", [0.0, 0.0013, -0.02, 0.1])
@pytest.mark.parametrize("kind", ["lasso", "ridge", "elastic_net", "ols"])
def test_constant_column_is_unusable_and_gets_weight_exactly_zero(kind, value):
    s = factor_sample(14, 80, 6)
    j = 2
    X = s.X.copy()
    X[:, j] = value
    scaling = fit_scaling(X, s.y)
    assert scaling.usable.tolist() == [True, True, False, True, True, True]
    assert scaling.x_scale[j] == 1.0
    fit = _fit(kind, X, s.y)
    assert fit.weights[j] == 0.0 and not np.signbit(fit.weights[j])
    assert fit.coef_std[j] == 0.0
    # The other weights are those of a fit without the constant column.
    rest = _fit(kind, np.delete(X, j, axis=1), s.y)
    np.testing.assert_allclose(np.delete(fit.weights, j), rest.weights, rtol=1e-12, atol=1e-15)
    assert fit.cash == pytest.approx(1.0 - fit.weights.sum(), abs=1e-15)


def test_all_constituents_constant_gives_empty_portfolio():
    s = factor_sample(15, 50, 3)
    X = np.tile([0.0, 0.01, -0.003], (50, 1))
    fit = fit_penalized(X, s.y, 0.1, 1.0)
    assert fit.weights.tolist() == [0.0, 0.0, 0.0]
    assert fit.cash == 1.0


CONSTANT_BENCHMARKS = [
    pytest.param(np.zeros(60), id="zeros"),
    pytest.param(np.full(60, 0.004), id="flat"),
    pytest.param(np.full(60, 0.1), id="flat-inexact"),
]


@pytest.mark.parametrize("y", CONSTANT_BENCHMARKS)
@pytest.mark.parametrize(
    "call",
    [
        pytest.param(lambda X, y: fit_scaling(X, y), id="fit_scaling"),
        pytest.param(lambda X, y: fit_penalized(X, y, 0.1, 1.0), id="fit_penalized"),
        pytest.param(lambda X, y: fit_ols(X, y), id="fit_ols"),
        pytest.param(
            lambda X, y: cross_validate(
                X, y, ModelSpec("lasso", "lasso", (1.0,)), ForwardChaining(5), count=5
            ),
            id="cross_validate",
        ),
    ],
)
def test_constant_benchmark_raises(call, y):
    X = factor_sample(16, 60, 4).X
    match = r"the benchmark is constant on 60 rows, .*check the benchmark column and the window"
    with pytest.raises(SolverError, match=match):
        call(X, y)


def test_to_original_units_maps_back_and_keeps_zeros_exact():
    scaling = Scaling(
        x_scale=np.array([0.05, 0.02, 1.0, 0.04]),
        y_scale=0.03,
        usable=np.array([True, True, False, True]),
    )
    coef_std = np.array([0.5, -0.0, 0.7, -0.25])
    w = to_original_units(coef_std, scaling)
    np.testing.assert_allclose(w, [0.5 * 0.03 / 0.05, 0.0, 0.0, -0.25 * 0.03 / 0.04], rtol=1e-15)
    # -0.0 in comes out as +0.0, so counts and printed files never show a negative zero.
    assert np.signbit(w).tolist() == [False, False, False, True]
    assert w[2] == 0.0  # unusable: 0 whatever the solver put there
