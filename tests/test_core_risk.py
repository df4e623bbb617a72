"""The Ledoit-Wolf covariance and the ex-ante tracking error with its Euler allocation."""

from __future__ import annotations

import numpy as np
import pytest
from sklearn.covariance import LedoitWolf

from trackfit.core.risk import ex_ante_risk, ledoit_wolf

SHAPES = [(60, 5), (252, 31), (20, 80), (8, 3), (3, 2), (40, 1)]


def _rows(n, p, seed=0):
    rng = np.random.default_rng(seed)
    factor = rng.standard_normal((n, 1))
    return 0.01 * (factor @ rng.uniform(0.5, 1.5, (1, p)) + rng.standard_normal((n, p))) + 4e-4


@pytest.mark.parametrize(("n", "p"), SHAPES)
def test_ledoit_wolf_matches_scikit_learn(n, p):
    # Reference: sklearn.covariance.LedoitWolf(assume_centered=False), which implements
    # Ledoit and Wolf (2004), J. Multivariate Analysis 88:365-411 (centered rows, divisor n).
    x = _rows(n, p, seed=n * 1000 + p)
    ours = ledoit_wolf(x)
    ref = LedoitWolf(assume_centered=False).fit(x)
    scale = np.max(np.abs(ref.covariance_))
    assert np.max(np.abs(ours.covariance - ref.covariance_)) <= 1e-10 * scale
    assert ours.shrinkage == pytest.approx(ref.shrinkage_, abs=1e-10)
    assert ours.mu == pytest.approx(np.trace(np.cov(x.T, ddof=0).reshape(p, p)) / p, rel=1e-12)


def test_ledoit_wolf_is_positive_definite_with_more_series_than_rows():
    # With p > n the sample covariance is singular; the shrunk one is not (the paper's point).
    cov = ledoit_wolf(_rows(15, 60)).covariance
    assert np.min(np.linalg.eigvalsh(cov)) > 0.0


@pytest.mark.parametrize(
    ("bad", "match"), [(np.zeros(4), r"2-D array"), (np.full((3, 2), np.nan), r"finite")]
)
def test_ledoit_wolf_refuses_bad_rows(bad, match):
    with pytest.raises(ValueError, match=match):
        ledoit_wolf(bad)


def _case(n=120, p=12, seed=3):
    x = _rows(n + 1, p + 1, seed)
    X, y = x[:, :p], x[:, p]
    w = np.random.default_rng(seed).uniform(-0.05, 0.2, p)
    w[[1, 4]] = 0.0
    return X, y, w


@pytest.mark.parametrize(("n", "p"), [(120, 12), (30, 50)])
def test_tracking_error_is_the_active_quadratic_form_on_the_scikit_learn_covariance(n, p):
    X, y, w = _case(n, p)
    risk = ex_ante_risk(X, y, w, periods_per_year=52)
    # Reference: S from sklearn.covariance.LedoitWolf on the same rows [X, y].
    S = LedoitWolf(assume_centered=False).fit(np.column_stack([X, y])).covariance_
    a = np.append(w, -1.0)
    assert risk.tracking_error == pytest.approx(np.sqrt(a @ S @ a * 52), rel=1e-10)
    assert risk.n_periods == X.shape[0] and risk.periods_per_year == 52


def test_contributions_sum_to_the_total_by_name_and_by_group():
    # Euler allocation of a homogeneous risk measure sums to it exactly (common practice).
    X, y, w = _case()
    groups = ["b", "a", None, "b", "c", "a", "a", None, "c", "b", "a", "c"]
    risk = ex_ante_risk(X, y, w, periods_per_year=261, groups=groups)
    te = risk.tracking_error
    assert abs(float(np.sum(risk.by_name)) + risk.benchmark - te) <= 1e-12 * max(te, 1.0)
    assert abs(float(np.sum(risk.by_group)) + risk.benchmark - te) <= 1e-12 * max(te, 1.0)
    assert risk.groups == ("a", "b", "c", None)
    for k, label in enumerate(risk.groups):
        members = [i for i, g in enumerate(groups) if g == label]
        assert risk.by_group[k] == pytest.approx(np.sum(risk.by_name[members]), abs=1e-15)
        assert list(np.flatnonzero(risk.group_index == k)) == members
    assert risk.by_name[1] == 0.0 and risk.by_name[4] == 0.0  # no weight, no contribution


def test_contribution_is_the_marginal_times_the_weight():
    # Each term is a_i times d(TE)/d(a_i) (Euler); checked by central differences.
    X, y, w = _case()
    risk = ex_ante_risk(X, y, w, periods_per_year=12)
    h = 1e-6
    for i in (0, 5):
        up, down = w.copy(), w.copy()
        up[i] += h
        down[i] -= h
        slope = (
            ex_ante_risk(X, y, up, periods_per_year=12).tracking_error
            - ex_ante_risk(X, y, down, periods_per_year=12).tracking_error
        ) / (2 * h)
        assert risk.by_name[i] == pytest.approx(w[i] * slope, rel=1e-6)


def test_holding_the_benchmark_itself_leaves_only_the_shrinkage_term():
    # Ground truth built here: the benchmark is exactly the first constituent, so the sample
    # part of a' S a is zero and only the target's shrinkage * mu * a'a (a'a = 2) is left.
    X, _, _ = _case()
    w = np.zeros(X.shape[1])
    w[0] = 1.0
    risk = ex_ante_risk(X, X[:, 0].copy(), w, periods_per_year=261)
    shrunk = ledoit_wolf(np.column_stack([X, X[:, 0]]))
    expected = np.sqrt(shrunk.shrinkage * shrunk.mu * 2.0 * 261)
    assert risk.tracking_error == pytest.approx(expected, rel=1e-10)
    assert risk.by_name[0] == pytest.approx(risk.benchmark, rel=1e-10)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"weights": np.zeros(3)}, r"weights \(p,\)"),
        ({"periods_per_year": 0}, r"periods_per_year must be positive"),
        ({"groups": ["a"]}, r"groups has 1 labels for 12 weights"),
    ],
)
def test_ex_ante_risk_refuses_bad_inputs(kwargs, match):
    X, y, w = _case()
    args = {"weights": w, "periods_per_year": 12, **kwargs}
    with pytest.raises(ValueError, match=match):
        ex_ante_risk(X, y, args.pop("weights"), **args)


def test_sample_tracking_error_is_the_active_returns_standard_deviation():
    # Unshrunk, a' S a is the variance (divisor n) of the active returns: numpy's std(ddof=0).
    X, y, w = _case()
    risk = ex_ante_risk(X, y, w, periods_per_year=261)
    assert risk.sample_tracking_error == pytest.approx(np.std(X @ w - y) * np.sqrt(261), rel=1e-10)
    assert risk.tracking_error > risk.sample_tracking_error  # the target adds variance
