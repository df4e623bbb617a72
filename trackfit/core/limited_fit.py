"""Fits under mandate limits: one entry point that picks the exact engine each limit needs.

- No limits: the exact unconstrained engine (:mod:`trackfit.core.solvers`).
- Long-only alone, lasso or elastic net: the same engine with positivity.
- Anything else (budget, bounds, groups, turnover, long-only ridge): the constrained QP engine
  (:mod:`trackfit.core.constrained`).
- A maximum number of names: a search over supports (:mod:`trackfit.core.support`), each support
  refitted under every other limit; then the minimum position size, by removal and refit.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from trackfit.core.constrained import limit_statuses, solve_limited
from trackfit.core.fit import check_accuracy, fit_penalized
from trackfit.core.gram import GramData, standardized_gram
from trackfit.core.limits import Limits, LimitStatus
from trackfit.core.penalties import Penalty
from trackfit.core.results import FittedWeights, Scaling
from trackfit.core.scaling import fit_scaling, to_original_units
from trackfit.core.solvers import default_solver
from trackfit.core.support import enforce_min_position, lasso_path_support, search_support
from trackfit.errors import InfeasibleError, SolverError

#: Binding tolerance for the count limits, as for the others.
_BINDING = 1e-9


@dataclass(frozen=True)
class SearchOptions:
    """How hard the max-names search works: full for final fits, screened inside CV folds."""

    full_swaps: bool = True
    screen: int | None = None
    forward: bool = True


FULL_SEARCH = SearchOptions()
#: For a refit on more rows from the names chosen on fewer: full swaps, no fresh forward selection.
WARM_SEARCH = SearchOptions(forward=False)
CV_SEARCH = SearchOptions(full_swaps=False, screen=2, forward=False)


def needs_limited_engine(limits: Limits, l1_ratio: float) -> bool:
    """True when a fit needs the QP engine or the name search, False when the exact path
    engine suffices (no limits, or long-only alone on a penalty that engine solves with
    positivity: lasso and elastic net, see :attr:`Penalty.path_engine_long_only`)."""
    return bool(
        limits.needs_qp
        or (limits.long_only and not Penalty(l1_ratio).path_engine_long_only)
        or limits.max_names is not None
        or limits.min_position is not None
    )


def _count_statuses(weights: np.ndarray, limits: Limits) -> tuple[LimitStatus, ...]:
    out = []
    held = int(np.count_nonzero(weights))
    if limits.max_names is not None:
        slack = float(limits.max_names - held)
        out.append(
            LimitStatus("max_names", None, float(limits.max_names), float(held), slack, slack == 0)
        )
    if limits.min_position is not None:
        nonzero = np.abs(weights[weights != 0])
        smallest = float(nonzero.min()) if len(nonzero) else 0.0
        slack = smallest - limits.min_position if len(nonzero) else 0.0
        out.append(
            LimitStatus(
                "min_position",
                None,
                float(limits.min_position),
                smallest,
                slack,
                abs(slack) <= _BINDING,
            )
        )
    return tuple(out)


class _Refitter:
    """Refits on supports under every limit but the name count, caching by support."""

    def __init__(
        self, data: GramData, scaling: Scaling, alpha: float, l1_ratio: float, limits: Limits
    ):
        self.data, self.scaling, self.alpha, self.l1_ratio = data, scaling, alpha, l1_ratio
        self.limits = replace(limits, max_names=None, min_position=None)
        self.cache: dict[bytes, object] = {}

    def solve(self, mask: np.ndarray | None):
        key = b"all" if mask is None else np.packbits(mask).tobytes()
        if key not in self.cache:
            try:
                self.cache[key] = solve_limited(
                    self.data, self.scaling, self.alpha, self.l1_ratio, self.limits, support=mask
                )
            except InfeasibleError:  # an infeasible support is a normal outcome of a search
                self.cache[key] = None
        return self.cache[key]

    def __call__(self, mask: np.ndarray) -> tuple[float, np.ndarray]:
        sol = self.solve(mask)
        if sol is None:
            return np.inf, np.zeros(self.scaling.usable.size)
        return float(sol.objective), sol.weights


def fit_limited_gram(
    data: GramData,
    scaling: Scaling,
    alpha: float,
    l1_ratio: float,
    limits: Limits,
    *,
    search: SearchOptions = FULL_SEARCH,
    start: np.ndarray | None = None,
) -> FittedWeights:
    """Fit at one penalty under ``limits`` on prepared statistics.

    Parameters
    ----------
    start : ndarray of bool, shape (n_assets,), optional
        A support to start the max-names search from (for example the previous penalty's).
    """
    p = scaling.usable.size
    refit = _Refitter(data, scaling, alpha, l1_ratio, limits)
    record = None
    if needs_limited_engine(limits, l1_ratio):
        base = refit.solve(None)
        if base is None:
            raise SolverError(
                f"no weights satisfy every mandate limit at alpha={alpha:.6g}; loosen the limits"
            )
        weights, objective = base.weights, float(base.objective)
        mask = weights != 0
        if limits.max_names is not None and np.count_nonzero(weights) > limits.max_names:
            starts = [s & scaling.usable for s in (start,) if s is not None and np.any(s)]
            path_mask = np.zeros(p, dtype=bool)
            path_mask[data.columns] = lasso_path_support(
                data, limits.max_names, positive=limits.long_only
            )
            starts.append(path_mask)
            mask, objective, weights, record = search_support(
                refit,
                p,
                limits.max_names,
                starts=starts,
                eligible=scaling.usable,
                full_swaps=search.full_swaps,
                screen=search.screen,
                forward=search.forward,
            )
            record = replace(record, uncapped_objective=float(base.objective))
        if limits.min_position is not None:
            mask, objective, weights, removed = enforce_min_position(
                refit, mask, weights, limits.min_position
            )
            if record is not None:
                record = replace(record, removed_small=tuple(removed))
        sol = base if record is None and limits.min_position is None else refit.solve(mask)
        coef_std = np.zeros(p)
        coef_std[data.columns] = sol.coef_std
        weights, kkt = sol.weights, float(sol.kkt_residual)
        statuses = tuple(sol.statuses) + _count_statuses(weights, limits)
    else:  # long-only lasso or elastic net: the exact path engine with positivity
        path = default_solver().path(data, np.array([alpha]), l1_ratio, positive=limits.long_only)
        coef_std = np.zeros(p)
        coef_std[data.columns] = path.coefs[0]
        weights = to_original_units(coef_std, scaling)
        kkt = float(path.kkt_residuals[0])
        statuses = limit_statuses(weights, limits)
    check_accuracy(kkt, f"fit under mandate limits at alpha={alpha:.6g}")
    return FittedWeights(
        weights=weights,
        cash=1.0 - float(weights.sum()),
        coef_std=coef_std,
        alpha=float(alpha),
        l1_ratio=float(l1_ratio),
        kkt_residual=kkt,
        scaling=scaling,
        limits=statuses,
        search=record,
    )


def fit_limited(
    X: np.ndarray,
    y: np.ndarray,
    alpha: float,
    l1_ratio: float,
    limits: Limits,
    *,
    search: SearchOptions = FULL_SEARCH,
    start: np.ndarray | None = None,
) -> FittedWeights:
    """Scale on these rows and fit at one penalty under ``limits`` (see module docstring).

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    start : ndarray of bool, shape (n_assets,), optional
        An extra starting support for the max-names search (for example the names chosen on
        fewer rows); forward selection from no names still runs unless ``search`` says not.
    """
    limits = limits.on_rows(X, y)  # row-dependent limits (beta) on the rows fitted
    if not limits.any:
        return fit_penalized(X, y, alpha, l1_ratio)
    scaling = fit_scaling(X, y)
    return fit_limited_gram(
        standardized_gram(X, y, scaling),
        scaling,
        alpha,
        l1_ratio,
        limits,
        search=search,
        start=start,
    )
