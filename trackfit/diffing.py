"""``trackfit diff`` without the command line: two weight files -> the trades between them.

Both files are read as holdings (:func:`trackfit.data.holdings.read_holdings`): the
``weights.csv`` that ``trackfit fit`` writes, or any two-column ``name,weight`` CSV.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from trackfit.data.holdings import read_holdings
from trackfit.evaluate.trades import Trade, TradeList, trades

FORMATS = ("text", "csv", "json")


@dataclass(frozen=True)
class WeightsDiff:
    """What changed from one weight file to another.

    Attributes
    ----------
    old, new : str
        How the files are named (as given on the command line).
    trades : TradeList
        Every name in either file, largest ``|new - old|`` first, ties by name; ``current`` is
        the old weight and ``target`` the new one.
    old_names, new_names : int
        Names with a nonzero weight in each file.
    old_cash, new_cash : float or None
        The ``(cash)`` rows, None when a file has none.
    """

    old: str
    new: str
    trades: TradeList
    old_names: int
    new_names: int
    old_cash: float | None
    new_cash: float | None

    def with_action(self, *actions: str) -> tuple[Trade, ...]:
        return tuple(t for t in self.trades.trades if t.action in actions)

    @property
    def moves(self) -> tuple[Trade, ...]:
        """The trades that change something (every action but ``"hold"``), in order."""
        return self.with_action("new", "dropped", "buy", "sell")


def diff_weights(old: Path, new: Path) -> WeightsDiff:
    """Read two weight files and list the trades from ``old`` to ``new``.

    Raises
    ------
    DataError
        A file is missing or malformed (the message names it).
    """
    before = read_holdings(Path(old), label=str(old))
    after = read_holdings(Path(new), label=str(new))
    moves = trades(after.names, after.weights, before.names, before.weights)
    return WeightsDiff(
        old=str(old),
        new=str(new),
        trades=moves,
        old_names=int(np.count_nonzero(before.weights)),
        new_names=int(np.count_nonzero(after.weights)),
        old_cash=before.cash,
        new_cash=after.cash,
    )
