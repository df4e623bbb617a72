"""Mandate limits, as the fitting core sees them: arrays over the constituents, original units.

A weight ``w_j`` here is always in original units (the weight held), never standardized.
Names appear nowhere in the core; positions index the constituents of the fit.

Every limit that bounds a linear function of the weights (the budget, group totals, beta to
the benchmark) is one :class:`LinearLimit` in ``Limits.linear``: the problem builder, the
statuses, the feasibility check and the reports all iterate that one list. A limit whose
coefficients depend on the fit rows (beta) is resolved for given rows by :meth:`Limits.on_rows`.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True)
class GroupLimit:
    """Bounds on the total weight of a group of constituents (a sector, a country).

    A view of a ``"group"`` :class:`LinearLimit` (see ``Limits.groups``), and a shorthand for
    building one (``Limits(groups=...)``).

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


def beta_coefficients(X: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Coefficients ``a`` with ``a @ w = cov(X w, y) / var(y)``, the portfolio's beta.

    Centered sample covariance over the rows given; the same ``ddof`` in numerator and
    denominator cancels, so ``a_j = sum_t xc_tj yc_t / sum_t yc_t^2`` with ``xc``, ``yc`` the
    columns minus their means.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)

    Returns
    -------
    ndarray of shape (n_assets,)

    Raises
    ------
    ValueError
        If ``y`` has no variance on these rows (beta is undefined).
    """
    X = np.asarray(X, dtype=float)
    y = np.asarray(y, dtype=float)
    yc = y - y.mean()
    var = float(yc @ yc)
    # A constant benchmark leaves only rounding in yc: no variance to speak of.
    if not var > len(y) * (4 * np.finfo(float).eps * float(np.max(np.abs(y), initial=0.0))) ** 2:
        raise ValueError(
            f"beta to the benchmark is undefined on these {len(y)} rows: the benchmark return "
            "does not vary; drop the beta limit or use a longer window"
        )
    return (X - X.mean(axis=0)).T @ yc / var


#: Kinds whose coefficients depend on the fit rows, and how to compute them from ``(X, y)``.
ROW_COEFFICIENTS: dict[str, Callable[[np.ndarray, np.ndarray], np.ndarray]] = {
    "beta": beta_coefficients,
}

#: Where each kind comes among the statuses (groups before the budget, as reports have always
#: listed them); kinds not listed come after, in list order.
STATUS_RANK = {"group": 0, "budget": 1}

# Key paths used in messages about a limit's coefficients.
_KEYS = {"group": "groups"}


@dataclass(frozen=True, eq=False)
class LinearLimit:
    """One limit ``lower <= a @ w <= upper`` on a linear function of the weights.

    The coefficients ``a`` (shape (n_assets,), original units) are ``coef`` when given;
    otherwise 1 on ``members`` (every constituent when ``members`` is None) and 0 elsewhere,
    a sum of weights, whose value is summed exactly as ``sum(w[members])``. A kind in
    :data:`ROW_COEFFICIENTS` has ``coef`` None until :meth:`Limits.on_rows` fills it.

    Attributes
    ----------
    kind : str
        ``"budget"``, ``"group"``, ``"beta"``; statuses are ``<kind>_min`` / ``<kind>_max``.
    label : str or None
        The group name, or None; the status target.
    lower, upper : float or None
        None or an infinity = no bound on that side.
    members : tuple of int or None
    coef : ndarray of shape (n_assets,) or None
    """

    kind: str
    label: str | None
    lower: float | None = None
    upper: float | None = None
    members: tuple[int, ...] | None = None
    coef: np.ndarray | None = None

    @property
    def depends_on_rows(self) -> bool:
        return self.kind in ROW_COEFFICIENTS

    @property
    def what(self) -> str:
        """The limit in solver messages: ``"budget"``, ``"group 'north'"``, ``"beta"``."""
        return self.kind if self.label is None else f"{self.kind} {self.label!r}"

    def key(self) -> str:
        name = f"limits.{_KEYS.get(self.kind, self.kind)}"
        return name if self.label is None else f"{name}[{self.label!r}]"

    def bounds(self) -> tuple[float, float]:
        """``(lower, upper)`` with ``-inf`` / ``inf`` where there is no bound."""
        lo = -np.inf if self.lower is None or not np.isfinite(self.lower) else float(self.lower)
        hi = np.inf if self.upper is None or not np.isfinite(self.upper) else float(self.upper)
        return lo, hi

    def coefficients(self, p: int, caller: str) -> np.ndarray:
        """The dense coefficients, shape (p,).

        Raises
        ------
        ValueError
            Members outside ``[0, p)``, ``coef`` of the wrong shape or with NaN, or a
            row-dependent limit not yet resolved (``caller`` names the function in the message).
        """
        if self.coef is not None:
            coef = np.asarray(self.coef, dtype=float)
            if coef.shape != (p,) or np.isnan(coef).any():
                raise ValueError(
                    f"The '{self.key()}.coef' parameter of {caller} must be an array of shape "
                    f"({p},) without NaN. Got {self.coef!r}."
                )
            return coef
        if self.depends_on_rows:
            raise ValueError(
                f"The '{self.key()}' limit of {caller} depends on the fit rows; resolve it "
                "with Limits.on_rows(X, y) first."
            )
        if self.members is None:
            return np.ones(p)
        idx = self.positions(p, caller)
        coef = np.zeros(p)
        coef[idx] = 1.0
        return coef

    def positions(self, p: int, caller: str) -> np.ndarray:
        """``members`` as an int array, checked to lie in ``[0, p)``."""
        idx = np.asarray(self.members, dtype=int)
        if idx.size and (idx.min() < 0 or idx.max() >= p):
            raise ValueError(
                f"The '{self.key()}.members' parameter of {caller} must hold positions in "
                f"[0, {p}). Got {self.members!r}."
            )
        return idx

    def total(self, w: np.ndarray) -> float:
        """``a @ w`` for weights of shape (n_assets,) (see :meth:`coefficients`)."""
        if self.coef is not None:
            return float(np.asarray(self.coef, dtype=float) @ w)
        if self.depends_on_rows:
            self.coefficients(w.size, "limit_statuses")  # raises: not resolved
        if self.members is None:
            return float(np.sum(w))
        return float(np.sum(w[np.asarray(self.members, dtype=int)])) if self.members else 0.0


def budget_limit(lower: float | None, upper: float | None) -> LinearLimit:
    """Bounds on ``sum(w)``."""
    return LinearLimit("budget", None, lower, upper)


def group_limit(group: GroupLimit) -> LinearLimit:
    """Bounds on ``sum(w[members])`` of one group."""
    return LinearLimit("group", group.name, group.lower, group.upper, tuple(group.members))


def beta_limit(lower: float | None, upper: float | None) -> LinearLimit:
    """Bounds on beta to the benchmark, ``cov(X w, y) / var(y)`` over the fit rows."""
    return LinearLimit("beta", None, lower, upper)


@dataclass(frozen=True, eq=False, init=False)
class Limits:
    """Every limit a mandate may put on the weights.

    Attributes
    ----------
    long_only : bool
        No negative weights.
    lower, upper : ndarray of shape (n_assets,) or None
        Per-name bounds, ``-inf`` / ``+inf`` where a name has none. None = no bounds.
    linear : tuple of LinearLimit
        Every linear limit (budget, groups, beta ...), in the order of the solver's rows.
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

    The keywords ``budget`` (a ``(min, max)`` pair on ``sum(w)``: ``(1.0, 1.0)`` is fully
    invested) and ``groups`` (a tuple of :class:`GroupLimit`) are shorthands: they become the
    first entries of ``linear``, budget first, and read back as the properties of those names.
    """

    long_only: bool
    lower: np.ndarray | None
    upper: np.ndarray | None
    linear: tuple[LinearLimit, ...] = field(default_factory=tuple)
    current: np.ndarray | None = None
    outside_turnover: float = 0.0
    turnover_penalty: float = 0.0
    max_turnover: float | None = None
    max_names: int | None = None
    min_position: float | None = None

    def __init__(
        self,
        *,
        long_only: bool = False,
        budget: tuple[float | None, float | None] | None = None,
        lower: np.ndarray | None = None,
        upper: np.ndarray | None = None,
        groups: tuple[GroupLimit, ...] = (),
        linear: tuple[LinearLimit, ...] = (),
        current: np.ndarray | None = None,
        outside_turnover: float = 0.0,
        turnover_penalty: float = 0.0,
        max_turnover: float | None = None,
        max_names: int | None = None,
        min_position: float | None = None,
    ) -> None:
        shorthand = ([] if budget is None else [budget_limit(*budget)]) + [
            group_limit(g) for g in groups
        ]
        values = {
            "long_only": long_only,
            "lower": lower,
            "upper": upper,
            "linear": (*shorthand, *linear),
            "current": current,
            "outside_turnover": outside_turnover,
            "turnover_penalty": turnover_penalty,
            "max_turnover": max_turnover,
            "max_names": max_names,
            "min_position": min_position,
        }
        for name, value in values.items():
            object.__setattr__(self, name, value)

    @property
    def budget(self) -> tuple[float | None, float | None] | None:
        """``(min, max)`` of the budget entry of ``linear``, or None without one."""
        for item in self.linear:
            if item.kind == "budget":
                return (item.lower, item.upper)
        return None

    @property
    def groups(self) -> tuple[GroupLimit, ...]:
        """The group entries of ``linear``, as :class:`GroupLimit`."""
        return tuple(
            GroupLimit(item.label, tuple(item.members or ()), item.lower, item.upper)
            for item in self.linear
            if item.kind == "group"
        )

    @property
    def depends_on_rows(self) -> bool:
        """True when some limit's coefficients depend on the fit rows (see :meth:`on_rows`)."""
        return any(item.depends_on_rows for item in self.linear)

    def on_rows(self, X: np.ndarray, y: np.ndarray) -> Limits:
        """These limits with every row-dependent coefficient computed on the rows given.

        Returns ``self`` when no limit depends on the rows. Call it with the rows the weights
        are fitted on (a fold's training rows, the rows before a holdout, the whole window).

        Parameters
        ----------
        X : ndarray of shape (n_periods, n_assets)
        y : ndarray of shape (n_periods,)
        """
        if not self.depends_on_rows:
            return self
        linear = tuple(
            LinearLimit(
                item.kind,
                item.label,
                item.lower,
                item.upper,
                item.members,
                ROW_COEFFICIENTS[item.kind](X, y),
            )
            if item.depends_on_rows
            else item
            for item in self.linear
        )
        return Limits(
            long_only=self.long_only,
            lower=self.lower,
            upper=self.upper,
            linear=linear,
            current=self.current,
            outside_turnover=self.outside_turnover,
            turnover_penalty=self.turnover_penalty,
            max_turnover=self.max_turnover,
            max_names=self.max_names,
            min_position=self.min_position,
        )

    @property
    def needs_qp(self) -> bool:
        """True when some limit beyond long-only needs the quadratic-programming solver."""
        return bool(
            self.linear
            or self.lower is not None
            or self.upper is not None
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
        ``"long_only"``, ``"lower"``, ``"upper"``, ``"<linear kind>_min"`` /
        ``"<linear kind>_max"`` (``budget_min``, ``group_max``, ``beta_min`` ...),
        ``"max_turnover"``, ``"max_names"`` or ``"min_position"``.
    target : int, str or None
        Constituent position (``lower``/``upper``/``long_only``), the linear limit's label
        (a group name), or None.
    bound : float
        The limit's value.
    value : float
        The weights' value of the limited quantity (a weight, a sum, a beta, a turnover, a
        count).
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
