"""One fit under mandate limits: interior point, exact polish, checks, back to original units."""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from trackfit.core.constrained.interior import solve_interior
from trackfit.core.constrained.optimality import kkt_residual, multipliers_lp, settle_multipliers
from trackfit.core.constrained.polish import PIN_TOL, ROW_TOL, polish
from trackfit.core.constrained.problem import Problem, build_problem, objective
from trackfit.core.constrained.state import State, classify, pinned_weights
from trackfit.core.constrained.statuses import BINDING, limit_statuses, worst_violation
from trackfit.core.fit import KKT_LIMIT
from trackfit.core.gram import GramData
from trackfit.core.limits import Limits, LimitStatus
from trackfit.core.results import Scaling
from trackfit.errors import InfeasibleError, SolverError

# Multipliers guessed for weights with no freedom are kept if they satisfy every condition to this.
_DUAL_TOL = 1e-11


@dataclass(frozen=True, eq=False)
class LimitedSolution:
    """The solution of one constrained fit.

    Attributes
    ----------
    coef_std : ndarray of shape (k,)
        Standardized weights over ``GramData.columns`` (0 outside the support).
    weights : ndarray of shape (n_assets,)
        Original units over all constituents; exactly 0.0 where a weight is at 0, exactly its
        bound (or its current holding) where it sits there.
    objective : float
        ``(1/2n)|y_s - X_s b|^2 + l1 |b|_1 + 0.5 (l2 + ridge_added) |b|^2
        + turnover_penalty * sum_j |b_j - b_current_j|`` over the usable columns.
    kkt_residual : float
        Largest violation of the constrained problem's optimality conditions (stationarity and
        complementary slackness relative to ``max |X_s'y_s| / n``; limits in original units).
    statuses : tuple of LimitStatus
        Every limit in force, in the order of :func:`limit_statuses` (computed when first
        asked for: a support search solves thousands of fits and reads few of them).
    ridge_added : float
        The ridge added to make the solution unique (see ``RIDGE_FOR_UNIQUENESS``), 0 if none.
    polished : bool
        True for the exact active-set solution; False when the interior-point solution was
        kept because it met the same accuracy on its own.
    """

    coef_std: np.ndarray
    weights: np.ndarray
    objective: float
    kkt_residual: float
    limits: Limits = field(repr=False)
    ridge_added: float
    polished: bool = True

    @cached_property
    def statuses(self) -> tuple[LimitStatus, ...]:
        return limit_statuses(self.weights, self.limits)


@dataclass(frozen=True, eq=False)
class _Candidate:
    b: np.ndarray
    weights: np.ndarray
    limits: Limits
    residual: float
    violation: float
    polished: bool

    @property
    def statuses(self) -> tuple[LimitStatus, ...]:
        return limit_statuses(self.weights, self.limits)


def _evaluate(
    prob: Problem, limits: Limits, p: int, state: State, b, mu, mu_cap, polished: bool
) -> _Candidate:
    weights = np.zeros(p)
    weights[prob.cols] = pinned_weights(prob, state, b)
    weights[weights == 0.0] = 0.0  # never -0.0
    violation = worst_violation(weights, limits)
    residual = kkt_residual(prob, state, b, mu, mu_cap, violation)
    return _Candidate(b, weights, limits, residual, violation, polished)


def _describe(status: LimitStatus) -> str:
    if status.kind in ("lower", "upper", "long_only"):
        return f"{status.kind} (constituent {status.target})"
    if isinstance(status.target, str):  # a labelled linear limit (a group)
        return f"{status.kind} ({status.target!r})"
    return status.kind


