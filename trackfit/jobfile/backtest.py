"""Parser for the ``backtest`` section: the rebalance schedule, the fit window, holding and costs.

Names in ``backtest.cost_bps`` are kept as written; whether they are constituents is checked
when the data are known (:mod:`trackfit.commands.backtest`).
"""

from __future__ import annotations

import math
from typing import Any

from trackfit.jobfile.checks import Reader
from trackfit.jobfile.specs import BacktestSpec, WindowSpec

# The schedule (trackfit.evaluate.schedule) and the simulation (trackfit.evaluate.backtest)
# implement exactly these words; the job reader keeps its own list so that it needs nothing of
# the evaluation layer, and tests/test_layers.py checks that the lists agree.
EVERY = ("month_end", "week_end", "periods")
MODES = ("buy_and_hold", "constant_mix")
WINDOWS = ("rolling", "expanding")
#: Key of the fallback cost in a per-name ``cost_bps`` mapping.
DEFAULT_COST = "default"
#: A cost above this many basis points (10 %) per unit traded is far more likely a typo.
MAX_COST_BPS = 1000.0

_KEYS = ("every", "periods", "start", "end", "window", "mode", "cost_bps", "memory_mb")


def parse_backtest(r: Reader, value: Any, window: WindowSpec) -> BacktestSpec | None:
    """The ``backtest`` section; absent or null means none (``trackfit backtest`` uses defaults).

    Parameters
    ----------
    window : WindowSpec
        The job's window, already parsed: a rolling backtest needs ``window.lookback``.
    """
    if value is None:
        return None
    s = r.section("backtest", value, _KEYS)
    every = r.choice("backtest.every", s.get("every"), EVERY, BacktestSpec.every)
    periods = r.integer("backtest.periods", s.get("periods"), 1, None)
    if every == "periods" and periods is None:
        raise r.error(
            "'backtest.periods' is required with 'backtest.every: periods': the number "
            "of rows between rebalances, such as 21"
        )
    if every != "periods" and periods is not None:
        raise r.error(
            f"'backtest.periods' applies only with 'backtest.every: periods', but "
            f"'backtest.every' is {every!r}; remove 'backtest.periods' or set "
            "'backtest.every: periods'"
        )
    start = r.day("backtest.start", s.get("start"))
    end = r.day("backtest.end", s.get("end"))
    if start is not None and end is not None and start > end:
        raise r.error(f"'backtest.start' ({start}) is after 'backtest.end' ({end}); swap them")
    kind = r.choice("backtest.window", s.get("window"), WINDOWS, BacktestSpec.window)
    check_rolling(r, kind, window)
    flat, names = _costs(r, s.get("cost_bps"))
    return BacktestSpec(
        every=every,
        periods=periods,
        start=start,
        end=end,
        window=kind,
        mode=r.choice("backtest.mode", s.get("mode"), MODES, BacktestSpec.mode),
        cost_bps=flat,
        cost_bps_names=names,
        memory_mb=(
            BacktestSpec.memory_mb
            if s.get("memory_mb") is None
            else r.number(
                "backtest.memory_mb",
                s["memory_mb"],
                0.0,
                math.inf,
                "a number of MiB >= 0, such as 1024 (0: never share)",
            )
        ),
    )


def check_rolling(r: Reader, kind: str, window: WindowSpec) -> None:
    """A rolling backtest window is ``window.lookback`` rows long, so that key must be set."""
    if kind == "rolling" and window.lookback is None:
        raise r.error(
            "'backtest.window' is 'rolling' (the default), which fits on the last "
            "'window.lookback' rows at each rebalance date, but 'window.lookback' is "
            "not set; set 'window.lookback' or write 'backtest.window: expanding'"
        )


def _costs(r: Reader, value: Any) -> tuple[float, tuple[tuple[str, float], ...]]:
    must = f"a number of basis points from 0 to {MAX_COST_BPS:g}"
    if value is None:
        return BacktestSpec.cost_bps, ()
    if not isinstance(value, dict):
        return r.number("backtest.cost_bps", value, 0.0, MAX_COST_BPS, must), ()
    named = r.labelled("backtest.cost_bps", value, "constituent name")
    if DEFAULT_COST not in named:
        raise r.error(
            f"'backtest.cost_bps' is a mapping from names to basis points but has no "
            f"'{DEFAULT_COST}' entry; add '{DEFAULT_COST}: <bps>' for every name not "
            "listed"
        )
    flat = r.number(
        f"backtest.cost_bps.{DEFAULT_COST}", named[DEFAULT_COST], 0.0, MAX_COST_BPS, must
    )
    names = tuple(
        (name, r.number(f"backtest.cost_bps.{name}", bps, 0.0, MAX_COST_BPS, must))
        for name, bps in named.items()
        if name != DEFAULT_COST
    )
    return flat, names
