"""Tests of the max-names search and the minimum position size (trackfit.core.support).

The refit used here is an exact long-only, fully invested least-squares solver in refits.py
(``budget_refit``), checked against scipy's SLSQP. The lasso-path support is checked against
scikit-learn's exact LARS path. Everything else is checked by brute force: every swap, or every
support of a tiny problem.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from refits import budget_ls, budget_refit
from scipy.optimize import minimize
from sklearn.linear_model import lars_path_gram
from synthetic import factor_sample

from trackfit.core.gram import GramData, standardized_gram
from trackfit.core.scaling import fit_scaling
from trackfit.core.support import (
    CachedRefit,
    enforce_min_position,
    lasso_path_support,
    search_support,
)
from trackfit.errors import SolverError


def truth(seed: int, noise: float = 0.001):
    """A benchmark built from 10 of 50 constituents, long-only and fully invested."""
    s = factor_sample(seed, 120, 50, n_held=10, noise=noise)
    assert s.weights.min() >= 0 and s.weights.sum() == pytest.approx(1.0)
    return s


def tiny(seed: int, held: int):
    """8 correlated constituents; the benchmark is built from ``held`` of them, noisily."""
    rng = np.random.default_rng(seed)
    n, p = 30, 8
    factors = rng.normal(0.005, 0.04, (n, 2))
    X = 0.002 + factors @ rng.normal(1.0, 0.5, (p, 2)).T / 2 + rng.normal(0, 0.02, (n, p))
    w = np.zeros(p)
    w[rng.choice(p, held, replace=False)] = rng.dirichlet(np.ones(held))
    return X, X @ w + 0.01 * rng.normal(size=n)


def _mask(p: int, held) -> np.ndarray:
    m = np.zeros(p, dtype=bool)
    m[list(held)] = True
    return m


def _swap_neighbours(p: int, chosen, eligible=None):
    held = set(chosen)
    pool = [j for j in range(p) if j not in held and (eligible is None or eligible[j])]
    for i in sorted(held):
        for j in pool:
            yield _mask(p, (held - {i}) | {j})


# --- the test's own refit against an outside solver ------------------------------------------


def _kkt_violation(X, y, w):
    """Largest violation of the KKT conditions of the fully invested long-only problem.

    With g = X'(Xw - y)/n: g_j + nu = 0 where w_j > 0 and g_j + nu >= 0 where w_j = 0
    (Nocedal and Wright, "Numerical Optimization", 2006, Theorem 12.1; from memory).
    """
    g = X.T @ (X @ w - y) / len(y)
    on = w > 0
    nu = -float(np.mean(g[on]))
    stationarity = np.abs(g[on] + nu)
    sign = np.maximum(-(g[~on] + nu), 0.0)  # a negative multiplier on a bound
    return float(max(stationarity.max(), sign.max(initial=0.0)))


@pytest.mark.parametrize("held", [range(0, 50, 5), (4, 9, 17, 30, 41), (7,)])
def test_budget_ls_equals_slsqp(held):
    s = truth(0, noise=0.003)
    mask = _mask(50, held)
    objective, w = budget_ls(s.X, s.y, mask)
    idx = np.flatnonzero(mask)
    Xm, n = s.X[:, idx], len(s.y)
    # Reference: scipy.optimize.minimize(method="SLSQP") (Kraft 1988), tight ftol.
    ref = minimize(
        lambda v: 0.5 * np.mean((s.y - Xm @ v) ** 2),
        np.full(len(idx), 1.0 / len(idx)),
        jac=lambda v: -Xm.T @ (s.y - Xm @ v) / n,
        method="SLSQP",
        bounds=[(0.0, None)] * len(idx),
        constraints=[{"type": "eq", "fun": lambda v: v.sum() - 1.0, "jac": lambda v: 1.0 + 0 * v}],
        options={"ftol": 1e-16, "maxiter": 2000},
    )
    assert objective <= ref.fun * (1 + 1e-9)
    assert objective == pytest.approx(ref.fun, rel=1e-7)
    np.testing.assert_allclose(w[idx], ref.x, atol=1e-4)
    assert w.min() >= 0 and w.sum() == pytest.approx(1.0, abs=1e-14) and np.all(w[~mask] == 0)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_budget_ls_satisfies_kkt_on_every_name(seed):
    s = truth(seed, noise=0.003)
    _, w = budget_ls(s.X, s.y, np.ones(50, bool))
    assert w.min() >= 0 and w.sum() == pytest.approx(1.0, abs=1e-14)
    scale = float(np.max(np.abs(s.X.T @ s.y))) / len(s.y)
    assert _kkt_violation(s.X, s.y, w) < 1e-12 * scale


# --- ground truth -----------------------------------------------------------------------------


@pytest.mark.parametrize("seed", [0, 1])
@pytest.mark.parametrize(("screen", "full_swaps"), [(None, True), (3, True), (3, False)])
def test_recovers_the_true_ten_of_fifty(seed, screen, full_swaps):
    s = truth(seed)
    true = s.weights != 0
    mask, objective, w, record = search_support(
        budget_refit(s.X, s.y), 50, 10, screen=screen, full_swaps=full_swaps
    )
    assert np.array_equal(mask, true)
    np.testing.assert_allclose(w, s.weights, atol=0.02)  # noise 0.001 against returns of ~0.03
    oracle_objective, oracle_w = budget_ls(s.X, s.y, true)
    assert objective == oracle_objective and w.tolist() == oracle_w.tolist()
    assert record.chosen == tuple(np.flatnonzero(true)) and record.objective == objective
    assert record.uncapped_objective == budget_ls(s.X, s.y, np.ones(50, bool))[0]
    assert record.uncapped_objective <= objective and record.removed_small == ()
    assert record.start in ("forward selection", "lasso path")


# --- search invariants ------------------------------------------------------------------------


@pytest.mark.parametrize("seed", [3, 4, 5])
@pytest.mark.parametrize("screen", [None, 2])
def test_result_is_swap_optimal(seed, screen):
    s = factor_sample(seed, 60, 14, n_held=7, noise=0.004)
    refit = budget_refit(s.X, s.y)
    mask, objective, _, record = search_support(refit, 14, 4, screen=screen, full_swaps=True)
    assert np.count_nonzero(mask) <= 4 and record.start != "uncapped fit"
    # Every single swap, exhaustively: none lowers the objective beyond the 1e-10 tolerance.
    swaps = [refit(m)[0] for m in _swap_neighbours(14, record.chosen)]
    assert len(swaps) == 4 * 10
    assert min(swaps) >= objective * (1 - 1e-10)


def test_deterministic():
    s = truth(1, noise=0.01)
    runs = [search_support(budget_refit(s.X, s.y), 50, 7, screen=s_) for s_ in (None, None, 4, 4)]
    for a, b in (runs[:2], runs[2:]):
        assert np.array_equal(a[0], b[0]) and a[1] == b[1]
        assert a[2].tobytes() == b[2].tobytes() and a[3] == b[3]


def test_eligible_respected():
    s = truth(0)
    true = np.flatnonzero(s.weights)
    eligible = np.ones(50, dtype=bool)
    eligible[true[:3]] = False
    seen = []

    def refit(mask):
        seen.append(mask.copy())
        return budget_ls(s.X, s.y, mask)

    mask, objective, w, record = search_support(refit, 50, 10, eligible=eligible)
    assert not np.any(mask & ~eligible) and np.all(w[~eligible] == 0)
    assert not any(np.any(m & ~eligible) for m in seen)  # never even tried
    assert np.count_nonzero(mask) <= 10
    swaps = [budget_ls(s.X, s.y, m)[0] for m in _swap_neighbours(50, record.chosen, eligible)]
    assert min(swaps) >= objective * (1 - 1e-10)


def test_infeasible_supports_are_skipped():
    # A limit the refit enforces: at least one name of a group outside the true support, and at
    # least 3 names. Supersets of feasible supports stay feasible, as for real limits.
    s = truth(2)
    group = np.zeros(50, dtype=bool)
    group[np.flatnonzero(s.weights == 0)[-10:]] = True

    def refit(mask):
        if not np.any(mask & group) or np.count_nonzero(mask) < 3:
            return np.inf, np.zeros(50)
        return budget_ls(s.X, s.y, mask)

    mask, objective, w, record = search_support(refit, 50, 10)
    assert np.isfinite(objective) and np.any(mask & group) and np.count_nonzero(mask) <= 10
    swaps = [refit(m)[0] for m in _swap_neighbours(50, record.chosen)]
    assert min(swaps) >= objective * (1 - 1e-10)


def test_every_support_infeasible_is_an_error():
    s = truth(2)

    def refit(mask):  # feasible only with more than 5 names
        return (np.inf, np.zeros(50)) if mask.sum() <= 5 else budget_ls(s.X, s.y, mask)

    with pytest.raises(SolverError, match="no 5 names or fewer satisfy the other limits"):
        search_support(refit, 50, 5)
    with pytest.raises(SolverError, match="cannot be met even with every eligible name"):
        search_support(lambda m: (np.inf, np.zeros(50)), 50, 5)


@pytest.mark.parametrize("held", [3, 8])
def test_tiny_problems_against_every_support(held):
    # p=8, K=3: all 56 supports. With the benchmark built from 3 names the search finds the best
    # support in every seed; built from all 8, in 48 of 50 (measured): forward selection and
    # one-at-a-time swaps can stop at a support that only a double swap improves. Each miss is
    # still swap-optimal.
    found, misses = 0, []
    for seed in range(50):
        X, y = tiny(seed, held)
        best = min(budget_ls(X, y, _mask(8, c))[0] for c in itertools.combinations(range(8), 3))
        mask, objective, _, record = search_support(budget_refit(X, y), 8, 3)
        if objective <= best * (1 + 1e-10):
            found += 1
        else:
            misses.append(seed)
            swaps = [budget_ls(X, y, m)[0] for m in _swap_neighbours(8, record.chosen)]
            assert min(swaps) >= objective * (1 - 1e-10)
    assert found == (50 if held == 3 else 48), misses


def test_no_search_when_the_cap_is_not_below_the_uncapped_fit():
    s = truth(0)
    full_obj, full_w = budget_ls(s.X, s.y, np.ones(50, bool))
    held = int(np.count_nonzero(full_w))
    assert 10 < held < 50
    mask, objective, w, record = search_support(budget_refit(s.X, s.y), 50, held)
    assert record.evaluations == 1 and record.swaps == 0 and record.start == "uncapped fit"
    assert objective == full_obj == record.uncapped_objective
    assert w.tolist() == full_w.tolist() and np.array_equal(mask, full_w != 0)


def test_evaluations_are_counted_and_each_support_solved_once():
    s = truth(1)
    calls = []

    def refit(mask):
        calls.append(frozenset(np.flatnonzero(mask).tolist()))
        return budget_ls(s.X, s.y, mask)

    shared = CachedRefit(refit, 50)
    mask, objective, w, record = search_support(shared, 50, 10)
    assert record.evaluations == len(calls) == len(set(calls)) == shared.evaluations
    # Forward selection alone needs 50 + 49 + ... + 41 refits.
    assert record.evaluations > sum(range(41, 51))
    again = search_support(shared, 50, 10)
    assert again[3].evaluations == 0 and again[1] == objective and len(calls) == len(set(calls))
    # The minimum-size step reuses the cache for the support it was given.
    _, obj2, _, removed = enforce_min_position(shared, mask, w, 1e-9)
    assert removed == () and obj2 == objective and len(calls) == record.evaluations


def test_a_winning_start_is_used_and_recorded():
    # An empty start grows into the forward-selection support itself: a tie, which goes to
    # forward selection. Started at the truth, which forward selection alone misses before
    # its swap, the start wins.
    s = truth(0)
    true = s.weights != 0
    plain = search_support(budget_refit(s.X, s.y), 50, 10)[3]
    _, _, _, record = search_support(budget_refit(s.X, s.y), 50, 10, starts=[np.zeros(50, bool)])
    assert record.start == "forward selection" and record == plain
    _, _, _, record = search_support(budget_refit(s.X, s.y), 50, 10, starts=[true])
    assert record.start == "lasso path" and record.chosen == tuple(np.flatnonzero(true))
    assert record.swaps == 0 and plain.swaps == 1 and record.objective == plain.objective
    # Seed 30 of the tiny problems is one where forward selection and swaps miss the best
    # support (see above); started there, the search keeps it and says the start won.
    X, y = tiny(30, 8)
    _, objective, _, _ = search_support(budget_refit(X, y), 8, 3)
    best = min(itertools.combinations(range(8), 3), key=lambda c: budget_ls(X, y, _mask(8, c))[0])
    _, objective2, _, record2 = search_support(budget_refit(X, y), 8, 3, starts=[_mask(8, best)])
    assert objective2 < objective and record2.start == "lasso path"
    assert record2.chosen == best and record2.swaps == 0


# --- the lasso-path support -------------------------------------------------------------------


def _lars_supports(data, positive):
    """Supports of scikit-learn's exact LARS lasso path, decreasing penalty, with their ranges."""
    # scikit-learn lars_path_gram(method="lasso"): the exact piecewise-linear lasso path.
    alphas, _, coefs = lars_path_gram(
        Xy=data.xty,
        Gram=data.gram,
        n_samples=1,
        method="lasso",
        positive=positive,
        alpha_min=0.0,
        max_iter=10_000,
    )
    out = []  # (support, highest penalty, lowest penalty) of every breakpoint and segment
    for k in range(coefs.shape[1]):
        out.append((coefs[:, k] != 0, alphas[k], alphas[k]))
        if k + 1 < coefs.shape[1]:
            out.append(((coefs[:, k] + coefs[:, k + 1]) / 2 != 0, alphas[k], alphas[k + 1]))
    return out


