"""Beta to the benchmark as a linear limit: coefficients, fits, folds, job file, CLI."""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm
from click.testing import CliRunner

from trackfit.cli import main
from trackfit.core.constrained import BINDING
from trackfit.core.constrained.statuses import worst_violation
from trackfit.core.cv import cross_validate
from trackfit.core.folds import ForwardChaining
from trackfit.core.limited_fit import fit_limited
from trackfit.core.limits import (
    GroupLimit,
    Limits,
    beta_coefficients,
    beta_limit,
)
from trackfit.core.models import ModelSpec
from trackfit.errors import JobError
from trackfit.job import Bounds, load_job


def _sample(seed: int = 3, n: int = 120, p: int = 8):
    rng = np.random.default_rng(seed)
    market = 0.01 * rng.standard_normal(n)
    X = market[:, None] * rng.uniform(0.5, 1.5, p) + 0.01 * rng.standard_normal((n, p))
    y = X @ rng.dirichlet(np.ones(p)) + 0.002 * rng.standard_normal(n) + 0.0003
    return X, y


def test_beta_coefficients_equal_numpy_cov_over_var():
    X, y = _sample()
    w = np.random.default_rng(0).uniform(-0.2, 0.5, X.shape[1])
    # Reference: numpy.cov (ddof=1 in both parts, so it cancels).
    c = np.cov(X @ w, y)
    assert beta_coefficients(X, y) @ w == pytest.approx(c[0, 1] / c[1, 1], rel=1e-12)


def test_beta_equals_the_ols_slope_of_the_portfolio_on_the_benchmark():
    X, y = _sample(seed=5)
    w = np.full(X.shape[1], 1.0 / X.shape[1])
    # Reference: statsmodels OLS of Xw on a constant and y; the slope is cov(Xw, y) / var(y).
    slope = sm.OLS(X @ w, sm.add_constant(y)).fit().params[1]
    assert beta_coefficients(X, y) @ w == pytest.approx(slope, rel=1e-10)


def test_a_flat_benchmark_has_no_beta():
    X, _ = _sample()
    with pytest.raises(ValueError, match="benchmark return does not vary"):
        beta_coefficients(X, np.full(len(X), 0.001))


def test_on_rows_is_a_no_op_without_row_dependent_limits():
    limits = Limits(long_only=True, budget=(1.0, 1.0), groups=(GroupLimit("a", (0, 1), None, 0.5),))
    X, y = _sample()
    assert limits.on_rows(X, y) is limits
    assert not limits.depends_on_rows


def test_unresolved_beta_is_refused_by_the_statuses():
    limits = Limits(linear=(beta_limit(0.9, 1.1),))
    with pytest.raises(ValueError, match=r"'limits.beta' limit .* depends on the fit rows"):
        worst_violation(np.zeros(3), limits)


def test_a_beta_limit_needs_the_qp_engine():
    assert Limits(linear=(beta_limit(None, 1.0),)).needs_qp


@pytest.mark.parametrize("l1_ratio,alpha", [(0.0, 1e-3), (1.0, 1e-4), (0.5, 1e-4)])
def test_fit_at_beta_one_holds_every_limit_to_1e9(l1_ratio, alpha):
    X, y = _sample(seed=11, p=10)
    upper = np.full(10, 0.3)
    limits = Limits(
        long_only=True,
        budget=(0.9, 1.0),
        upper=upper,
        groups=(GroupLimit("north", (0, 1, 2, 3), None, 0.5),),
        linear=(beta_limit(1.0, 1.0),),
    )
    fit = fit_limited(X, y, alpha, l1_ratio, limits)
    w = fit.weights
    c = np.cov(X @ w, y)  # numpy.cov as the outside reference for beta
    assert abs(c[0, 1] / c[1, 1] - 1.0) <= 1e-9
    assert w.min() >= -1e-9 and w.max() <= 0.3 + 1e-9
    assert 0.9 - 1e-9 <= w.sum() <= 1.0 + 1e-9
    assert w[:4].sum() <= 0.5 + 1e-9
    kinds = {s.kind: s for s in fit.limits}
    assert kinds["beta_min"].binding and kinds["beta_max"].binding
    assert kinds["beta_min"].slack == 0.0 and kinds["beta_max"].slack == 0.0
    assert kinds["beta_max"].value == pytest.approx(1.0, abs=1e-9)
    # Beta statuses come after the groups and the budget (status order).
    order = [s.kind for s in fit.limits]
    assert order.index("beta_min") > order.index("budget_max") > order.index("group_max")


