"""The adaptive lasso: reweighted columns, its pilot ridge, and the job option gamma."""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest
from sklearn.linear_model import Lasso

from trackfit.core import adaptive
from trackfit.core.adaptive import (
    adaptive_reweighting,
    pilot_splitter,
    reweighted_scaling,
)
from trackfit.core.cv import cross_validate, fold_scalings
from trackfit.core.fit import KKT_LIMIT
from trackfit.core.folds import ForwardChaining
from trackfit.core.limits import NO_LIMITS, Limits
from trackfit.core.model_fit import fit_model
from trackfit.core.models import MODEL_KINDS
from trackfit.core.results import Scaling
from trackfit.core.scaling import fit_scaling
from trackfit.errors import JobError, SolverError
from trackfit.job import load_job

SPLITTER = ForwardChaining(5)
ADAPTIVE = MODEL_KINDS["adaptive_lasso"].spec()
LASSO = MODEL_KINDS["lasso"].spec()


def _factor_data(seed: int, n: int = 250, p: int = 30, k: int = 5):
    """Names that share one market factor, a benchmark of the first ``k`` of them plus noise:
    correlated columns, where the plain lasso lets false names in."""
    rng = np.random.default_rng(seed)
    market = rng.normal(0.0, 0.01, (n, 1))
    X = 0.7 * market + 0.7 * rng.normal(0.0, 0.01, (n, p))
    truth = np.zeros(p)
    truth[:k] = rng.uniform(0.1, 0.3, k)
    return X, X @ truth + rng.normal(0.0, 0.003, n), truth


@pytest.mark.parametrize("gamma", [0.5, 1.0, 2.0])
@pytest.mark.parametrize("positive", [False, True])
def test_equals_sklearn_lasso_on_reweighted_columns(gamma, positive):
    X, y, _ = _factor_data(1, n=200, p=20)
    spec = MODEL_KINDS["adaptive_lasso"].spec(gamma=gamma)
    scaling = fit_scaling(X, y)
    done = adaptive_reweighting(X, y, scaling, SPLITTER, gamma=gamma)
    # The reweighted columns x_s_j * |b_pilot_j|^gamma, built here from the pilot directly.
    Z = (X / scaling.x_scale) * np.abs(done.pilot) ** gamma
    ys = y / scaling.y_scale
    top = np.max(np.abs(Z.T @ ys)) / len(y)
    limits = Limits(long_only=True) if positive else NO_LIMITS
    for alpha in top * np.array([0.5, 0.1, 0.02]):
        fit = fit_model(X, y, spec, alpha, 1.0, limits, splitter=SPLITTER)
        # Reference: scikit-learn's Lasso at tight tolerance on the same columns and alpha.
        ref = Lasso(
            alpha=alpha, fit_intercept=False, tol=1e-12, max_iter=10**6, positive=positive
        ).fit(Z, ys)
        b_std = ref.coef_ * np.abs(done.pilot) ** gamma  # back to the true standardized units
        np.testing.assert_allclose(fit.coef_std, b_std, atol=1e-9)
        np.testing.assert_allclose(
            fit.weights, b_std * scaling.y_scale / scaling.x_scale, atol=1e-9
        )
        assert fit.kkt_residual < KKT_LIMIT


def test_weights_use_the_true_scale():
    X, y, _ = _factor_data(2)
    cv = cross_validate(X, y, ADAPTIVE, SPLITTER)
    fit = fit_model(X, y, ADAPTIVE, cv.alpha, cv.l1_ratio, NO_LIMITS, splitter=SPLITTER)
    true = fit_scaling(X, y)
    np.testing.assert_array_equal(fit.scaling.x_scale, true.x_scale)
    np.testing.assert_array_equal(fit.scaling.usable, true.usable)
    np.testing.assert_allclose(
        fit.weights, fit.coef_std * true.y_scale / true.x_scale, rtol=1e-13, atol=1e-16
    )
    # The same fitted benchmark whichever units the weights are read in.
    np.testing.assert_allclose(
        X @ fit.weights, (X / true.x_scale) @ fit.coef_std * true.y_scale, rtol=1e-12
    )


