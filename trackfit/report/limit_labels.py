"""What report.md and summary.json both need to show mandate limits and trades.

Limit statuses point at constituents by position and at groups by name; this module turns
them into the names a reader knows, and counts trades by action for display.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from trackfit.core.limits import Limits, LimitStatus, LinearLimit
from trackfit.evaluate.trades import TradeList

#: Trade actions in the order reports list them.
ACTIONS = ("buy", "sell", "new", "dropped", "hold")

#: Status kinds whose bound and value count names rather than measure weight.
COUNT_KINDS = ("max_names",)
#: Status kinds whose bound and value are plain numbers (a beta), not weights in percent.
PLAIN_KINDS = ("beta_min", "beta_max")

#: What each linear limit beyond the budget and the groups bounds, in words (those two have
#: their own wording, kept from before the limits became one list).
LINEAR_WORDS = {"beta": "beta to the benchmark"}

#: For each status kind: what is limited (``{}`` takes the constituent or group name) and
#: which side the bound is on.
_KIND_WORDS = {
    "long_only": ("Weight of {} (long-only)", "at least"),
    "lower": ("Weight of {}", "at least"),
    "upper": ("Weight of {}", "at most"),
    "budget_min": ("Sum of weights", "at least"),
    "budget_max": ("Sum of weights", "at most"),
    "group_min": ("Total weight of group {}", "at least"),
    "group_max": ("Total weight of group {}", "at most"),
    "beta_min": ("Beta to the benchmark", "at least"),
    "beta_max": ("Beta to the benchmark", "at most"),
    "max_turnover": ("One-way turnover", "at most"),
    "max_names": ("Names held", "at most"),
    "min_position": ("Smallest position held", "at least"),
}


def status_name(status: LimitStatus, names: Sequence[str]) -> str | None:
    """The constituent (from a position into ``names``) or group a status is about, or None.

    Raises
    ------
    ValueError
        If a position is outside ``names`` (a bug in whoever built the statuses).
    """
    target = status.target
    if target is None:
        return None
    if isinstance(target, str):
        return target
    if isinstance(target, (int, np.integer)) and not isinstance(target, bool):
        if not 0 <= int(target) < len(names):
            raise ValueError(
                f"A {status.kind!r} limit status points at constituent position {target}, "
                f"but there are {len(names)} constituents."
            )
        return names[int(target)]
    raise ValueError(
        f"A {status.kind!r} limit status has a target of type {type(target).__name__}; "
        "expected a constituent position, a group name or None."
    )


def status_words(status: LimitStatus, names: Sequence[str]) -> str:
    """The limit in words, for example ``"Weight of Alder Mills, at most"``."""
    name = status_name(status, names)
    subject, side = _KIND_WORDS.get(status.kind, (status.kind.replace("_", " "), ""))
    if "{}" in subject:
        subject = subject.format(name if name is not None else "(unnamed)")
    elif name is not None:
        subject = f"{subject}: {name}"
    return f"{subject}, {side}" if side else subject


def worded_linear(limits: Limits) -> tuple[LinearLimit, ...]:
    """The linear limits worded by :func:`linear_words` (every kind but budget and group)."""
    return tuple(item for item in limits.linear if item.kind in LINEAR_WORDS)


def linear_words(item: LinearLimit) -> str:
    """A linear limit in words, for example ``"beta to the benchmark between 0.95 and 1.05"``.

    Plain numbers (``:g``); report.md and ``trackfit check`` both use it.
    """
    subject = LINEAR_WORDS.get(item.kind, item.kind.replace("_", " "))
    if item.label is not None:
        subject = f"{subject} {item.label}"
    lo, hi = item.bounds()
    if lo == hi:
        return f"{subject} exactly {lo:g}"
    if np.isfinite(lo) and np.isfinite(hi):
        return f"{subject} between {lo:g} and {hi:g}"
    if np.isfinite(lo):
        return f"{subject} at least {lo:g}"
    if np.isfinite(hi):
        return f"{subject} at most {hi:g}"
    return f"{subject}: no bound"


def binding_first(statuses: Sequence[LimitStatus]) -> list[LimitStatus]:
    """Binding statuses first, each part in the order given."""
    return sorted(statuses, key=lambda s: not s.binding)


def trade_counts(trade_list: TradeList) -> dict[str, int]:
    """How many trades have each action, in :data:`ACTIONS` order (zeros included)."""
    counts = dict.fromkeys(ACTIONS, 0)
    for trade in trade_list.trades:
        counts[trade.action] = counts.get(trade.action, 0) + 1
    return counts
