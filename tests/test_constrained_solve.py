"""The constrained engine against scipy, the unconstrained core, and its own KKT conditions.

References are written here from scratch in original units (weights held), so they also check
the scaling conventions: with ``x_scale = std(X, ddof=0)``, ``y_scale = std(y, ddof=0)`` and
``d = y_scale / x_scale``, the standardized objective of weights ``w`` is
``(1/2n) |y - Xw|^2 / y_scale^2 + l1 sum |w/d| + 0.5 l2 sum (w/d)^2 + tau sum |(w - w_cur)/d|``.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import optimize
from synthetic import factor_sample

from trackfit.core.constrained import RIDGE_FOR_UNIQUENESS, solve_limited
from trackfit.core.constrained import solve as solve_module
from trackfit.core.fit import fit_penalized
from trackfit.core.gram import standardized_gram
from trackfit.core.limits import GroupLimit, Limits
from trackfit.core.scaling import fit_scaling
from trackfit.core.solvers import ExactPathSolver
from trackfit.errors import SolverError


def _setup(seed: int, n: int, p: int, **kw):
    s = factor_sample(seed, n, p, n_short=kw.pop("n_short", 2), **kw)
    scaling = fit_scaling(s.X, s.y)
    return s.X, s.y, scaling, standardized_gram(s.X, s.y, scaling)


def _objective_original(X, y, w, alpha, l1_ratio, limits, ridge=0.0):
    """The standardized objective computed from the raw rows and original-unit weights."""
    n = len(y)
    x_scale, y_scale = X.std(axis=0), y.std()
    b = w * x_scale / y_scale
    l1, l2 = alpha * l1_ratio, alpha * (1 - l1_ratio)
    value = 0.5 * np.mean((y - X @ w) ** 2) / y_scale**2 + l1 * np.abs(b).sum()
    value += 0.5 * (l2 + ridge) * (b @ b)
    if limits.turnover_penalty:
        b_cur = limits.current * x_scale / y_scale
        value += limits.turnover_penalty * np.abs(b - b_cur).sum()
    return float(value) if n else 0.0


def _slsqp(X, y, alpha, l1_ratio, limits, ridge=0.0):
    """Reference: scipy's SLSQP on the smooth split ``w = wp - wm``, ``w - w_cur = vp - vm``.

    Source: scipy.optimize.minimize(method="SLSQP") (Kraft's sequential least squares QP).
    """
    n, p = X.shape
    x_scale, y_scale = X.std(axis=0), y.std()
    inv_d = x_scale / y_scale
    l1, l2 = alpha * l1_ratio, alpha * (1 - l1_ratio)
    cur = limits.current if limits.current is not None else np.zeros(p)
    tau = limits.turnover_penalty
    Q = X.T @ X / (n * y_scale**2) + (l2 + ridge) * np.diag(inv_d**2)
    lin = X.T @ y / (n * y_scale**2)
    const = 0.5 * np.mean(y**2) / y_scale**2

    def parts(z):
        wp, wm, vp, vm = z[:p], z[p : 2 * p], z[2 * p : 3 * p], z[3 * p :]
        return wp - wm, wp, wm, vp, vm

    def f(z):
        w, wp, wm, vp, vm = parts(z)
        return 0.5 * w @ Q @ w - lin @ w + const + l1 * inv_d @ (wp + wm) + tau * inv_d @ (vp + vm)

    def grad(z):
        w = parts(z)[0]
        g = Q @ w - lin
        return np.concatenate([g + l1 * inv_d, -g + l1 * inv_d, tau * inv_d, tau * inv_d])

    cons = [{"type": "eq", "fun": lambda z: parts(z)[0] - cur - (parts(z)[3] - parts(z)[4])}]
    ineq = []
    if limits.budget is not None:
        lo, hi = limits.budget
        if lo == hi:
            cons.append({"type": "eq", "fun": lambda z: np.array([parts(z)[0].sum() - hi])})
        else:
            ineq += [lambda w: w.sum() - lo, lambda w: hi - w.sum()]
    for g in limits.groups:
        idx = list(g.members)
        if g.lower is not None:
            ineq.append(lambda w, idx=idx, lo=g.lower: w[idx].sum() - lo)
        if g.upper is not None:
            ineq.append(lambda w, idx=idx, hi=g.upper: hi - w[idx].sum())
    if limits.lower is not None:
        ineq.append(lambda w: w - limits.lower)
    if limits.upper is not None:
        ineq.append(lambda w: limits.upper - w)
    if limits.long_only:
        ineq.append(lambda w: w)
    if limits.max_turnover is not None:
        ineq.append(
            lambda z: np.array([limits.max_turnover - (parts(z)[3] + parts(z)[4]).sum() / 2])
        )
        turnover_fun = ineq.pop()
        cons.append({"type": "ineq", "fun": turnover_fun})
    for fun in ineq:
        cons.append({"type": "ineq", "fun": lambda z, fun=fun: np.atleast_1d(fun(parts(z)[0]))})
    w0 = cur.copy() if limits.current is not None else np.zeros(p)
    z0 = np.concatenate([np.maximum(w0, 0), np.maximum(-w0, 0), np.zeros(2 * p)])
    res = optimize.minimize(
        f,
        z0,
        jac=grad,
        method="SLSQP",
        bounds=[(0, None)] * (4 * p),
        constraints=cons,
        options={"ftol": 1e-13, "maxiter": 2000},
    )
    assert res.success, res.message
    return parts(res.x)[0], float(res.fun)


def _groups(p):
    return (
        GroupLimit("north", tuple(range(0, p // 3)), 0.15, 0.35),
        GroupLimit("south", tuple(range(p // 3, 2 * p // 3)), None, 0.3),
    )


SLSQP_CASES = [
    # (seed, n, p, alpha, l1_ratio, limits-builder)
    (1, 60, 8, 0.002, 1.0, lambda p: Limits(budget=(1.0, 1.0), long_only=True)),
    (
        2,
        60,
        10,
        0.001,
        0.5,
        lambda p: Limits(
            budget=(0.95, 1.0), upper=np.full(p, 0.2), lower=np.full(p, -0.05), groups=_groups(p)
        ),
    ),
    (
        3,
        80,
        12,
        0.0005,
        1.0,
        lambda p: Limits(budget=(1.0, 1.0), groups=_groups(p), upper=np.full(p, 0.3)),
    ),
    (
        4,
        60,
        10,
        0.001,
        0.5,
        lambda p: Limits(current=np.full(p, 1.0 / p), max_turnover=0.15, budget=(1.0, 1.0)),
    ),
    (
        5,
        70,
        12,
        0.001,
        1.0,
        lambda p: Limits(
            current=np.full(p, 1.0 / p), turnover_penalty=0.002, long_only=True, budget=(0.9, 1.0)
        ),
    ),
    (
        6,
        90,
        15,
        0.0002,
        0.0,
        lambda p: Limits(
            current=np.full(p, 1.0 / p),
            max_turnover=0.2,
            turnover_penalty=0.001,
            groups=_groups(p),
            upper=np.full(p, 0.25),
            budget=(1.0, 1.0),
        ),
    ),
]


@pytest.mark.parametrize("seed,n,p,alpha,l1_ratio,make", SLSQP_CASES)
def test_matches_slsqp_objective(seed, n, p, alpha, l1_ratio, make):
    X, y, scaling, data = _setup(seed, n, p)
    limits = make(p)
    sol = solve_limited(data, scaling, alpha, l1_ratio, limits)
    w_ref, f_ref = _slsqp(X, y, alpha, l1_ratio, limits, ridge=sol.ridge_added)
    f_ours = _objective_original(X, y, sol.weights, alpha, l1_ratio, limits, sol.ridge_added)
    # Source: scipy SLSQP; the two objectives agree to 1e-6 and ours is never worse.
    assert abs(sol.objective - f_ref) <= 1e-6
    assert f_ours == pytest.approx(sol.objective, abs=1e-12)
    assert sol.objective <= f_ref + 1e-10
    assert np.max(np.abs(sol.weights - w_ref)) < 1e-3
    assert sol.kkt_residual < 1e-8


@pytest.mark.parametrize("alpha,l1_ratio", [(0.002, 1.0), (0.001, 0.5), (0.01, 0.0), (0.0, 1.0)])
def test_long_only_matches_nnls(alpha, l1_ratio):
    X, y, scaling, data = _setup(11, 80, 12)
    sol = solve_limited(data, scaling, alpha, l1_ratio, Limits(long_only=True))
    # Source: scipy.optimize.nnls (Lawson & Hanson). min 0.5 b'(G + l2 I)b - (c - l1)'b, b >= 0
    # is 0.5 |R b - z|^2 with R'R = G + l2 I (Cholesky) and R'z = c - l1.
    l1, l2 = alpha * l1_ratio, alpha * (1 - l1_ratio)
    G, c = data.gram, data.xty
    R = np.linalg.cholesky(G + l2 * np.eye(len(c))).T
    z = np.linalg.solve(R.T, c - l1)
    b_ref, _ = optimize.nnls(R, z)
    assert np.max(np.abs(sol.coef_std - b_ref)) < 1e-8
    assert np.array_equal(sol.weights == 0, b_ref == 0)


def test_long_only_least_squares_matches_nnls_on_rows():
    X, y, scaling, data = _setup(12, 50, 9)
    sol = solve_limited(data, scaling, 0.0, 1.0, Limits(long_only=True))
    # Source: scipy.optimize.nnls on the scaled rows themselves (alpha = 0 is plain NNLS).
    x_scale, y_scale = X.std(axis=0), y.std()
    b_ref, _ = optimize.nnls(X / x_scale, y / y_scale)
    assert np.max(np.abs(sol.coef_std - b_ref)) < 1e-8


LOOSE = [
    Limits(),
    Limits(budget=(-50.0, 50.0), lower=np.full(10, -20.0), upper=np.full(10, 20.0)),
    Limits(groups=(GroupLimit("all", tuple(range(10)), -30.0, 30.0),)),
    Limits(current=np.full(10, 0.1), max_turnover=1e3),
]


@pytest.mark.parametrize("limits", LOOSE)
@pytest.mark.parametrize("alpha,l1_ratio", [(0.002, 1.0), (0.001, 0.5), (0.01, 0.0)])
def test_no_limit_active_equals_unconstrained_core(limits, alpha, l1_ratio):
    X, y, scaling, data = _setup(21, 60, 10)
    sol = solve_limited(data, scaling, alpha, l1_ratio, limits)
    ref = fit_penalized(X, y, alpha, l1_ratio)
    assert np.max(np.abs(sol.weights - ref.weights)) < 1e-8
    assert np.array_equal(sol.weights == 0, ref.weights == 0)
    assert sol.ridge_added == 0.0
    assert all(not s.binding for s in sol.statuses)


def test_long_only_alone_equals_positive_path():
    X, y, scaling, data = _setup(22, 60, 12, n_short=4)
    sol = solve_limited(data, scaling, 0.001, 0.75, Limits(long_only=True))
    ref = ExactPathSolver().path(data, np.array([0.001]), 0.75, positive=True)
    assert np.max(np.abs(sol.coef_std - ref.coefs[0])) < 1e-8


def _smooth_kkt(data, scaling, sol, alpha, l1_ratio, limits):
    """KKT of the smooth form ``min 0.5 x'Px + q'x, A x <= h, E x = e`` with x = (b, t, u).

    Multipliers of the tight inequalities by scipy.optimize.lsq_linear with bounds >= 0
    (equalities free); returns the stationarity residual, the most negative multiplier and the
    largest multiplier * slack, over max|c|.
    """
    G, c = data.gram, data.xty
    k = len(c)
    cols = data.columns
    d = scaling.y_scale / scaling.x_scale[cols]
    l1, l2 = alpha * l1_ratio, alpha * (1 - l1_ratio)
    tau = limits.turnover_penalty
    cur = (limits.current[cols] if limits.current is not None else np.zeros(k)) / d
    b = sol.coef_std
    t, u = np.abs(b), np.abs(b - cur)
    x = np.concatenate([b, t, u])
    I, Z = np.eye(k), np.zeros((k, k))
    P = np.block([[G + (l2 + sol.ridge_added) * I, Z, Z], [Z, Z, Z], [Z, Z, Z]])
    q = np.concatenate([-c, np.full(k, l1), np.full(k, tau)])
    A = [np.hstack(blocks) for blocks in ([I, -I, Z], [-I, -I, Z], [I, Z, -I], [-I, Z, -I])]
    h = [np.zeros(k), np.zeros(k), cur, -cur]
    E, e = [], []

    def row(coef_b, coef_u=None):
        out = np.zeros(3 * k)
        out[:k] = coef_b
        if coef_u is not None:
            out[2 * k :] = coef_u
        return out

    lo = limits.lower[cols] if limits.lower is not None else np.full(k, -np.inf)
    hi = limits.upper[cols] if limits.upper is not None else np.full(k, np.inf)
    if limits.long_only:
        lo = np.maximum(lo, 0.0)
    for j in range(k):
        if np.isfinite(hi[j]):
            A.append(row(np.eye(k)[j] * d[j])[None]), h.append(np.array([hi[j]]))
        if np.isfinite(lo[j]):
            A.append(-row(np.eye(k)[j] * d[j])[None]), h.append(np.array([-lo[j]]))
    sums = []
    if limits.budget is not None:
        sums.append((np.ones(k), *limits.budget))
    for g in limits.groups:
        mask = np.isin(cols, g.members).astype(float)
        sums.append((mask, g.lower, g.upper))
    for mask, glo, ghi in sums:
        a = row(mask * d)
        if glo is not None and glo == ghi:
            E.append(a), e.append(ghi)
            continue
        if ghi is not None:
            A.append(a[None]), h.append(np.array([ghi]))
        if glo is not None:
            A.append(-a[None]), h.append(np.array([-glo]))
    if limits.max_turnover is not None:
        A.append(row(np.zeros(k), 0.5 * d)[None]), h.append(np.array([limits.max_turnover]))
    A, h = np.vstack(A), np.concatenate(h)
    slack = h - A @ x
    tight = slack <= 1e-9
    M = np.vstack([A[tight]] + ([np.array(E)] if E else [])).T
    grad = P @ x + q
    lower = np.concatenate([np.zeros(int(tight.sum())), np.full(len(E), -np.inf)])
    res = optimize.lsq_linear(M, -grad, bounds=(lower, np.inf), method="bvls", tol=1e-15)
    mult = np.zeros(len(h))
    mult[tight] = res.x[: int(tight.sum())]
    scale = np.max(np.abs(c))
    stationarity = np.max(np.abs(M @ res.x + grad)) / scale
    complementarity = float(np.max(np.abs(mult * slack))) / scale
    return stationarity, float(np.min(mult, initial=0.0)), complementarity


KKT_CASES = [
    (
        31,
        60,
        12,
        0.001,
        1.0,
        lambda p: Limits(long_only=True, budget=(1.0, 1.0), upper=np.full(p, 0.25)),
    ),
    (
        32,
        60,
        12,
        0.002,
        0.5,
        lambda p: Limits(budget=(0.9, 1.0), groups=_groups(p), lower=np.full(p, -0.1)),
    ),
    (
        33,
        60,
        12,
        0.001,
        1.0,
        lambda p: Limits(
            current=np.full(p, 1 / p), max_turnover=0.1, turnover_penalty=0.001, budget=(1.0, 1.0)
        ),
    ),
    (
        34,
        40,
        12,
        0.0005,
        0.0,
        lambda p: Limits(long_only=True, groups=_groups(p), budget=(1.0, 1.0)),
    ),
]


@pytest.mark.parametrize("seed,n,p,alpha,l1_ratio,make", KKT_CASES)
def test_kkt_conditions_hold(seed, n, p, alpha, l1_ratio, make):
    X, y, scaling, data = _setup(seed, n, p)
    limits = make(p)
    sol = solve_limited(data, scaling, alpha, l1_ratio, limits)
    stationarity, most_negative, complementarity = _smooth_kkt(
        data, scaling, sol, alpha, l1_ratio, limits
    )
    assert stationarity < 1e-9  # a dual-feasible multiplier makes the gradient vanish
    assert most_negative >= -1e-12  # dual feasibility (bvls keeps its bounds to rounding)
    assert complementarity < 1e-9  # multipliers only on tight limits
    assert sol.kkt_residual < 1e-8


LIMIT_CASES = [
    (41, lambda p: Limits(long_only=True, budget=(1.0, 1.0), upper=np.full(p, 0.12))),
    (
        42,
        lambda p: Limits(
            budget=(0.95, 1.0), lower=np.full(p, -0.03), upper=np.full(p, 0.2), groups=_groups(p)
        ),
    ),
    (
        43,
        lambda p: Limits(
            long_only=True, current=np.full(p, 1 / p), max_turnover=0.08, budget=(1.0, 1.0)
        ),
    ),
    (
        44,
        lambda p: Limits(
            long_only=True,
            groups=(GroupLimit("north", tuple(range(5)), 0.4, 0.4),),
            budget=(1.0, 1.0),
        ),
    ),
]


def _limit_values(w, limits):
    """Every limit computed from scratch: (kind, target, bound, value) with value <= bound form."""
    out = []
    if limits.long_only:
        out += [("long_only", j, 0.0, -w[j]) for j in range(len(w))]
    if limits.lower is not None:
        out += [("lower", j, -limits.lower[j], -w[j]) for j in range(len(w))]
    if limits.upper is not None:
        out += [("upper", j, limits.upper[j], w[j]) for j in range(len(w))]
    for g in limits.groups:
        total = sum(w[j] for j in g.members)
        if g.lower is not None:
            out.append(("group_min", g.name, -g.lower, -total))
        if g.upper is not None:
            out.append(("group_max", g.name, g.upper, total))
    if limits.budget is not None:
        out.append(("budget_min", None, -limits.budget[0], -w.sum()))
        out.append(("budget_max", None, limits.budget[1], w.sum()))
    if limits.max_turnover is not None:
        turnover = np.abs(w - limits.current).sum() / 2
        out.append(("max_turnover", None, limits.max_turnover, turnover))
    return out


@pytest.mark.parametrize("seed,make", LIMIT_CASES)
def test_every_limit_holds_and_zeros_are_exact(seed, make):
    X, y, scaling, data = _setup(seed, 60, 15)
    limits = make(15)
    sol = solve_limited(data, scaling, 0.001, 1.0, limits)
    for kind, target, bound, value in _limit_values(sol.weights, limits):
        assert value <= bound + 1e-9, (kind, target, value, bound)
    w = sol.weights
    assert not np.any(np.signbit(w) & (w == 0))  # never -0.0
    assert np.all((w == 0) | (np.abs(w) > 1e-9))  # a zero is 0.0, not 1e-13
    if limits.upper is not None:  # a weight at its maximum is that maximum, exactly
        at_max = np.abs(w - limits.upper) < 1e-9
        assert np.array_equal(w[at_max], limits.upper[at_max])
    for s in sol.statuses:
        if s.binding:
            assert s.slack == 0.0
        else:
            assert s.slack > 1e-9
    assert any(s.binding for s in sol.statuses)


def test_statuses_are_in_the_documented_order():
    X, y, scaling, data = _setup(42, 60, 15)
    limits = LIMIT_CASES[1][1](15)
    sol = solve_limited(data, scaling, 0.001, 1.0, limits)
    kinds = [s.kind for s in sol.statuses]
    assert kinds[:2] == ["lower", "upper"] and sol.statuses[0].target == 0
    assert kinds[30:] == ["group_min", "group_max", "group_max", "budget_min", "budget_max"]


def test_turnover_cap_zero_keeps_current_holdings_exactly():
    X, y, scaling, data = _setup(51, 60, 12)
    current = np.random.default_rng(5).dirichlet(np.ones(12))
    limits = Limits(long_only=True, budget=(1.0, 1.0), current=current, max_turnover=0.0)
    sol = solve_limited(data, scaling, 0.001, 1.0, limits)
    assert np.array_equal(sol.weights, current)
    binding = [s.kind for s in sol.statuses if s.binding]
    assert binding == ["budget_min", "budget_max", "max_turnover"]  # holdings sum to 1


def test_turnover_cap_that_does_not_bind_returns_the_uncapped_fit():
    X, y, scaling, data = _setup(52, 60, 12)
    current = np.full(12, 1 / 12)
    uncapped = Limits(budget=(1.0, 1.0), current=current, turnover_penalty=0.0)
    free = solve_limited(data, scaling, 0.001, 1.0, uncapped)
    turnover = np.abs(free.weights - current).sum() / 2
    loose = Limits(budget=(1.0, 1.0), current=current, max_turnover=turnover + 0.05)
    capped = solve_limited(data, scaling, 0.001, 1.0, loose)
    assert np.max(np.abs(capped.weights - free.weights)) < 1e-10
    status = capped.statuses[-1]
    assert status.kind == "max_turnover" and not status.binding
    assert status.slack == pytest.approx(0.05, abs=1e-9)
    tight = Limits(budget=(1.0, 1.0), current=current, max_turnover=turnover / 2)
    half = solve_limited(data, scaling, 0.001, 1.0, tight)
    assert np.abs(half.weights - current).sum() / 2 == pytest.approx(turnover / 2, abs=1e-12)
    assert half.statuses[-1].binding and half.objective > free.objective


def test_turnover_counts_holdings_that_cannot_be_held():
    X, y, scaling, data = _setup(53, 60, 10)
    current = np.full(10, 0.1)
    support = np.ones(10, dtype=bool)
    support[:3] = False  # three names held now must be sold: 0.15 one-way before anything else
    limits = Limits(current=current, max_turnover=0.2, outside_turnover=0.01)
    sol = solve_limited(data, scaling, 0.001, 1.0, limits, support=support)
    assert np.all(sol.weights[:3] == 0.0)
    value = np.abs(sol.weights - current).sum() / 2 + 0.01
    assert value <= 0.2 + 1e-12 and sol.statuses[-1].value == pytest.approx(value, abs=1e-15)
    with pytest.raises(SolverError, match="below the turnover forced by selling"):
        solve_limited(
            data,
            scaling,
            0.001,
            1.0,
            Limits(current=current, max_turnover=0.1, outside_turnover=0.01),
            support=support,
        )


def test_support_restricts_the_names_held():
    X, y, scaling, data = _setup(54, 60, 12)
    support = np.zeros(12, dtype=bool)
    support[[1, 4, 7, 9]] = True
    limits = Limits(long_only=True, budget=(1.0, 1.0))
    sol = solve_limited(data, scaling, 0.0005, 1.0, limits, support=support)
    assert np.all(sol.weights[~support] == 0.0)
    # The same problem on the four columns' rows alone (source: scipy nnls is not needed here:
    # the restricted problem is the full problem of a smaller data set).
    sub_scaling = fit_scaling(X[:, support], y)
    sub = solve_limited(
        standardized_gram(X[:, support], y, sub_scaling),
        sub_scaling,
        0.0005,
        1.0,
        Limits(long_only=True, budget=(1.0, 1.0)),
    )
    assert np.max(np.abs(sol.weights[support] - sub.weights)) < 1e-12
    assert sol.objective == pytest.approx(sub.objective, abs=1e-12)


def test_zero_variance_constituent_gets_exactly_zero():
    X, y, scaling, data = _setup(55, 60, 8)
    X = X.copy()
    X[:, 3] = 0.004
    scaling = fit_scaling(X, y)
    data = standardized_gram(X, y, scaling)
    current = np.full(8, 0.125)
    limits = Limits(budget=(1.0, 1.0), current=current, max_turnover=0.3)
    sol = solve_limited(data, scaling, 0.001, 1.0, limits)
    assert sol.weights[3] == 0.0 and len(sol.coef_std) == 7
    assert sol.statuses[-1].value == pytest.approx(np.abs(sol.weights - current).sum() / 2)
    with pytest.raises(SolverError, match="constituent 3 has no variance.*exclude 0"):
        solve_limited(data, scaling, 0.001, 1.0, Limits(lower=np.full(8, 0.01)))


def test_more_names_than_rows_adds_a_ridge_and_is_unique():
    X, y, scaling, data = _setup(61, 15, 30, n_short=0)
    limits = Limits(long_only=True, budget=(1.0, 1.0), upper=np.full(30, 0.3))
    sol = solve_limited(data, scaling, 1e-4, 1.0, limits)
    assert sol.ridge_added == pytest.approx(RIDGE_FOR_UNIQUENESS * np.mean(np.diag(data.gram)))
    assert sol.kkt_residual < 1e-8
    # Unique: the same fit with the columns in reverse order gives the same weights reversed.
    rev = X[:, ::-1]
    rev_scaling = fit_scaling(rev, y)
    again = solve_limited(
        standardized_gram(rev, y, rev_scaling),
        rev_scaling,
        1e-4,
        1.0,
        Limits(long_only=True, budget=(1.0, 1.0), upper=np.full(30, 0.3)),
    )
    assert np.max(np.abs(again.weights[::-1] - sol.weights)) < 1e-9
    # Stable: a rounding-size change in the benchmark moves the weights by a rounding-size amount.
    y2 = y * (1 + 1e-12)
    scaling2 = fit_scaling(X, y2)
    moved = solve_limited(standardized_gram(X, y2, scaling2), scaling2, 1e-4, 1.0, limits)
    assert np.max(np.abs(moved.weights - sol.weights)) < 1e-7
    # With an L2 penalty the problem is strictly convex already: no ridge.
    assert solve_limited(data, scaling, 1e-4, 0.5, limits).ridge_added == 0.0


def test_same_input_gives_identical_bytes():
    X, y, scaling, data = _setup(71, 60, 15)
    limits = Limits(
        budget=(1.0, 1.0),
        groups=_groups(15),
        current=np.full(15, 1 / 15),
        max_turnover=0.1,
        turnover_penalty=0.001,
        upper=np.full(15, 0.2),
    )
    a = solve_limited(data, scaling, 0.001, 0.5, limits)
    b = solve_limited(data, scaling, 0.001, 0.5, limits)
    assert a.weights.tobytes() == b.weights.tobytes()
    assert a.coef_std.tobytes() == b.coef_std.tobytes()
    assert a.objective == b.objective and a.statuses == b.statuses


def test_conflict_found_by_the_solver_names_the_limits():
    X, y, scaling, data = _setup(72, 60, 9)
    # Overlapping groups (check_feasible cannot add them up): 0.6 + 0.6 - overlap 0.2 > 1.
    groups = (
        GroupLimit("north", (0, 1, 2, 3, 4), 0.6, None),
        GroupLimit("coast", (3, 4, 5, 6), 0.6, None),
    )
    limits = Limits(long_only=True, budget=(1.0, 1.0), groups=groups, upper=np.full(9, 0.1))
    with pytest.raises(SolverError, match=r"no weights satisfy.*group 'north' minimum 0\.6"):
        solve_limited(data, scaling, 0.001, 1.0, limits)


def test_polish_failure_falls_back_or_raises(monkeypatch):
    X, y, scaling, data = _setup(73, 60, 10)
    limits = Limits(long_only=True, budget=(1.0, 1.0))
    exact = solve_limited(data, scaling, 0.001, 1.0, limits)
    monkeypatch.setattr(solve_module, "polish", lambda prob, start: None)
    kept = solve_limited(data, scaling, 0.001, 1.0, limits)
    assert not kept.polished and kept.kkt_residual < 1e-8
    assert np.max(np.abs(kept.weights - exact.weights)) < 1e-8
    assert np.array_equal(kept.weights == 0, exact.weights == 0)
    monkeypatch.setattr(solve_module, "KKT_LIMIT", 1e-30)
    with pytest.raises(SolverError, match="could not be made exact.*limits tight there: long_only"):
        solve_limited(data, scaling, 0.001, 1.0, limits)


@pytest.mark.parametrize(
    "kwargs,match",
    [
        (
            {"alpha": -1.0},
            r"The 'alpha' parameter of solve_limited must be a finite number >= 0\. Got -1\.0\.",
        ),
        (
            {"l1_ratio": 1.5},
            r"The 'l1_ratio' parameter of solve_limited must be in \[0, 1\]\. Got 1\.5\.",
        ),
        (
            {"support": np.ones(3, dtype=bool)},
            r"The 'support' parameter of solve_limited must be a bool array of shape \(6,\)",
        ),
        (
            {"limits": Limits(upper=np.ones(5))},
            r"The 'limits.upper' parameter of solve_limited must be an array of shape \(6,\)",
        ),
        ({"limits": Limits(max_turnover=0.1)}, r"turnover limits need limits.current"),
    ],
)
def test_bad_parameters(kwargs, match):
    X, y, scaling, data = _setup(74, 30, 6)
    args = {"alpha": 0.001, "l1_ratio": 1.0, "limits": Limits(), "support": None} | kwargs
    with pytest.raises(ValueError, match=match):
        solve_limited(
            data, scaling, args["alpha"], args["l1_ratio"], args["limits"], support=args["support"]
        )


def _support(*held):
    mask = np.zeros(6, dtype=bool)
    mask[list(held)] = True
    return mask


@pytest.mark.parametrize(
    "limits,support,match",
    [
        (
            Limits(lower=np.full(6, 0.2), upper=np.full(6, 0.1)),
            None,
            r"constituent 0: its minimum weight 0\.2 is above its maximum 0\.1; change one of the "
            r"two",
        ),
        (
            Limits(lower=np.array([0.1, 0, 0, 0, 0, 0.0])),
            _support(1, 2),
            r"constituent 0 is outside the names allowed to be held, so it gets weight 0, but its "
            r"bounds \[0\.1, inf\] exclude 0",
        ),
        (
            Limits(current=np.full(6, 0.2), max_turnover=0.05),
            _support(0, 1, 2),
            r"max_turnover 0\.05 is below the turnover forced by selling holdings that cannot be "
            r"held \(0\.3: ",
        ),
        (
            Limits(current=np.full(6, 0.2), max_turnover=0.0, upper=np.full(6, 0.1)),
            None,
            r"max_turnover leaves no room to trade, but the current weight of constituent 0 "
            r"\(0\.2\) is outside its bounds \[-inf, 0\.1\]",
        ),
        (
            Limits(current=np.full(6, 0.2), max_turnover=0.0, budget=(1.0, 1.0)),
            None,
            r"no weights satisfy these limits together: max_turnover leaves no room to trade, and "
            r"the weights so fixed break budget_max; loosen one of them",
        ),  # holdings sum to 1.2
        (
            Limits(budget=(0.5, 1.0)),
            _support(),
            r"every weight is fixed by equal bounds or by the support, and the weights so fixed "
            r"break budget_min",
        ),
        (
            Limits(long_only=True, budget=(1.0, 1.0), upper=np.full(6, 0.1)),
            None,
            r"no weights satisfy these limits together: budget of 1; .*maximum weight 0\.1 of "
            r"constituent 0",
        ),
    ],
)
def test_infeasible_problems_say_which_limits(limits, support, match):
    X, y, scaling, data = _setup(75, 30, 6)
    with pytest.raises(SolverError, match=match):
        solve_limited(data, scaling, 0.001, 1.0, limits, support=support)
