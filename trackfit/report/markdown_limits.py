"""The "Mandate limits" section of report.md: limits in force, how close the weights came to
them, the cost of a cap on the number of names, and the trades from the current holdings."""

from __future__ import annotations

import math

import numpy as np

from trackfit.core.limits import Limits, LimitStatus
from trackfit.core.results import SupportSearch
from trackfit.data.holdings import CurrentHoldings
from trackfit.evaluate.holdout import ModelOutcome
from trackfit.evaluate.metrics import TrackingMetrics
from trackfit.evaluate.trades import TradeList
from trackfit.job import Bounds
from trackfit.outcomes.fit import FitOutcome
from trackfit.report.held import held_model, judged_label
from trackfit.report.limit_labels import (
    COUNT_KINDS,
    PLAIN_KINDS,
    binding_first,
    linear_words,
    status_words,
    trade_counts,
    worded_linear,
)
from trackfit.report.numbers import NOT_AVAILABLE, fixed, percent, percent_short
from trackfit.report.paths import relative_path
from trackfit.report.tables import inline, table

HEADING = "## Mandate limits"

#: Trades listed in report.md; summary.json lists every one.
TRADE_ROWS = 40

_ACTION_LABELS = {
    "buy": "Buys",
    "sell": "Sells",
    "new": "New names",
    "dropped": "Dropped names",
    "hold": "Holds (no change)",
}


def mandate_section(outcome: FitOutcome) -> list[str]:
    """Lines of the "## Mandate limits" section, heading first, no trailing blank line."""
    lines = [HEADING, ""]
    limits = outcome.limits
    holdings = outcome.job.holdings is not None or outcome.trades is not None
    if not limits.any and not holdings:
        return lines + ["No mandate limits were set."]
    model = held_model(outcome)
    lines += ["### Limits in force", ""] + _in_force(outcome)
    if limits.any or model.final_fit.limits:
        lines += ["", "### Limit statuses", ""] + _statuses(outcome, model)
    if limits.max_names is not None or model.final_fit.search is not None:
        lines += ["", "### Name cap", ""] + _name_cap(outcome, model)
    if outcome.trades is not None:
        lines += ["", "### Trades", ""] + _trades(outcome.trades, outcome.holdings)
    return lines


# -- limits in force ------------------------------------------------------------------------


def _side(value: float | None) -> float | None:
    """A bound, or None where there is none (None or an infinity)."""
    if value is None or not math.isfinite(float(value)):
        return None
    return float(value)


def _range(lower: float | None, upper: float | None) -> str:
    """``"between 1.00% and 5.00%"``, ``"at most 5.00%"``, ``"exactly 1.00%"`` ..."""
    lo, hi = _side(lower), _side(upper)
    if lo is not None and hi is not None:
        if lo == hi:
            return f"exactly {percent_short(lo)}"
        return f"between {percent_short(lo)} and {percent_short(hi)}"
    if lo is not None:
        return f"at least {percent_short(lo)}"
    if hi is not None:
        return f"at most {percent_short(hi)}"
    return "no bound"


def _bounds(b: Bounds) -> str:
    return _range(b.min, b.max)


def _number(value: float) -> str:
    return fixed(value, ".6g")


#: How a linear limit's quantity is measured, after its words in "Limits in force".
_LINEAR_NOTES = {
    "beta": " (cov(portfolio, benchmark) / var(benchmark), centered, over the rows each fit "
    "uses: a fold's training rows, the rows before the holdout, the whole window)",
}


def _in_force(outcome: FitOutcome) -> list[str]:
    limits, spec, job = outcome.limits, outcome.job.limits, outcome.job
    folder = job.path.parent
    lines: list[str] = []
    if not limits.any:
        lines.append("- No limit on the weights was set.")
    if limits.long_only:
        lines.append("- Long-only: no weight below 0.")
    if limits.budget is not None:
        lo, hi = limits.budget
        if lo == 1.0 and hi == 1.0:
            lines.append("- Budget: fully invested; the weights sum to 100.00% (no cash).")
        else:
            lines.append(f"- Budget: the sum of weights is {_range(lo, hi)}.")
    lines += _per_name(outcome, limits)
    if limits.groups:
        source = ""
        if spec.groups is not None:
            source = (
                f" (groups from `{inline(relative_path(spec.groups.file, folder))}`, "
                f"column '{inline(spec.groups.group_column)}')"
            )
        lines.append(f"- Group totals{source}:")
        for g in limits.groups:
            count = f"{len(g.members)} name" + ("" if len(g.members) == 1 else "s")
            lines.append(f"  - {inline(g.name)} ({count}): {_range(g.lower, g.upper)}.")
    for item in worded_linear(limits):
        words = linear_words(item)
        lines.append(f"- {words[0].upper()}{words[1:]}{_LINEAR_NOTES.get(item.kind, '')}.")
    if limits.max_names is not None:
        lines.append(f"- Maximum names held: {limits.max_names}.")
    if limits.min_position is not None:
        size = percent_short(limits.min_position)
        lines.append(
            f"- Minimum position: {size}; no weight strictly between 0 and {size} in size."
        )
    if job.holdings is not None:
        lines.append(f"- Current holdings: `{inline(relative_path(job.holdings.file, folder))}`.")
    if limits.turnover_penalty:
        lines.append(
            f"- Turnover penalty: {_number(limits.turnover_penalty)} times the sum of absolute "
            "changes from the current holdings, in standardized units, added to the objective."
        )
    if limits.max_turnover is not None:
        forced = ""
        if limits.outside_turnover:
            forced = (
                f", of which {percent_short(limits.outside_turnover)} is forced by selling "
                "holdings that are not constituents"
            )
        lines.append(
            f"- Turnover cap: one-way turnover at most "
            f"{percent_short(limits.max_turnover)}{forced}."
        )
    return lines