def solve_limited(
    data: GramData,
    scaling: Scaling,
    alpha: float,
    l1_ratio: float,
    limits: Limits,
    *,
    support: np.ndarray | None = None,
) -> LimitedSolution:
    """Minimize the elastic-net objective under every limit but the count limits.

    Solves ``min 0.5 b'Gb - c'b + l1 |b|_1 + 0.5 l2 |b|^2 + tau |b - b_cur|_1`` with
    ``l1 = alpha * l1_ratio``, ``l2 = alpha * (1 - l1_ratio)``, ``tau =
    limits.turnover_penalty``, subject to long-only, per-name bounds, every linear limit
    (budget, groups, beta) and the turnover cap on the original weights ``w_j = b_j * y_scale / x_scale_j``
    (``limits.max_names`` and ``limits.min_position`` are the support search's). When the
    problem is not strictly convex (``l2 == 0`` and a singular Gram matrix on the solved
    columns, as with more of them than rows) a ridge of ``RIDGE_FOR_UNIQUENESS`` times the
    mean diagonal of the Gram matrix is added and reported in ``ridge_added``.

    Parameters
    ----------
    data : GramData
        Standardized statistics over the ``k`` usable columns.
    scaling : Scaling
        The scaling ``data`` was built with; ``scaling.usable.size`` is ``n_assets``.
    alpha : float
        Penalty in standardized units, >= 0.
    l1_ratio : float
        In [0, 1].
    limits : Limits
        ``lower``, ``upper``, ``current`` of shape (n_assets,); linear limits over all
        constituents, row-dependent ones resolved (:meth:`Limits.on_rows`).
    support : ndarray of bool, shape (n_assets,), optional
        Only these constituents may hold weight (the rest are exactly 0).

    Returns
    -------
    LimitedSolution

    Raises
    ------
    SolverError
        The limits cannot all hold (the message names those involved), or no solution meets
        the accuracy every reported fit must meet (``KKT_LIMIT``, limits to 1e-9).
    ValueError
        A parameter is out of range or an array has the wrong shape.
    """
    prob = build_problem(data, scaling, alpha, l1_ratio, limits, support)
    p = scaling.usable.size
    tried: list[_Candidate] = []
    if prob.fixed.all():  # no freedom at all (including no columns)
        b = prob.fixed_b()
        state = classify(prob, b, PIN_TOL, ROW_TOL)
        guess = [(np.zeros(len(prob.rows)), 0.0, _DUAL_TOL)]
        mu, mu_cap = settle_multipliers(prob, state, b, guess)
        only = _evaluate(prob, limits, p, state, b, mu, mu_cap, True)
        if only.violation > BINDING:
            broken = [_describe(s) for s in only.statuses if s.slack < 0]
            why = (
                "max_turnover leaves no room to trade"
                if prob.cap == 0.0
                else "every weight is fixed by equal bounds or by the support"
            )
            raise InfeasibleError(
                f"no weights satisfy these limits together: {why}, and the weights so fixed "
                f"break {', '.join(broken)}; loosen one of them"
            )
        tried.append(only)
    else:
        interior = solve_interior(prob)
        start = interior.b
        result = polish(prob, interior)
        if result is not None:
            tried.append(
                _evaluate(prob, limits, p, result.state, result.b, result.mu, result.mu_cap, True)
            )
        if not tried or not _accurate(tried[0]):
            state = classify(prob, start, PIN_TOL, ROW_TOL)
            b = np.where(state.pinned, state.value, start)
            mu, mu_cap = multipliers_lp(prob, state, b)
            tried.append(_evaluate(prob, limits, p, state, b, mu, mu_cap, False))
    for cand in tried:
        if _accurate(cand):
            coef_std = np.zeros(len(data.columns))
            coef_std[prob.data_pos] = cand.b
            return LimitedSolution(
                coef_std=coef_std,
                weights=cand.weights,
                objective=objective(prob, cand.b),
                kkt_residual=float(cand.residual),
                limits=limits,
                ridge_added=prob.ridge,
                polished=cand.polished,
            )
    best = min(tried, key=lambda c: c.residual)
    tight = [_describe(s) for s in best.statuses if s.binding or s.slack < 0]
    raise SolverError(
        f"the fit under mandate limits at alpha={alpha:.6g} could not be made exact: optimality "
        f"residual {best.residual:.1e} (at most {KKT_LIMIT:.0e} allowed), limits broken by up to "
        f"{best.violation:.1e}; limits tight there: {', '.join(tight) if tight else 'none'}; "
        "loosen one of them, or look for duplicated or nearly collinear constituents"
    )


def _accurate(cand: _Candidate) -> bool:
    return cand.residual <= KKT_LIMIT and cand.violation <= BINDING