LARS_CASES = [
    (seed, shape, positive, (1, 4, 12))
    for seed in (0, 1, 2)
    for shape in ((120, 20), (40, 60))
    for positive in (False, True)
] + [
    # A scan of seeds 0-29 found these two, where the path holds 12 names or fewer at its
    # least-penalized stretch within the cap for less than a grid step (4.6 % and 1.0 % of the
    # penalty): the grid misses it, as documented, and returns an earlier stretch.
    (18, (40, 60), False, (12,)),
    (20, (40, 60), False, (12,)),
]


@pytest.mark.parametrize(("seed", "shape", "positive", "caps"), LARS_CASES)
def test_lasso_path_support_against_lars(seed, shape, positive, caps):
    s = factor_sample(seed, *shape, n_short=3)
    data = standardized_gram(s.X, s.y, fit_scaling(s.X, s.y))
    points = _lars_supports(data, positive)
    for K in caps:
        support = lasso_path_support(data, K, positive=positive)
        assert support.shape == (shape[1],) and support.dtype == bool
        assert np.count_nonzero(support) <= K
        # It is a point of the exact path ...
        assert any(np.array_equal(support, p[0]) for p in points)
        # ... and the least-penalized one within the cap, unless that one lies in a stretch of
        # the path within the cap narrower than the grid step (1.122 = 10 ** (1 / 20)).
        last = max(k for k, p in enumerate(points) if p[0].sum() <= K)
        if not np.array_equal(support, points[last][0]):
            first = last
            while first > 0 and points[first - 1][0].sum() <= K:
                first -= 1
            assert points[first][1] / points[last][2] < 10 ** (1 / 20)
        assert np.array_equal(support, points[last][0]) == (seed not in (18, 20))


