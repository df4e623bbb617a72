"""The mandate-limit and trade parts of summary.json, in a fixed key order.

Positions into the constituents are written as names; bounds that are absent (None or an
infinity) are written as null.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

from trackfit.core.limits import Limits, LimitStatus
from trackfit.core.results import SupportSearch
from trackfit.data.holdings import CurrentHoldings
from trackfit.evaluate.trades import TradeList
from trackfit.job import Bounds, HoldingsSpec, LimitsSpec
from trackfit.outcomes.fit import FitOutcome
from trackfit.report.held import held_model
from trackfit.report.limit_labels import status_name, trade_counts, worded_linear
from trackfit.report.paths import relative_path


def _pair(lower: float | None, upper: float | None) -> dict[str, Any]:
    return {"min": lower, "max": upper}


def _bounds(b: Bounds | None) -> dict[str, Any] | None:
    return None if b is None else _pair(b.min, b.max)


def job_limits(spec: LimitsSpec, folder: Path) -> dict[str, Any]:
    """The limits as written in the job (names, not positions)."""
    groups = None
    if spec.groups is not None:
        g = spec.groups
        groups = {
            "file": relative_path(g.file, folder),
            "name_column": g.name_column,
            "group_column": g.group_column,
            "each": _bounds(g.each),
            "bounds": [{"group": label, **_pair(b.min, b.max)} for label, b in g.bounds],
        }
    out = {
        "long_only": spec.long_only,
        "budget": None if spec.budget is None else _pair(*spec.budget),
        "weight": _bounds(spec.weight),
        "names": [{"name": name, **_pair(b.min, b.max)} for name, b in spec.names],
        "groups": groups,
        "max_names": spec.max_names,
        "min_position": spec.min_position,
    }
    if spec.beta is not None:  # only when set, so summaries without it keep their bytes
        out["beta"] = _bounds(spec.beta)
    return out


def job_holdings(spec: HoldingsSpec | None, folder: Path) -> dict[str, Any] | None:
    """The current-holdings part of the job, or None when no holdings were given."""
    if spec is None:
        return None
    out: dict[str, Any] = {
        "file": relative_path(spec.file, folder),
        "turnover_penalty": spec.turnover_penalty,
        "max_turnover": spec.max_turnover,
    }
    if spec.date is not None:  # only when set, so summaries without it keep their bytes
        out["date"] = spec.date.isoformat()
    return out


def limits_summary(outcome: FitOutcome) -> dict[str, Any]:
    """The limits in force, and the held model's final fit against them."""
    names = outcome.data.names
    final = held_model(outcome).final_fit
    return {
        "any": outcome.limits.any,
        "in_force": _in_force(outcome.limits, names),
        "statuses": [_status(s, names) for s in final.limits],
        "search": None if final.search is None else _search(final.search, names),
    }


def _in_force(limits: Limits, names: tuple[str, ...]) -> dict[str, Any]:
    per_name = None
    if limits.lower is not None or limits.upper is not None:
        per_name = {
            name: _pair(
                None if limits.lower is None else limits.lower[i],
                None if limits.upper is None else limits.upper[i],
            )
            for i, name in enumerate(names)
        }
    out = {
        "long_only": limits.long_only,
        "budget": None if limits.budget is None else _pair(*limits.budget),
        "per_name": per_name,
        "groups": [
            {
                "name": g.name,
                "members": [names[i] for i in g.members],
                **_pair(g.lower, g.upper),
            }
            for g in limits.groups
        ],
        "max_names": limits.max_names,
        "min_position": limits.min_position,
        "turnover_penalty": limits.turnover_penalty,
        "max_turnover": limits.max_turnover,
        "outside_turnover": limits.outside_turnover,
    }
    # Linear limits beyond budget and groups, under their kind, only when set (so summaries
    # without them keep their bytes); bounds as in the job, coefficients are per fit.
    for item in worded_linear(limits):
        lo, hi = item.bounds()
        out[item.kind] = _pair(None if lo == -math.inf else lo, None if hi == math.inf else hi)
    return out


def _status(status: LimitStatus, names: tuple[str, ...]) -> dict[str, Any]:
    return {
        "kind": status.kind,
        "name": status_name(status, names),
        "bound": status.bound,
        "value": status.value,
        "slack": status.slack,
        "binding": status.binding,
    }


def _search(search: SupportSearch, names: tuple[str, ...]) -> dict[str, Any]:
    return {
        "chosen": [names[i] for i in search.chosen],
        "start": search.start,
        "objective": search.objective,
        "uncapped_objective": search.uncapped_objective,
        "evaluations": search.evaluations,
        "swaps": search.swaps,
        "removed_small": [names[i] for i in search.removed_small],
    }


def trades_summary(
    trade_list: TradeList | None, holdings: CurrentHoldings | None = None
) -> dict[str, Any] | None:
    """Turnover, counts by action and every trade, largest change first; None without holdings.

    With ``holdings`` also ``holdings``: the file's weights and the drifted ones the trades
    start from (the same when no ``holdings.date`` was given).
    """
    if trade_list is None:
        return None
    out = {
        "one_way_turnover": trade_list.one_way_turnover,
        "counts": trade_counts(trade_list),
        "trades": [
            {
                "name": t.name,
                "current": t.current,
                "target": t.target,
                "change": t.change,
                "action": t.action,
            }
            for t in trade_list.trades
        ],
    }
    if holdings is not None:
        out["holdings"] = _holdings(holdings)
    return out


def _holdings(holdings: CurrentHoldings) -> dict[str, Any]:
    drift = holdings.drift
    now = dict(zip(holdings.names, holdings.weights.tolist()))
    if drift is None:
        return {
            "date": None,
            "drifted": False,
            "file_weights": now,
            "drifted_weights": now,
        }
    return {
        "date": drift.date.isoformat(),
        "drifted": True,
        "from_date": drift.start.isoformat(),
        "to_date": drift.end.isoformat(),
        "periods": drift.periods,
        "file_weights": dict(zip(holdings.names, drift.file_weights.tolist())),
        "drifted_weights": now,
        "file_cash": drift.file_cash,
        "drifted_cash": holdings.cash,
        "kept_at_weight": list(drift.kept),
    }
