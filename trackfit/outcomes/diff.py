"""What ``trackfit diff`` found between two weight files."""

from __future__ import annotations

from dataclasses import dataclass

from trackfit.evaluate.trades import Trade, TradeList


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