def test_lasso_path_support_edges():
    s = factor_sample(1, 120, 20, n_short=3)
    data = standardized_gram(s.X, s.y, fit_scaling(s.X, s.y))
    # With room for every name, the least-penalized grid point: 1e-6 alpha_max.
    assert np.count_nonzero(lasso_path_support(data, 20, positive=False)) == 20
    negative = GramData(data.gram, -np.abs(data.xty), data.yty, data.n, data.columns)
    assert not lasso_path_support(negative, 5, positive=True).any()  # nothing can enter


# --- minimum position size --------------------------------------------------------------------


@pytest.mark.parametrize(("seed", "size"), [(0, 0.04), (0, 0.06), (3, 0.06)])
def test_min_position_removes_small_weights_and_refits(seed, size):
    s = factor_sample(seed, 120, 30, n_held=12, noise=0.003)
    _, w = budget_ls(s.X, s.y, np.ones(30, bool))
    start = w != 0
    assert np.any((w > 0) & (w < size))
    mask, objective, w2, removed = enforce_min_position(budget_refit(s.X, s.y), start, w, size)
    assert not np.any((np.abs(w2) > 0) & (np.abs(w2) < size))
    assert removed and all(start[j] and not mask[j] for j in removed)
    # The weights are a refit on what is left, not the old weights with holes in them.
    ref_obj, ref_w = budget_ls(s.X, s.y, start & ~_mask(30, removed))
    assert objective == ref_obj and w2.tolist() == ref_w.tolist()
    assert w2.sum() == pytest.approx(1.0, abs=1e-14) and np.array_equal(mask, w2 != 0)
    # One at a time keeps more names and tracks better than removing every small one at once
    # (repeated until none is left), on these seeds.
    at_once = start.copy()
    obj3, w3 = objective, w
    while np.any((w3 > 0) & (w3 < size)):
        at_once &= ~((w3 > 0) & (w3 < size))
        obj3, w3 = budget_ls(s.X, s.y, at_once)
    assert np.count_nonzero(w2) > np.count_nonzero(w3) and objective < obj3


