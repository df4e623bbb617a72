"""Trades from current holdings to target weights, and their one-way turnover.

STUB: the dataclasses are the agreed interface; ``trades`` is being written.
"""

from __future__ import annotations

from dataclasses import dataclass
from collections.abc import Sequence

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
    raise NotImplementedError