def _per_name(outcome: FitOutcome, limits: Limits) -> list[str]:
    spec = outcome.job.limits
    lines = []
    if spec.weight is not None:
        lines.append(f"- Every name: {_bounds(spec.weight)}.")
    if spec.names:
        lines.append(
            "- By name"
            + (" (instead of the bound on every name):" if spec.weight is not None else ":")
        )
        lines += [f"  - {inline(name)}: {_bounds(b)}." for name, b in spec.names]
    if lines or (limits.lower is None and limits.upper is None):
        return lines
    # Bounds in force with none written by name (built elsewhere): list them from the arrays.
    names = outcome.data.names
    lower = limits.lower if limits.lower is not None else np.full(len(names), -np.inf)
    upper = limits.upper if limits.upper is not None else np.full(len(names), np.inf)
    bounded = [
        i for i in range(len(names)) if _side(lower[i]) is not None or _side(upper[i]) is not None
    ]
    lines.append("- By name:" if bounded else "- By name: no bound.")
    lines += [f"  - {inline(names[i])}: {_range(lower[i], upper[i])}." for i in bounded]
    return lines


# -- statuses -------------------------------------------------------------------------------


def _status_cells(status: LimitStatus) -> list[str]:
    if status.kind in COUNT_KINDS:
        return [fixed(status.bound, ".0f"), fixed(status.value, ".0f"), fixed(status.slack, ".0f")]
    if status.kind in PLAIN_KINDS:
        return [fixed(status.bound, ".6f"), fixed(status.value, ".6f"), fixed(status.slack, ".6f")]
    return [percent(status.bound, 4), percent(status.value, 4), percent(status.slack, 4)]


#: Non-binding limits shown after the binding ones, in the statuses' own order.
STATUS_ROWS_WITH_ROOM = 10


def _statuses(outcome: FitOutcome, model: ModelOutcome) -> list[str]:
    statuses = model.final_fit.limits
    if not statuses:
        return [
            f"The held model {inline(model.name)} reported no limit statuses for its final fit."
        ]
    names = outcome.data.names
    binding = sum(s.binding for s in statuses)
    lines = [
        f"Every limit at the final fit of the held model {inline(model.name)}, binding limits "
        f"first ({binding} of {len(statuses)} binding). Slack is the distance from the bound; "
        "a limit binds when its slack is 0. Weights, sums and turnover are in percent"
        + ("; beta is a plain number." if any(s.kind in PLAIN_KINDS for s in statuses) else "."),
        "",
    ]
    ordered = binding_first(statuses)
    shown = ordered[: binding + STATUS_ROWS_WITH_ROOM]
    lines += table(
        ["Limit", "Bound", "Value", "Slack", "Binding"],
        [[status_words(s, names), *_status_cells(s), "yes" if s.binding else "no"] for s in shown],
        [False, True, True, True, False],
    )
    if len(ordered) > len(shown):
        lines += [
            "",
            f"{len(ordered) - len(shown)} more limits hold with more room than those shown; "
            "summary.json lists every one.",
        ]
    return lines


# -- name cap -------------------------------------------------------------------------------


def _name_cap(outcome: FitOutcome, model: ModelOutcome) -> list[str]:
    search = model.final_fit.search
    lines = []
    if search is None:
        lines.append(f"The held model {inline(model.name)} was not fitted under the cap on names.")
    else:
        lines += _search(outcome, model.name, search)
    capped = [m for m in outcome.study.models if m.uncapped_in_sample is not None]
    if not capped:
        return lines
    lines += [
        "",
        "Cost of the cap: tracking error of each model fitted on the choosing-and-fitting rows "
        "with the cap, and at the same penalty without it (every other limit kept), in "
        'percent. "Added" is capped minus uncapped.',
        "",
    ]
    lines += table(
        [
            "Model",
            "In-sample, capped",
            "In-sample, uncapped",
            "In-sample, added",
            "Holdout, capped",
            "Holdout, uncapped",
            "Holdout, added",
        ],
        [
            [
                judged_label(m, outcome.held),
                *_cost(m.in_sample, m.uncapped_in_sample),
                *_cost(m.holdout, m.uncapped_holdout),
            ]
            for m in capped
        ],
        [False] + [True] * 6,
    )
    return lines