def test_min_position_with_nothing_to_remove():
    s = truth(0)
    _, w = budget_ls(s.X, s.y, s.weights != 0)
    mask, objective, w2, removed = enforce_min_position(
        budget_refit(s.X, s.y), s.weights != 0, w, w[w > 0].min()
    )
    assert removed == () and w2.tolist() == w.tolist() and np.array_equal(mask, w != 0)
    assert objective == budget_ls(s.X, s.y, s.weights != 0)[0]


def test_min_position_infeasible_after_removal_is_an_error():
    s = factor_sample(0, 120, 30, n_held=12, noise=0.003)
    _, w = budget_ls(s.X, s.y, np.ones(30, bool))

    def refit(mask):  # feasible only with at least 12 names
        return (np.inf, np.zeros(30)) if mask.sum() < 12 else budget_ls(s.X, s.y, mask)

    with pytest.raises(SolverError, match="left 11 names, on which the other limits cannot be met"):
        enforce_min_position(refit, w != 0, w, 0.06)


# --- parameter checks -------------------------------------------------------------------------

_P = 6
_W = np.array([0.5, 0.5, 0, 0, 0, 0])
_M = _W != 0


def _ok(mask):
    return 1.0, np.zeros(_P)


def _search(*args, **kwargs):
    return lambda: search_support(*args, **kwargs)


