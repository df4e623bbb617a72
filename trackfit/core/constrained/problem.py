"""The constrained problem in standardized units, over the columns that may hold weight.

With ``d_j = y_scale / x_scale_j`` and original weights ``w = d * b``, the problem is

    minimize  0.5 b'Hb - c'b + l1 |b|_1 + tau |b - b_cur|_1 + const,   H = G + (l2 + ridge) I

subject to per-name bounds ``lo <= b <= hi`` (the original bounds divided by ``d``, long-only
folded in), linear rows ``L_r <= a_r'b <= U_r`` (one per entry of ``Limits.linear``: budget, groups,
beta; coefficients ``a_rj = coef_rj d_j``, so the rows are in original units) and the turnover cap
``sum_j d_j |b_j - b_cur_j| / 2 <= cap``. Columns outside the support, and unusable ones, hold
exactly 0 and are not variables: they count 0 in every sum, their current holdings count in
the cap as a constant, and their turnover penalty goes into ``const``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trackfit.core.gram import GramData
from trackfit.core.limits import Limits
from trackfit.core.results import Scaling
from trackfit.errors import InfeasibleError

#: Ridge added, times the mean diagonal of the standardized Gram matrix, when the problem is
#: not strictly convex (no L2 penalty and a singular Gram matrix, as with more names than rows).
RIDGE_FOR_UNIQUENESS = 1e-8

# A turnover allowance this small is no allowance: every weight stays at its current value.
_NO_ROOM = 1e-12


@dataclass(frozen=True, eq=False)
class LinearRow:
    """One linear limit ``lower <= coef @ b <= upper`` in original units.

    ``coef`` has shape (m,); ``what`` names the limit for messages ("budget", "group 'X'").
    """

    kind: str
    target: str | None
    coef: np.ndarray
    lower: float
    upper: float
    what: str


@dataclass(frozen=True, eq=False)
class Problem:
    """Everything the interior-point solve and the polish need, over ``m`` solved columns.

    Attributes
    ----------
    cols : ndarray of int, shape (m,)
        Positions of the solved columns among all constituents.
    data_pos : ndarray of int, shape (m,)
        Their positions among ``GramData.columns``.
    G, H : ndarray of shape (m, m)
        Restricted Gram matrix, and ``G + (l2 + ridge) I``.
    c, d : ndarray of shape (m,)
    lo, hi, cur : ndarray of shape (m,)
        Bounds and current holdings in standardized units (``-inf``/``inf`` = none).
    lo_w, hi_w, cur_w : ndarray of shape (m,)
        The same in original units: a weight pinned there takes exactly these values.
    fixed : ndarray of bool, shape (m,)
        Columns with no freedom (equal bounds, or no turnover allowed); ``fixed_w`` their weight.
    cap : float or None
        Turnover allowed to the solved columns (original units, one-way), None = no cap.
    forced : float
        Turnover already used by holdings that cannot be held (``max_turnover - cap``).
    turnover : bool
        True when ``b_cur`` is a kink of the problem (a turnover penalty or cap).
    const : float
        Objective terms that do not depend on ``b``: ``0.5 y_s'y_s / n`` and the turnover
        penalty of columns held now but not solved.
    cscale : float
        ``max |X_s'y_s| / n`` over all usable columns: the scale of the KKT residual.
    """

    cols: np.ndarray
    data_pos: np.ndarray
    G: np.ndarray
    H: np.ndarray
    c: np.ndarray
    d: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    cur: np.ndarray
    lo_w: np.ndarray
    hi_w: np.ndarray
    cur_w: np.ndarray
    fixed: np.ndarray
    fixed_w: np.ndarray
    l1: float
    l2: float
    ridge: float
    tau: float
    turnover: bool
    rows: tuple[LinearRow, ...]
    cap: float | None
    forced: float
    const: float
    cscale: float

    @property
    def m(self) -> int:
        return len(self.c)

    def fixed_b(self) -> np.ndarray:
        """Standardized values of the fixed columns (0 elsewhere), shape (m,)."""
        return np.where(self.fixed, self.fixed_w / self.d, 0.0)


def _param_error(name: str, allowed: str, value: object) -> ValueError:
    return ValueError(f"The '{name}' parameter of solve_limited must be {allowed}. Got {value!r}.")


def _vector(value: np.ndarray | None, name: str, p: int, fill: float) -> np.ndarray:
    if value is None:
        return np.full(p, fill)
    arr = np.asarray(value, dtype=float)
    if arr.shape != (p,) or np.isnan(arr).any():
        raise _param_error(f"limits.{name}", f"an array of shape ({p},) without NaN", value)
    return arr


def validate_penalty(alpha: float, l1_ratio: float) -> None:
    """Raise ValueError unless ``alpha >= 0`` and ``0 <= l1_ratio <= 1`` (both finite)."""
    if not (np.isfinite(alpha) and alpha >= 0):
        raise _param_error("alpha", "a finite number >= 0", alpha)
    if not (0.0 <= l1_ratio <= 1.0):
        raise _param_error("l1_ratio", "in [0, 1]", l1_ratio)


def _positive_definite(A: np.ndarray) -> bool:
    from scipy import linalg  # scipy loads on the first fit, not at start-up

    try:
        linalg.cholesky(A, lower=True, check_finite=False)
    except linalg.LinAlgError:
        return False
    return True


def build_problem(
    data: GramData,
    scaling: Scaling,
    alpha: float,
    l1_ratio: float,
    limits: Limits,
    support: np.ndarray | None,
) -> Problem:
    """Restrict to the solved columns and express every limit in standardized variables.

    Raises
    ------
    ValueError
        Arrays of the wrong shape, NaN, or turnover limits without current holdings.
    InfeasibleError
        A column that must hold 0 (unusable, or outside ``support``) has bounds excluding 0,
        a name's bounds cross, or holdings that cannot be traded already exceed the cap.
    """
    validate_penalty(alpha, l1_ratio)
    p = scaling.usable.size
    if support is None:
        support = np.ones(p, dtype=bool)
    support = np.asarray(support)
    if support.dtype != bool or support.shape != (p,):
        raise _param_error("support", f"a bool array of shape ({p},)", support)
    turnover = bool(limits.turnover_penalty) or limits.max_turnover is not None
    if turnover and limits.current is None:
        raise ValueError("turnover limits need limits.current, the current holdings")
    lower = _vector(limits.lower, "lower", p, -np.inf)
    upper = _vector(limits.upper, "upper", p, np.inf)
    if limits.long_only:
        lower = np.maximum(lower, 0.0)
    current = _vector(limits.current, "current", p, 0.0)

    in_data = support[data.columns]
    cols = data.columns[in_data]
    data_pos = np.flatnonzero(in_data)
    solved = np.zeros(p, dtype=bool)
    solved[cols] = True
    _check_held_at_zero(lower, upper, scaling.usable, solved)
    crossed = np.flatnonzero(solved & (lower > upper))
    if len(crossed):
        j = int(crossed[0])
        raise InfeasibleError(
            f"constituent {j}: its minimum weight {lower[j]:.6g} is above its maximum "
            f"{upper[j]:.6g}{' (long-only sets the minimum to 0)' if limits.long_only else ''}"
            "; change one of the two"
        )

    d = scaling.y_scale / scaling.x_scale[cols]
    lo_w, hi_w, cur_w = lower[cols], upper[cols], current[cols]
    l1 = alpha * l1_ratio
    l2 = alpha * (1.0 - l1_ratio)
    tau = float(limits.turnover_penalty)

    cap = None
    forced = 0.0
    fixed = lo_w == hi_w
    fixed_w = np.where(fixed, lo_w, 0.0)
    if limits.max_turnover is not None:
        forced = float(np.abs(current[~solved]).sum()) / 2.0 + limits.outside_turnover
        cap = float(limits.max_turnover) - forced
        if cap < -_NO_ROOM:
            raise InfeasibleError(
                f"max_turnover {limits.max_turnover:.6g} is below the turnover forced by selling "
                f"holdings that cannot be held ({forced:.6g}: names outside the constituents, "
                "outside the names allowed, or with no variance in the window); raise max_turnover"
            )
        if cap <= _NO_ROOM:  # no room to trade: everything stays as held
            bad = np.flatnonzero((cur_w < lo_w) | (cur_w > hi_w))
            if len(bad):
                j = int(cols[bad[0]])
                raise InfeasibleError(
                    f"max_turnover leaves no room to trade, but the current weight of "
                    f"constituent {j} ({current[j]:.6g}) is outside its bounds "
                    f"[{lower[j]:.6g}, {upper[j]:.6g}]; allow some turnover or widen the bounds"
                )
            fixed = np.ones(len(cols), dtype=bool)
            fixed_w = cur_w.copy()
            cap = 0.0

    G = data.gram[np.ix_(data_pos, data_pos)]
    c = data.xty[data_pos]
    ridge = 0.0
    free = ~fixed
    if l2 == 0.0 and free.any():
        r = RIDGE_FOR_UNIQUENESS * float(np.mean(np.diag(data.gram)))
        Gf = G[np.ix_(free, free)]
        if int(free.sum()) > data.n or not _positive_definite(Gf - r * np.eye(len(Gf))):
            ridge = r
    H = G + (l2 + ridge) * np.eye(len(c))

    cur_all = current[data.columns] * scaling.x_scale[data.columns] / scaling.y_scale
    const = 0.5 * data.yty + tau * float(np.abs(cur_all[~in_data]).sum())
    cscale = float(np.max(np.abs(data.xty))) if len(data.xty) else 0.0
    return Problem(
        cols=cols,
        data_pos=data_pos,
        G=G,
        H=H,
        c=c,
        d=d,
        lo=lo_w / d,
        hi=hi_w / d,
        cur=cur_w / d,
        lo_w=lo_w,
        hi_w=hi_w,
        cur_w=cur_w,
        fixed=fixed,
        fixed_w=fixed_w,
        l1=float(l1),
        l2=float(l2),
        ridge=ridge,
        tau=tau,
        turnover=turnover,
        rows=_linear_rows(limits, solved, cols, d),
        cap=cap,
        forced=forced,
        const=const,
        cscale=cscale,
    )


def _check_held_at_zero(
    lower: np.ndarray, upper: np.ndarray, usable: np.ndarray, solved: np.ndarray
) -> None:
    bad = np.flatnonzero(~solved & ((lower > 0) | (upper < 0)))
    if len(bad):
        j = int(bad[0])
        why = (
            "has no variance on the fitting rows, so it gets weight 0"
            if not usable[j]
            else "is outside the names allowed to be held, so it gets weight 0"
        )
        raise InfeasibleError(
            f"constituent {j} {why}, but its bounds [{lower[j]:.6g}, {upper[j]:.6g}] exclude 0; "
            "set its minimum to 0 (or its maximum, if negative) or allow it to be held"
        )


def _linear_rows(
    limits: Limits, solved: np.ndarray, cols: np.ndarray, d: np.ndarray
) -> tuple[LinearRow, ...]:
    """One row per linear limit with a bound, in list order, over the solved columns."""
    rows = []
    for item in limits.linear:
        lo, hi = item.bounds()
        if lo == -np.inf and hi == np.inf:
            continue
        # Coefficients per original weight times d_j: the row acts on b, its bounds stay in
        # original units.
        coef = item.coefficients(solved.size, "solve_limited")[cols] * d
        rows.append(LinearRow(item.kind, item.label, coef, lo, hi, item.what))
    return tuple(rows)


def objective(prob: Problem, b: np.ndarray) -> float:
    """The standardized objective at ``b`` (shape (m,)), every penalty and the ridge included.

    Equals ``(1/2n) |y_s - X_s b|^2 + l1 |b|_1 + 0.5 (l2 + ridge) |b|^2
    + tau sum_j |b_j - b_cur_j|`` over all usable columns.
    """
    value = 0.5 * float(b @ (prob.H @ b)) - float(prob.c @ b) + prob.l1 * float(np.abs(b).sum())
    if prob.tau:
        value += prob.tau * float(np.abs(b - prob.cur).sum())
    return value + prob.const
