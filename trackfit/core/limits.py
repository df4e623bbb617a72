"""Mandate limits, as the fitting core sees them: arrays over the constituents, original units.

A weight ``w_j`` here is always in original units (the weight held), never standardized.
Names appear nowhere in the core; positions index the constituents of the fit.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True)
class GroupLimit:
    """Bounds on the total weight of a group of constituents (a sector, a country).

    Attributes
    ----------
    name : str
        Label used in messages and reports.
    members : tuple of int
        Positions of the group's constituents.
    lower, upper : float or None
        Bounds on ``sum(w[members])``; None = no bound on that side.
    """

    name: str
    members: tuple[int, ...]
    lower: float | None = None
    upper: float | None = None


@dataclass(frozen=True, eq=False)
class Limits:
    """Every limit a mandate may put on the weights.

    Attributes
    ----------
    long_only : bool
        No negative weights.
    budget : tuple of (float, float) or None
        Bounds on ``sum(w)``: ``(1.0, 1.0)`` is fully invested (no cash); ``(0.95, 1.0)`` allows
        up to 5 % cash. None = no budget limit.
    lower, upper : ndarray of shape (n_assets,) or None
        Per-name bounds, ``-inf`` / ``+inf`` where a name has none. None = no bounds.
    groups : tuple of GroupLimit
    current : ndarray of shape (n_assets,) or None
        Current holdings (the weights held now); needed by the turnover limits.
    outside_turnover : float
        One-way turnover forced by current holdings outside the constituents (they can only be
        sold): ``sum(|w_current_outside|) / 2``. Counted against ``max_turnover``.
    turnover_penalty : float
        Adds ``turnover_penalty * sum_j |b_j - b_current_j|`` to the standardized objective
        (``b`` standardized weights, as the other penalties), 0 = none.
    max_turnover : float or None
        Cap on one-way turnover ``sum(|w - w_current|) / 2`` (plus ``outside_turnover``).
    max_names : int or None
        Cap on the number of names held (weights != 0).
    min_position : float or None
        No weight strictly between 0 and this size in absolute value.
    """

    long_only: bool = False
    budget: tuple[float, float] | None = None
    lower: np.ndarray | None = None
    upper: np.ndarray | None = None
    groups: tuple[GroupLimit, ...] = field(default_factory=tuple)
    current: np.ndarray | None = None
    outside_turnover: float = 0.0
    turnover_penalty: float = 0.0
    max_turnover: float | None = None
    max_names: int | None = None
    min_position: float | None = None

    @property
    def needs_qp(self) -> bool:
        """True when some limit beyond long-only needs the quadratic-programming solver."""
        return bool(
            self.budget is not None
            or self.lower is not None
            or self.upper is not None
            or self.groups
            or self.turnover_penalty
            or self.max_turnover is not None
        )

    @property
    def any(self) -> bool:
        """True when any limit is in force."""
        return bool(
            self.long_only
            or self.needs_qp
            or self.max_names is not None
            or self.min_position is not None
        )


NO_LIMITS = Limits()


@dataclass(frozen=True)
class LimitStatus:
    """One limit at a solution: how close the weights are to it.

    Attributes
    ----------
    kind : str
        ``"long_only"``, ``"budget_min"``, ``"budget_max"``, ``"lower"``, ``"upper"``,
        ``"group_min"``, ``"group_max"``, ``"max_turnover"``, ``"max_names"`` or
        ``"min_position"``.
    target : int, str or None
        Constituent position (``lower``/``upper``/``long_only``), group name (``group_*``),
        or None.
    bound : float
        The limit's value.
    value : float
        The weights' value of the limited quantity (a weight, a sum, a turnover, a count).
    slack : float
        Distance from the limit, >= 0 when it holds (``bound - value`` for upper limits,
        ``value - bound`` for lower ones).
    binding : bool
        True when the limit is active at the solution (slack 0 to within 1e-9).
    """

    kind: str
    target: int | str | None
    bound: float
    value: float
    slack: float
    binding: bool