def _cost(capped: TrackingMetrics | None, uncapped: TrackingMetrics | None) -> list[str]:
    if capped is None or uncapped is None:
        return [
            percent(capped.tracking_error, 4) if capped is not None else NOT_AVAILABLE,
            percent(uncapped.tracking_error, 4) if uncapped is not None else NOT_AVAILABLE,
            NOT_AVAILABLE,
        ]
    return [
        percent(capped.tracking_error, 4),
        percent(uncapped.tracking_error, 4),
        percent(capped.tracking_error - uncapped.tracking_error, 4),
    ]


def _search(outcome: FitOutcome, name: str, search: SupportSearch) -> list[str]:
    names = outcome.data.names
    chosen = [names[i] for i in search.chosen]
    removed = [names[i] for i in search.removed_small]
    cap = outcome.limits.max_names
    held = f"{len(chosen)} names (cap: {cap})" if cap is not None else f"{len(chosen)} names"
    lines = [
        f"The held model {inline(name)} holds {held}, chosen on the whole window by a search "
        "over sets of names, each set refitted under every other limit; the winning start was "
        f"{inline(search.start)}.",
        "",
    ]
    lines += table(
        ["Item", "Value"],
        [
            ["Names chosen", str(len(chosen))],
            ["Winning start", search.start],
            ["Refits tried", str(search.evaluations)],
            ["Swaps accepted", str(search.swaps)],
            ["Removed below the minimum position", ", ".join(removed) if removed else "none"],
            ["Objective with the cap (standardized)", fixed(search.objective, ".6e")],
            ["Objective without the cap (standardized)", fixed(search.uncapped_objective, ".6e")],
        ],
        [False, False],
    )
    listed = ", ".join(inline(n) for n in chosen) if chosen else "none"
    lines += ["", f"Names chosen ({len(chosen)}): {listed}."]
    return lines


# -- trades ---------------------------------------------------------------------------------


def _trades(trade_list: TradeList, holdings: CurrentHoldings | None = None) -> list[str]:
    rows = trade_list.trades
    drift = None if holdings is None else holdings.drift
    source = "current holdings" if drift is None else "drifted holdings"
    lines = [
        f"One-way turnover from the {source} to the held weights: "
        f"{percent(trade_list.one_way_turnover, 4)} (half the sum of the absolute changes, "
        "cash excluded; holdings that are not constituents are sold).",
        "",
    ]
    if holdings is not None:
        lines += [_drift_words(holdings), ""]
    counts = trade_counts(trade_list)
    lines += table(
        ["Action", "Names"],
        [[_ACTION_LABELS.get(a, a), str(n)] for a, n in counts.items()],
        [False, True],
    )
    lines.append("")
    held = sum(1 for t in rows if t.action == "hold")
    rows = tuple(t for t in rows if t.action != "hold")  # a hold is no trade
    if not rows:
        if held:
            return lines + [f"There are no trades: all {held} names hold their weights."]
        return lines + ["There are no trades: nothing is held now and nothing is to be held."]
    kept = f"; the {held} names that hold are not listed" if held else ""
    if len(rows) <= TRADE_ROWS:
        lines.append(f"All {len(rows)} trades, largest change first (weights in percent){kept}:")
    else:
        lines.append(
            f"The {TRADE_ROWS} largest of {len(rows)} trades, largest change first (weights in "
            f"percent); the other {len(rows) - TRADE_ROWS} are listed in summary.json{kept}:"
        )
    lines.append("")
    if drift is None:
        lines += table(
            ["Name", "Current", "Target", "Change", "Action"],
            [
                [t.name, percent(t.current, 4), percent(t.target, 4), percent(t.change, 4)]
                + [t.action]
                for t in rows[:TRADE_ROWS]
            ],
            [False, True, True, True, False],
        )
        return lines
    in_file = dict(zip(holdings.names, drift.file_weights.tolist()))
    lines += table(
        ["Name", "In file", "Drifted", "Target", "Change", "Action"],
        [
            [t.name, percent(in_file.get(t.name, 0.0), 4), percent(t.current, 4)]
            + [percent(t.target, 4), percent(t.change, 4), t.action]
            for t in rows[:TRADE_ROWS]
        ],
        [False, True, True, True, True, False],
    )
    return lines


def _drift_words(holdings: CurrentHoldings) -> str:
    drift = holdings.drift
    if drift is None:
        return (
            "The holdings file's weights are used as given: they were not drifted, because no "
            "'holdings.date' was given."
        )
    start = (
        ""
        if drift.start == drift.date
        else f" ({drift.date} is not a data date: the drift starts from the last data date "
        f"before it, {drift.start})"
    )
    text = (
        f"The holdings file's weights are as of {drift.date}; they were drifted to the as-of "
        f"date {drift.end} as bought and held over the {drift.periods} return date(s) after "
        f"{drift.start}{start}: each name by its total return (before the risk-free rate is "
        "taken off), cash by the risk-free rate (not at all without one). Cash "
        f"{percent(drift.file_cash, 4)} in the file, {percent(holdings.cash, 4)} drifted."
    )
    if drift.kept:
        shown = ", ".join(inline(n) for n in drift.kept)
        text += f" Held names with no return series were kept at their value: {shown}."
    return text