def test_recovers_a_sparse_truth_with_fewer_false_names_than_lasso():
    false = {"lasso": [], "adaptive_lasso": []}
    for seed in range(5):
        X, y, truth = _factor_data(seed)
        for spec in (LASSO, ADAPTIVE):
            cv = cross_validate(X, y, spec, SPLITTER)
            fit = fit_model(X, y, spec, cv.alpha, cv.l1_ratio, NO_LIMITS, splitter=SPLITTER)
            assert np.all(fit.weights[truth != 0] != 0), (spec.name, seed)  # nothing true missed
            false[spec.name].append(int(np.count_nonzero(fit.weights[truth == 0])))
    assert all(a <= b for a, b in zip(false["adaptive_lasso"], false["lasso"])), false
    assert sum(false["adaptive_lasso"]) * 2 < sum(false["lasso"]), false


def test_each_fold_pilot_sees_only_its_training_rows():
    X, y, _ = _factor_data(3, n=240)
    folds = SPLITTER.split(len(y))
    before = fold_scalings(X, y, ADAPTIVE, SPLITTER, folds)
    k = 1
    X2, y2 = X.copy(), y.copy()
    rng = np.random.default_rng(9)
    X2[folds[k].train_stop :] += rng.normal(0.0, 0.01, X2[folds[k].train_stop :].shape)
    y2[folds[k].train_stop :] *= -1.0
    after = fold_scalings(X2, y2, ADAPTIVE, SPLITTER, folds)
    for f in range(k + 1):
        assert after[f].x_scale.tobytes() == before[f].x_scale.tobytes()
    assert after[k + 1].x_scale.tobytes() != before[k + 1].x_scale.tobytes()  # not vacuous


def test_cross_validation_gives_the_pilot_no_validation_rows(monkeypatch):
    X, y, _ = _factor_data(4, n=240)
    seen = []
    real = adaptive.adaptive_reweighting

    def spy(Xr, yr, scaling, splitter, *, gamma):
        seen.append((Xr.copy(), yr.copy()))
        return real(Xr, yr, scaling, splitter, gamma=gamma)

    monkeypatch.setattr(adaptive, "adaptive_reweighting", spy)
    cv = cross_validate(X, y, ADAPTIVE, SPLITTER)
    # First the grid's pilot on all rows given, then one per fold on its training rows only.
    assert len(seen) == 1 + len(cv.folds)
    np.testing.assert_array_equal(seen[0][0], X)
    for (Xr, yr), f in zip(seen[1:], cv.folds):
        np.testing.assert_array_equal(Xr, X[f.train_start : f.train_stop])
        np.testing.assert_array_equal(yr, y[f.train_start : f.train_stop])


def test_pilot_splitter_falls_back_then_fails():
    same, note = pilot_splitter(ForwardChaining(5, min_train=30), 200)
    assert same == ForwardChaining(5, min_train=30) and note is None
    fallback, note = pilot_splitter(ForwardChaining(5, min_train=30), 30)
    assert fallback == ForwardChaining(5, min_train=2)
    assert "5 folds with at least 2 training rows" in note
    fewer, _ = pilot_splitter(ForwardChaining(5, min_train=30, gap=2), 8)
    assert fewer == ForwardChaining(4, min_train=2, gap=2)
    with pytest.raises(
        SolverError,
        match=re.escape(
            "the adaptive lasso's pilot ridge: 5 rows cannot hold even 2 cross-validation folds "
            "with gap 2 to choose its penalty; lengthen the window or lower "
            "cross_validation.gap"
        ),
    ):
        pilot_splitter(ForwardChaining(5, min_train=30, gap=2), 5)


def test_cross_validation_with_folds_too_short_for_the_job_splitter():
    X, y, _ = _factor_data(5, n=120)
    splitter = ForwardChaining(5, min_train=30)  # the first fold trains on 30 rows
    assert splitter.split(120)[0].train_stop == 30
    cv = cross_validate(X, y, ADAPTIVE, splitter)
    fit = fit_model(X, y, ADAPTIVE, cv.alpha, cv.l1_ratio, NO_LIMITS, splitter=splitter)
    assert fit.kkt_residual < KKT_LIMIT


