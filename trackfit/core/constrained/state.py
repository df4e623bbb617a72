"""An active set of the constrained problem: which weights sit at a point, which limits are tight.

Each standardized weight ``b_j`` has a few special points: its bounds, 0 (a kink of the L1
penalty) and its current holding (a kink of the turnover terms). Between two neighbouring
points the objective is smooth in ``b_j``. An active set pins some weights at one of their
points and lets the others move inside one open segment, whose signs ``sign(b_j)`` and
``sign(b_j - b_cur_j)`` are then known; it also says which linear limits hold with equality.
On such a set the problem is an equality-constrained quadratic: one linear solve.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trackfit.core.constrained.problem import Problem

# Row states.
INACTIVE, AT_UPPER, AT_LOWER, EQUAL = 0, 1, -1, 2


@dataclass(frozen=True, eq=False)
class State:
    """One active set.

    Attributes
    ----------
    pinned : ndarray of bool, shape (m,)
    value : ndarray of shape (m,)
        Where pinned: the point (exactly one of the column's special points).
    rep : ndarray of shape (m,)
        Where free: a point strictly inside the column's segment (fixes its signs).
    rows : ndarray of int, shape (n_rows,)
        ``INACTIVE``, ``AT_UPPER``, ``AT_LOWER`` or ``EQUAL`` for each linear row.
    cap : bool
        The turnover cap is tight.
    """

    pinned: np.ndarray
    value: np.ndarray
    rep: np.ndarray
    rows: np.ndarray
    cap: bool

    def key(self, cand: np.ndarray) -> bytes:
        """Bytes that tell active sets apart (``cand``: :func:`candidates` of the problem)."""
        with np.errstate(invalid="ignore"):
            seg = np.where(self.pinned, -1, np.sum(cand < self.rep[:, None], axis=1))
        return b"".join(
            [
                np.where(self.pinned, self.value, 0.0).tobytes(),
                seg.astype(np.int8).tobytes(),
                self.rows.tobytes(),
                bytes([self.cap]),
            ]
        )


def candidates(prob: Problem) -> np.ndarray:
    """Special points of every column, shape (m, 4), NaN where a point does not apply."""
    cand = np.full((prob.m, 4), np.nan)
    cand[:, 0] = np.where(np.isfinite(prob.lo), prob.lo, np.nan)
    cand[:, 1] = np.where(np.isfinite(prob.hi), prob.hi, np.nan)
    inside = lambda x: (x >= prob.lo) & (x <= prob.hi)  # noqa: E731
    if prob.l1:
        cand[:, 2] = np.where(inside(0.0), 0.0, np.nan)
    if prob.turnover:
        cand[:, 3] = np.where(inside(prob.cur), prob.cur, np.nan)
    fb = prob.fixed_b()
    cand[prob.fixed] = np.nan
    cand[prob.fixed, 0] = fb[prob.fixed]
    return cand


def segment(cand: np.ndarray, rep: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Ends of the open segment holding each ``rep``: the nearest special points around it."""
    with np.errstate(invalid="ignore"):
        below = np.where(cand < rep[:, None], cand, -np.inf)
        above = np.where(cand > rep[:, None], cand, np.inf)
    return np.max(below, axis=1), np.min(above, axis=1)


def signs(prob: Problem, state: State, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``sign(b)`` and ``sign(b - b_cur)`` on free columns (from ``rep``), 0 where not used."""
    x = np.where(state.pinned, b, state.rep)
    sig = np.sign(x) if prob.l1 else np.zeros(prob.m)
    rho = np.sign(x - prob.cur) if prob.turnover else np.zeros(prob.m)
    return sig, rho


def row_values(prob: Problem, b: np.ndarray) -> np.ndarray:
    return np.array([row.coef @ b for row in prob.rows])


def turnover(prob: Problem, b: np.ndarray) -> float:
    """One-way turnover of the solved columns, ``sum_j d_j |b_j - b_cur_j| / 2``."""
    return 0.5 * float(prob.d @ np.abs(b - prob.cur))


def classify(
    prob: Problem, b: np.ndarray, pin_tol: float, row_tol: float, cand: np.ndarray | None = None
) -> State:
    """The active set an approximate solution suggests: points within ``pin_tol`` pin.

    ``cand`` is :func:`candidates` of ``prob``, when already at hand.
    """
    cand = candidates(prob) if cand is None else cand
    scale = max(1.0, float(np.max(np.abs(b), initial=0.0)))
    with np.errstate(invalid="ignore"):
        dist = np.abs(cand - b[:, None])
    dist = np.where(np.isnan(dist), np.inf, dist)
    nearest = np.argmin(dist, axis=1) if prob.m else np.zeros(0, dtype=int)
    close = dist[np.arange(prob.m), nearest] <= pin_tol * scale
    pinned = close | prob.fixed
    value = np.where(pinned, cand[np.arange(prob.m), nearest], 0.0)
    rep = np.where(pinned, 0.0, b)
    rows = np.full(len(prob.rows), INACTIVE, dtype=np.int8)
    values = row_values(prob, b)

    def near(value: float, bound: float) -> bool:
        return bool(np.isfinite(bound)) and abs(value - bound) <= row_tol * max(1.0, abs(bound))

    for r, row in enumerate(prob.rows):
        if row.lower == row.upper:
            rows[r] = EQUAL
        elif near(values[r], row.upper):
            rows[r] = AT_UPPER
        elif near(values[r], row.lower):
            rows[r] = AT_LOWER
    cap = prob.cap is not None and turnover(prob, b) >= prob.cap - row_tol * max(1.0, prob.cap)
    return State(pinned=pinned, value=value, rep=rep, rows=rows, cap=bool(cap))


def pinned_weights(prob: Problem, state: State, b: np.ndarray) -> np.ndarray:
    """Original-unit weights, shape (m,): pinned ones take their point's exact original value."""
    w = prob.d * b
    v = state.value
    p = state.pinned
    w = np.where(p & (v == prob.cur), prob.cur_w, w)
    w = np.where(p & (v == prob.lo), prob.lo_w, w)
    w = np.where(p & (v == prob.hi), prob.hi_w, w)
    w = np.where(p & (v == 0.0), 0.0, w)
    w = np.where(prob.fixed, prob.fixed_w, w)
    return w