def test_a_beta_range_with_room_is_not_binding():
    X, y = _sample(seed=11, p=10)
    free = fit_limited(X, y, 1e-3, 0.0, Limits(long_only=True))
    beta = float(beta_coefficients(X, y) @ free.weights)
    fit = fit_limited(
        X, y, 1e-3, 0.0, Limits(long_only=True, linear=(beta_limit(beta - 0.5, beta + 0.5),))
    )
    statuses = {s.kind: s for s in fit.limits}
    assert not statuses["beta_min"].binding and statuses["beta_min"].slack > BINDING
    np.testing.assert_allclose(fit.weights, free.weights, atol=1e-7)


def test_cross_validation_folds_use_their_training_rows_for_beta():
    # The benchmark's exposure changes halfway: beta on the early rows differs from beta on
    # all rows, so a fold fitted with all-row coefficients would miss beta 1 on its own rows.
    rng = np.random.default_rng(21)
    n, p = 240, 6
    X = 0.01 * rng.standard_normal((n, p))
    mix = np.where(np.arange(n)[:, None] < n // 2, [0.6, 0.4, 0, 0, 0, 0], [0, 0, 0, 0.3, 0.3, 0.4])
    y = np.sum(X * mix, axis=1) + 0.001 * rng.standard_normal(n)
    limits = Limits(budget=(1.0, 1.0), linear=(beta_limit(1.0, 1.0),))
    splitter = ForwardChaining(n_folds=3)
    spec = ModelSpec(name="ridge", kind="ridge", l1_ratios=(0.0,))
    cv = cross_validate(X, y, spec, splitter, count=4, limits=limits, max_extensions=0)
    curve = cv.curves[0]
    for f, fold in enumerate(cv.folds):
        Xt, yt = X[fold.train_start : fold.train_stop], y[fold.train_start : fold.train_stop]
        assert (
            abs(
                beta_coefficients(Xt, yt) @ np.full(p, 1 / p)
                - beta_coefficients(X, y) @ np.full(p, 1 / p)
            )
            > 1e-3
        )  # the case is real
        for i, alpha in enumerate(curve.alphas):
            fit = fit_limited(Xt, yt, alpha, 0.0, limits)
            assert abs(beta_coefficients(Xt, yt) @ fit.weights - 1.0) <= 1e-9
            Xv, yv = X[fold.val_start : fold.val_stop], y[fold.val_start : fold.val_stop]
            error = float(np.mean((Xv @ fit.weights - yv) ** 2))
            assert curve.fold_errors[i, f] == pytest.approx(error, rel=1e-9)


# -- job file --------------------------------------------------------------------------------

BC = "benchmark: {file: index.csv, column: lbx60}\nconstituents: {file: constituents.csv}\n"
L = BC + "limits:\n"


def _write(folder: Path, text: str) -> Path:
    path = folder / "job.yaml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.mark.parametrize(
    "text,expected",
    [
        ("  beta: {min: 0.95, max: 1.05}\n", Bounds(0.95, 1.05)),
        ("  beta: {min: 0.9}\n", Bounds(0.9, None)),
        ("  beta: {max: 1}\n", Bounds(None, 1.0)),
        ("  beta: null\n", None),
    ],
)
def test_beta_forms(tmp_path, text, expected):
    assert load_job(_write(tmp_path, L + text)).limits.beta == expected


