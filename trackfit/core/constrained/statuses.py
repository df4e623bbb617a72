"""How close a set of weights is to every limit in force."""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from trackfit.core.limits import STATUS_RANK, Limits, LimitStatus, LinearLimit

#: A limit whose slack is within this of 0 (original units) is binding; its slack reads 0.0.
BINDING = 1e-9


def _status(kind: str, target, bound: float, value: float, slack: float) -> LimitStatus:
    binding = abs(slack) <= BINDING
    return LimitStatus(kind, target, float(bound), float(value), float(slack), binding)


def _snapped(status: LimitStatus) -> LimitStatus:
    return replace(status, slack=0.0) if status.binding else status


def _finite(value: float | None) -> bool:
    return value is not None and bool(np.isfinite(value))


def _status_order(limits: Limits) -> list[LinearLimit]:
    """The linear limits in status order: by :data:`STATUS_RANK`, then as listed."""
    last = len(STATUS_RANK)
    return sorted(limits.linear, key=lambda item: STATUS_RANK.get(item.kind, last))


def limit_statuses(weights: np.ndarray, limits: Limits) -> tuple[LimitStatus, ...]:
    """Every limit in force at ``weights``, in a stable order.

    The order: long-only (one status, at the most negative weight); per-name ``lower`` and
    ``upper`` (only finite bounds), by position, lower before upper; the linear limits (for
    each group in order ``group_min`` then ``group_max``; ``budget_min``, ``budget_max``; then
    any other kind, such as ``beta_min``, ``beta_max``, in list order); ``max_turnover``. The
    count limits (``max_names``, ``min_position``) are not covered here. Slack is
    ``value - bound`` for lower limits and ``bound - value`` for upper ones, negative when a
    limit is broken, and reads exactly 0.0 when within :data:`BINDING` of 0.

    Parameters
    ----------
    weights : ndarray of shape (n_assets,)
        Original units, over all constituents.
    limits : Limits
    """
    return tuple(_snapped(s) for s in _raw_statuses(weights, limits))


def _raw_statuses(weights: np.ndarray, limits: Limits) -> list[LimitStatus]:
    w = np.asarray(weights, dtype=float)
    out: list[LimitStatus] = []
    if limits.long_only:
        j = int(np.argmin(w)) if w.size else None
        low = float(w[j]) if j is not None else 0.0
        out.append(_status("long_only", j, 0.0, low, low))
    lower = limits.lower if limits.lower is not None else np.full(w.size, -np.inf)
    upper = limits.upper if limits.upper is not None else np.full(w.size, np.inf)
    for j in np.flatnonzero(np.isfinite(lower) | np.isfinite(upper)):
        j = int(j)
        if np.isfinite(lower[j]):
            out.append(_status("lower", j, lower[j], w[j], w[j] - lower[j]))
        if np.isfinite(upper[j]):
            out.append(_status("upper", j, upper[j], w[j], upper[j] - w[j]))
    for item in _status_order(limits):
        total = item.total(w)
        if _finite(item.lower):
            out.append(
                _status(f"{item.kind}_min", item.label, item.lower, total, total - item.lower)
            )
        if _finite(item.upper):
            out.append(
                _status(f"{item.kind}_max", item.label, item.upper, total, item.upper - total)
            )
    if limits.max_turnover is not None:
        current = limits.current if limits.current is not None else np.zeros(w.size)
        value = float(np.sum(np.abs(w - current))) / 2.0 + limits.outside_turnover
        cap = limits.max_turnover
        out.append(_status("max_turnover", None, cap, value, cap - value))
    return out


def worst_violation(weights: np.ndarray, limits: Limits) -> float:
    """How far the most broken limit of :func:`limit_statuses` is broken (0 when all hold).

    Vectorized: the support search asks this of every refit, and needs no statuses.
    """
    w = np.asarray(weights, dtype=float)
    worst = 0.0
    if limits.long_only and w.size:
        worst = max(worst, -float(w.min()))
    if limits.lower is not None and w.size:
        gap = limits.lower - w
        worst = max(worst, float(np.max(np.where(np.isfinite(gap), gap, -np.inf))))
    if limits.upper is not None and w.size:
        gap = w - limits.upper
        worst = max(worst, float(np.max(np.where(np.isfinite(gap), gap, -np.inf))))
    for item in limits.linear:
        total = item.total(w)
        if _finite(item.lower):
            worst = max(worst, item.lower - total)
        if _finite(item.upper):
            worst = max(worst, total - item.upper)
    if limits.max_turnover is not None:
        current = limits.current if limits.current is not None else np.zeros(w.size)
        value = float(np.sum(np.abs(w - current))) / 2.0 + limits.outside_turnover
        worst = max(worst, value - limits.max_turnover)
    return max(worst, 0.0)


def measure(weights: np.ndarray, limits: Limits) -> tuple[tuple[LimitStatus, ...], float]:
    """:func:`limit_statuses`, and how far the most broken limit is broken (0 when all hold)."""
    raw = _raw_statuses(weights, limits)
    worst = max((max(-s.slack, 0.0) for s in raw), default=0.0)
    return tuple(_snapped(s) for s in raw), worst
