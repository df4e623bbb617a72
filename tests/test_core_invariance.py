"""Ground truth and invariances of the fitting core: units, order of constituents, exact sums."""

from __future__ import annotations

import numpy as np
import pytest
from synthetic import factor_sample, independent_sample

from trackfit.core.cv import cross_validate
from trackfit.core.fit import fit_ols, fit_penalized
from trackfit.core.folds import ForwardChaining
from trackfit.core.models import ModelSpec

KINDS = ["lasso", "ridge", "elastic_net", "ols"]
L1 = {"lasso": 1.0, "ridge": 0.0, "elastic_net": 0.5}
ALPHA = {"lasso": 0.02, "ridge": 0.05, "elastic_net": 0.03}


def _fit(kind, X, y):
    if kind == "ols":
        return fit_ols(X, y)
    return fit_penalized(X, y, ALPHA[kind], L1[kind])


@pytest.mark.parametrize(
    "sample",
    [
        pytest.param(lambda: factor_sample(41, 100, 12, n_held=5, noise=0.0), id="factor"),
        pytest.param(lambda: independent_sample(42, 60, 25, n_held=25), id="dense"),
        pytest.param(lambda: factor_sample(43, 26, 25, n_held=10, noise=0.0), id="near-square"),
    ],
)
def test_ols_recovers_an_exact_weighted_sum(sample):
    s = sample()
    fit = fit_ols(s.X, s.y)
    np.testing.assert_allclose(fit.weights, s.weights, rtol=0, atol=1e-10)
    assert fit.cash == pytest.approx(1.0 - s.weights.sum(), abs=1e-10)


@pytest.mark.parametrize("seed", [44, 45, 46])
def test_lasso_at_a_small_penalty_finds_the_support(seed):
    s = independent_sample(seed, 240, 12, n_held=4)
    full = fit_penalized(s.X, s.y, 1.0, 1.0)
    assert np.count_nonzero(full.weights) == 0  # alpha well above alpha_max: nothing held
    fit = fit_penalized(s.X, s.y, 1e-3, 1.0)
    np.testing.assert_array_equal(fit.weights != 0, s.weights != 0)
    np.testing.assert_allclose(fit.weights, s.weights, rtol=0, atol=5e-3)
    # The penalty only shrinks: every held weight is pulled towards zero, none overshoots.
    held = s.weights != 0
    assert np.all(np.abs(fit.weights[held]) < np.abs(s.weights[held]))
    # ... and a ten times smaller penalty lands ten times closer (the bias is linear in alpha).
    closer = fit_penalized(s.X, s.y, 1e-4, 1.0)
    gap, gap_small = (np.max(np.abs(f.weights - s.weights)) for f in (fit, closer))
    assert gap_small == pytest.approx(gap / 10, rel=1e-6)


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("c", [100.0, 0.37, -2.5])
def test_rescaling_a_constituent_divides_its_weight(kind, c):
    s = factor_sample(47, 90, 10, noise=0.004)
    j = 3
    X2 = s.X.copy()
    X2[:, j] *= c
    a, b = _fit(kind, s.X, s.y), _fit(kind, X2, s.y)
    # Standardized problem unchanged (up to the sign of a flipped column).
    sign = np.ones(10)
    sign[j] = np.sign(c)
    np.testing.assert_allclose(b.coef_std, a.coef_std * sign, rtol=1e-10, atol=1e-13)
    expected = a.weights.copy()
    expected[j] /= c
    np.testing.assert_allclose(b.weights, expected, rtol=1e-10, atol=1e-14)
    # The portfolio itself is the same: same fitted returns.
    np.testing.assert_allclose(X2 @ b.weights, s.X @ a.weights, rtol=1e-10)
    if kind != "ridge":
        np.testing.assert_array_equal(b.weights == 0, a.weights == 0)


@pytest.mark.parametrize(
    ("kind", "positive"),
    [(k, False) for k in KINDS] + [("lasso", True), ("elastic_net", True)],
)
def test_permuting_constituents_permutes_weights(kind, positive):
    s = factor_sample(48, 100, 14, n_short=2)
    perm = np.random.default_rng(48).permutation(14)
    if kind == "ols":
        a, b = fit_ols(s.X, s.y), fit_ols(s.X[:, perm], s.y)
    else:
        a = fit_penalized(s.X, s.y, ALPHA[kind], L1[kind], positive=positive)
        b = fit_penalized(s.X[:, perm], s.y, ALPHA[kind], L1[kind], positive=positive)
    np.testing.assert_allclose(b.weights, a.weights[perm], rtol=1e-10, atol=1e-14)
    np.testing.assert_array_equal(b.weights == 0, a.weights[perm] == 0)
    assert b.cash == pytest.approx(a.cash, abs=1e-12)


CV_SPECS = [
    ModelSpec("lasso", "lasso", (1.0,)),
    ModelSpec("elastic_net", "elastic_net", (0.3, 0.7)),
    ModelSpec("ridge", "ridge", (0.0,)),
]


@pytest.mark.parametrize("spec", CV_SPECS, ids=lambda m: m.name)
@pytest.mark.parametrize("rule", ["min_error", "one_standard_error"])
def test_chosen_penalty_is_invariant_to_permuting_constituents(spec, rule):
    s = factor_sample(49, 120, 15, noise=0.01)
    perm = np.random.default_rng(49).permutation(15)
    a = cross_validate(s.X, s.y, spec, ForwardChaining(5), rule=rule, count=40)
    b = cross_validate(s.X[:, perm], s.y, spec, ForwardChaining(5), rule=rule, count=40)
    assert b.l1_ratio == a.l1_ratio
    assert b.alpha == pytest.approx(a.alpha, rel=1e-12)
    for ca, cb in zip(a.curves, b.curves):
        np.testing.assert_allclose(cb.alphas, ca.alphas, rtol=1e-12)
        np.testing.assert_allclose(cb.mean_error, ca.mean_error, rtol=1e-9)


@pytest.mark.parametrize("spec", CV_SPECS, ids=lambda m: m.name)
def test_chosen_penalty_is_invariant_to_the_units_of_a_constituent(spec):
    # With the scaling refitted in every fold, each fold's standardized problem is unchanged.
    s = factor_sample(50, 120, 15, noise=0.01)
    X2 = s.X.copy()
    X2[:, 4] *= 250.0
    a = cross_validate(s.X, s.y, spec, ForwardChaining(5), count=40)
    b = cross_validate(X2, s.y, spec, ForwardChaining(5), count=40)
    assert (b.alpha, b.l1_ratio) == pytest.approx((a.alpha, a.l1_ratio), rel=1e-12)
    for ca, cb in zip(a.curves, b.curves):
        np.testing.assert_allclose(cb.mean_error, ca.mean_error, rtol=1e-9)