def _min_pos(*args):
    return lambda: enforce_min_position(*args)


_CALLED = r"parameter of search_support must be an int >= 1\."
BAD_CALLS = [
    (_search(_ok, _P, 0), r"The 'max_names' " + _CALLED + r" Got 0\."),
    (_search(_ok, _P, 2.0), r"The 'max_names' " + _CALLED + r" Got 2\.0\."),
    (_search(_ok, _P, True), r"The 'max_names' " + _CALLED + r" Got True\."),
    (_search(_ok, 0, 2), r"The 'n_assets' " + _CALLED + r" Got 0\."),
    (_search(_ok, _P, 2, screen=0), r"The 'screen' " + _CALLED + r" Got 0\."),
    (
        _search(_ok, _P, 2, eligible=np.ones(5, bool)),
        r"The 'eligible' parameter of search_support must be a bool array of shape \(6,\)\. "
        r"Got dtype bool, shape \(5,\)\.",
    ),
    (_search(_ok, _P, 2, eligible=np.ones(_P)), r"'eligible' .* Got dtype float64, shape \(6,\)"),
    (
        _search(_ok, _P, 1, starts=[_M]),
        r"The 'starts\[0\]' parameter of search_support must hold at most 1 names, all "
        r"eligible\. Got 2 names, 0 not eligible\.",
    ),
    (
        _search(_ok, _P, 2, starts=[_M], eligible=~_M),
        r"'starts\[0\]' .* Got 2 names, 2 not eligible",
    ),
    (_search(CachedRefit(_ok, 5), _P, 2), r"the CachedRefit was made for 5 names, not 6"),
    (
        _search(lambda m: (1.0, np.ones(_P)), _P, 2),
        r"refit broke its contract on support \[0\]: .* exactly 0 off the mask",
    ),
    (_search(lambda m: (np.nan, np.zeros(_P)), _P, 2), r"the objective must not be NaN"),
    (
        _search(lambda m: (1.0, np.zeros(3)), _P, 2),
        r"refit returned weights of shape \(3,\); expected \(6,\)",
    ),
    (
        lambda: lasso_path_support(None, 0, positive=True),
        r"The 'max_names' parameter of lasso_path_support must be an int >= 1\. Got 0\.",
    ),
    (
        _min_pos(_ok, _M, _W, 0.0),
        r"The 'min_position' parameter of enforce_min_position must be a finite number > 0\. "
        r"Got 0\.0\.",
    ),
    (_min_pos(_ok, _M, _W, -0.1), r"'min_position' .* Got -0\.1\."),
    (_min_pos(_ok, _M, _W, np.inf), r"'min_position' .* Got inf\."),
    (_min_pos(_ok, _M, _W, np.nan), r"'min_position' .* Got nan\."),
    (
        _min_pos(_ok, _M.astype(int), _W, 0.1),
        r"The 'mask' parameter of enforce_min_position must be a 1-d bool array\. "
        r"Got dtype int64, shape \(6,\)\.",
    ),
    (
        _min_pos(_ok, _M, _W[:5], 0.1),
        r"The 'weights' parameter of enforce_min_position must have shape \(6,\) and be "
        r"exactly 0 off the mask\. Got shape \(5,\)\.",
    ),
    (_min_pos(_ok, _M, _W[::-1], 0.1), r"'weights' .* exactly 0 off the mask"),
]


@pytest.mark.parametrize(("call", "message"), BAD_CALLS)
def test_bad_parameters(call, message):
    with pytest.raises(ValueError, match=message):
        call()