def test_too_few_rows_for_any_pilot_says_so():
    X, y, _ = _factor_data(6, n=24)
    splitter = ForwardChaining(5, min_train=2, gap=3)
    assert splitter.split(24)[0].train_stop == 6  # too few rows for 2 pilot folds and a gap of 3
    with pytest.raises(
        SolverError,
        match=re.escape(
            "adaptive_lasso, fold 1 (training rows 0 to 5): the adaptive lasso's pilot ridge: 6 "
            "rows cannot hold even 2 cross-validation folds with gap 3"
        ),
    ):
        cross_validate(X, y, ADAPTIVE, splitter)


def test_zero_pilot_weight_makes_a_name_unusable():
    scaling = Scaling(
        x_scale=np.array([2.0, 3.0, 1.0]), y_scale=0.5, usable=np.array([True, True, False])
    )
    out = reweighted_scaling(scaling, np.array([0.5, 0.0, 0.7]))
    np.testing.assert_array_equal(out.usable, [True, False, False])
    np.testing.assert_array_equal(out.x_scale, [4.0, 1.0, 1.0])
    assert out.y_scale == 0.5


B = "benchmark: {file: index.csv, column: lbx60}\nconstituents: {file: constituents.csv}\n"


@pytest.mark.parametrize(
    "text, gamma",
    [
        ("models: {adaptive_lasso: {gamma: 1}}\n", 1.0),
        ("models: {adaptive_lasso: {gamma: 0.5}}\n", 0.5),
        ("models: {adaptive_lasso: {gamma: 2}}\n", 2.0),
        ("models: {adaptive_lasso: }\n", 1.0),
        ("models: {adaptive_lasso: {gamma: null}}\n", 1.0),
        ("models: [lasso, adaptive_lasso]\n", 1.0),
    ],
)
def test_gamma_parses(tmp_path: Path, text, gamma):
    (tmp_path / "job.yaml").write_text(B + text, encoding="utf-8")
    spec = load_job(tmp_path / "job.yaml").models[-1]
    assert spec.kind == "adaptive_lasso" and spec.l1_ratios == (1.0,)
    assert spec.param("gamma") == gamma


@pytest.mark.parametrize(
    "text, message",
    [
        ("{gamma: 0}", "'models.adaptive_lasso.gamma' must be a number greater than 0; got 0."),
        ("{gamma: -1}", "'models.adaptive_lasso.gamma' must be a number greater than 0; got -1."),
        (
            "{gamma: .inf}",
            "'models.adaptive_lasso.gamma' must be a number greater than 0; got inf.",
        ),
        (
            "{gamma: .nan}",
            "'models.adaptive_lasso.gamma' must be a number greater than 0; got nan.",
        ),
        (
            "{gamma: true}",
            "'models.adaptive_lasso.gamma' must be a number greater than 0; got True.",
        ),
        (
            "{gamma: '1'}",
            (
                "'models.adaptive_lasso.gamma' must be a number greater than 0; got '1' "
                "(text, not a number; remove the quotes)."
            ),
        ),
        (
            "{gamma: [1, 2]}",
            ("'models.adaptive_lasso.gamma' must be a number greater than 0; got [1, 2]."),
        ),
        ("{gammas: 1}", "unknown key 'models.adaptive_lasso.gammas'; did you mean 'gamma'?"),
        ("{l1_ratio: 0.5}", "unknown key 'models.adaptive_lasso.l1_ratio'; allowed: gamma"),
        ("[1]", "'models.adaptive_lasso' must be a mapping with keys among 'gamma'; got [1]."),
    ],
)
def test_bad_gamma(tmp_path: Path, text, message):
    (tmp_path / "job.yaml").write_text(
        B + f"models: {{adaptive_lasso: {text}}}\n", encoding="utf-8"
    )
    with pytest.raises(JobError, match=re.escape(message)):
        load_job(tmp_path / "job.yaml")
