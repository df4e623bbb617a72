"""Fits under mandate limits: a quadratic program solved by interior point, then polished exactly.

:func:`solve_limited` fits one penalty under long-only, per-name, linear (budget, group,
beta) and turnover limits (on a given support); :func:`check_feasible` finds conflicting
limits before any fitting; :func:`limit_statuses` measures every limit at a set of weights.
"""

from __future__ import annotations

from trackfit.core.constrained.feasibility import check_feasible, limit_notes
from trackfit.core.constrained.problem import RIDGE_FOR_UNIQUENESS
from trackfit.core.constrained.solve import LimitedSolution, solve_limited
from trackfit.core.constrained.statuses import BINDING, limit_statuses

__all__ = [
    "BINDING",
    "RIDGE_FOR_UNIQUENESS",
    "LimitedSolution",
    "check_feasible",
    "limit_notes",
    "limit_statuses",
    "solve_limited",
]
