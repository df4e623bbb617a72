"""Trades from current holdings to target weights, and their one-way turnover."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Trade:
    """One name's move. ``action``: ``"buy"``, ``"sell"``, ``"new"`` (from 0), ``"dropped"`` (to 0)
    or ``"hold"`` (no change)."""

    name: str
    current: float
    target: float
    change: float
    action: str


@dataclass(frozen=True)
class TradeList:
    """All moves, largest |change| first (ties by name), and the one-way turnover
    ``sum(|target - current|) / 2`` over every name, including names held now that are not
    constituents (they are sold)."""

    trades: tuple[Trade, ...]
    one_way_turnover: float


def trades(
    names: Sequence[str],
    target: np.ndarray,
    current_names: Sequence[str],
    current: np.ndarray,
) -> TradeList:
    """Every move from the current holdings to the target weights.

    One :class:`Trade` per name in the union of ``names`` and ``current_names``; a name missing
    on one side has weight 0 there. ``change = target - current``. The action is ``"new"``
    when the current weight is 0 and the target is not, ``"dropped"`` when the target is 0 and
    the current weight is not, ``"hold"`` when the two are equal, otherwise ``"buy"`` or
    ``"sell"`` by the sign of the change. Equality is exact: weights are compared as given.

    Parameters
    ----------
    names : sequence of str, length n_assets
        Constituent names, in the order of ``target``.
    target : ndarray of shape (n_assets,)
        Target weights (cash excluded).
    current_names : sequence of str, length n_current
        Names held now; may include names that are not constituents.
    current : ndarray of shape (n_current,)
        Weights held now (cash excluded).

    Returns
    -------
    TradeList
        Trades sorted by ``|change|`` descending, ties by name; ``one_way_turnover`` is
        ``sum(|change|) / 2`` over every trade.

    Raises
    ------
    ValueError
        If a name is repeated on one side, the weights do not line up with the names or a
        weight is not finite (the caller's data checks should have caught these).
    """
    target = _weights(target, names, "target")
    current = _weights(current, current_names, "current")
    now = dict(zip(current_names, current.tolist()))
    wanted = dict(zip(names, target.tolist()))
    # Union order before sorting: constituents as given, then names held only now, sorted;
    # the final sort is total (|change|, name), so this only fixes how the data is read.
    union = list(names) + sorted(n for n in now if n not in wanted)
    moves = []
    for name in union:
        c = now.get(name, 0.0)
        t = wanted.get(name, 0.0)
        moves.append(Trade(name=name, current=c, target=t, change=t - c, action=_action(c, t)))
    moves.sort(key=lambda m: (-abs(m.change), m.name))
    # fsum: the turnover does not depend on the order the changes are added in.
    turnover = math.fsum(abs(m.change) for m in moves) / 2.0
    return TradeList(trades=tuple(moves), one_way_turnover=turnover)


def _action(current: float, target: float) -> str:
    if current == target:
        return "hold"
    if current == 0.0:
        return "new"
    if target == 0.0:
        return "dropped"
    return "buy" if target > current else "sell"


def _weights(values: np.ndarray, names: Sequence[str], side: str) -> np.ndarray:
    array = np.asarray(values, dtype=float)
    if array.shape != (len(names),):
        raise ValueError(
            f"The {side} weights have shape {array.shape}, but there are {len(names)} {side} names."
        )
    seen: set[str] = set()
    for name in names:
        if name in seen:
            raise ValueError(f"The {side} names list {name!r} more than once.")
        seen.add(name)
    bad = [names[i] for i in np.flatnonzero(~np.isfinite(array))]
    if bad:
        raise ValueError(
            f"The {side} weight of {', '.join(repr(n) for n in bad)} is not a finite number."
        )
    # +0.0 turns -0.0 into 0.0, so a negative zero never shows as a change or a sign.
    return array + 0.0