BETA_ERRORS = [
    ("  beta: 1.0\n", "'limits.beta' must be a mapping with 'min', 'max' or both"),
    ("  beta: {}\n", "'limits.beta' must be a mapping with 'min', 'max' or both"),
    (
        "  beta: {min: 1.1, max: 0.9}\n",
        "'limits.beta.min' (1.1) is above 'limits.beta.max' (0.9); the minimum must not exceed "
        "the maximum",
    ),
    (
        "  beta: {min: -11}\n",
        "'limits.beta.min' must be a number from -10 to 10 (1 = moves "
        "with the benchmark); got -11.",
    ),
    ("  beta: {max: 12.5}\n", "'limits.beta.max' must be a number from -10 to 10"),
    ("  beta: {min: '1'}\n", "'limits.beta.min' must be a number from -10 to 10"),
    ("  beta: {min: .nan}\n", "'limits.beta.min' must be a number from -10 to 10"),
    ("  beta: {max: true}\n", "'limits.beta.max' must be a number from -10 to 10"),
    ("  beta: {low: 0.9}\n", "unknown key 'limits.beta.low'; allowed: min, max"),
    ("  betta: {min: 0.9}\n", "unknown key 'limits.betta'; did you mean 'beta'?"),
]


@pytest.mark.parametrize("text,message", BETA_ERRORS)
def test_beta_validation_messages(tmp_path, text, message):
    path = _write(tmp_path, L + text)
    with pytest.raises(JobError, match=re.escape(message)):
        load_job(path)


# -- end to end ------------------------------------------------------------------------------

NAMES = [f"firm_{c}" for c in "abcdefgh"]


def test_cli_fit_and_check_carry_the_beta_limit(tmp_path):
    rng = np.random.default_rng(8)
    n = 150
    dates = np.arange(np.datetime64("2023-01-06"), np.datetime64("2023-01-06") + 7 * n, 7)
    market = 0.02 * rng.standard_normal(n)
    X = market[:, None] * rng.uniform(0.6, 1.4, 8) + 0.015 * rng.standard_normal((n, 8))
    y = X @ np.array([0.3, 0.2, 0, 0.2, 0, 0.15, 0.15, 0]) + 0.002 * rng.standard_normal(n)
    (tmp_path / "members.csv").write_text(
        "date,"
        + ",".join(NAMES)
        + "\n"
        + "".join(f"{d}," + ",".join(f"{v:.8f}" for v in X[i]) + "\n" for i, d in enumerate(dates))
    )
    (tmp_path / "index.csv").write_text(
        "date,idx\n" + "".join(f"{d},{y[i]:.8f}\n" for i, d in enumerate(dates))
    )
    job = tmp_path / "beta.yaml"
    job.write_text(
        "benchmark: {file: index.csv, column: idx}\n"
        "constituents: [{file: members.csv}]\n"
        "window: {holdout: 30}\n"
        "models: {ridge: {}}\n"
        "penalty_grid: {count: 5}\n"
        "cross_validation: {folds: 3}\n"
        "limits:\n"
        "  long_only: true\n"
        "  budget: fully_invested\n"
        "  beta: {min: 1.0, max: 1.0}\n"
    )
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["fit", str(job), "--out", str(out)])
    assert result.exit_code == 0, result.stderr
    report = (out / "report.md").read_text()
    assert "- Beta to the benchmark exactly 1 (cov(portfolio, benchmark)" in report
    assert re.search(
        r"\| Beta to the benchmark, at least \| 1\.000000 \| 1\.000000 \| "
        r"0\.000000 \| yes \|",
        report,
    )
    assert "beta is a plain number." in report
    summary = json.loads((out / "summary.json").read_text())
    limits = summary["limits"]
    assert limits["in_force"]["beta"] == {"min": 1.0, "max": 1.0}
    beta = {s["kind"]: s for s in limits["statuses"] if s["kind"].startswith("beta")}
    assert set(beta) == {"beta_min", "beta_max"}
    assert all(s["binding"] and s["slack"] == 0.0 for s in beta.values())
    assert beta["beta_max"]["value"] == pytest.approx(1.0, abs=1e-9)
    # The weights written (10 decimals) have beta 1 on the fitted window's rows to rounding.
    checked = CliRunner().invoke(main, ["check", str(job)])
    assert checked.exit_code == 0, checked.stderr
    assert "limit: beta to the benchmark exactly 1" in checked.stdout
