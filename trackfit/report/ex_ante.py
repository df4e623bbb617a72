"""The expected tracking error of the held weights: report.md section, summary.json tree, figure.

Every number comes from :class:`trackfit.core.risk.ExAnteRisk`; here they are only ordered,
cut to the largest and summed for display.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from trackfit.core.risk import ExAnteRisk
from trackfit.outcomes.fit import FitOutcome
from trackfit.report.held import held_weights
from trackfit.report.numbers import fixed, percent, row_dates

# The fit figures' own drawing helpers, so this one looks like its neighbours.
from trackfit.report.plots import _label, _plain, _render, labelled_bars
from trackfit.report.tables import inline, table

HEADING = "## Expected tracking error of the held weights"

#: File of the figure of contributions by name.
FIGURE_FILE = "ex_ante_contributions.png"

#: Names shown one by one; the others held are summed into one row.
TOP_NAMES = 10

#: How names the groups file does not list are shown.
NO_GROUP = "(no group)"


@dataclass(frozen=True)
class Row:
    """One displayed row: a label, the active weight it carries and its contribution."""

    label: str
    active_weight: float
    contribution: float


def name_rows(outcome: FitOutcome) -> list[Row]:
    """The rows of the by-name table: the largest contributions, the rest, the benchmark.

    The :data:`TOP_NAMES` names held with the largest absolute contribution (ties in job
    order), one row summing the other names held when there are any, then the benchmark's own
    term (active weight -1).
    """
    risk = _risk(outcome)
    weights, _ = held_weights(outcome)
    names = outcome.data.names
    held = [int(i) for i in np.flatnonzero(weights)]
    order = sorted(held, key=lambda i: -abs(float(risk.by_name[i])))  # sorted is stable
    shown, rest = order[:TOP_NAMES], order[TOP_NAMES:]
    rows = [Row(names[i], float(weights[i]), float(risk.by_name[i])) for i in shown]
    if rest:
        rows.append(
            Row(
                f"the other {len(rest)} names held",
                float(np.sum(weights[rest])),
                float(np.sum(risk.by_name[rest])),
            )
        )
    rows.append(Row(f"benchmark ({outcome.data.benchmark_name})", -1.0, risk.benchmark))
    return rows


def group_rows(outcome: FitOutcome) -> list[Row]:
    """The rows of the by-group table, largest absolute contribution first, then the benchmark.

    Empty when the job names no groups file.
    """
    risk = _risk(outcome)
    if not risk.groups:
        return []
    weights, _ = held_weights(outcome)
    totals = np.zeros(len(risk.groups))
    np.add.at(totals, risk.group_index, weights)
    order = sorted(range(len(risk.groups)), key=lambda k: -abs(float(risk.by_group[k])))
    rows = [
        Row(
            NO_GROUP if risk.groups[k] is None else str(risk.groups[k]),
            float(totals[k]),
            float(risk.by_group[k]),
        )
        for k in order
    ]
    rows.append(Row(f"benchmark ({outcome.data.benchmark_name})", -1.0, risk.benchmark))
    return rows


def ex_ante_section(outcome: FitOutcome) -> list[str]:
    """Lines of the report.md section; empty when the outcome carries no ex-ante risk."""
    risk = outcome.risk
    if risk is None:
        return []
    data = outcome.data
    first, last = row_dates(data.dates, 0, len(data.dates))
    returns = "excess returns" if data.risk_free is not None else "returns"
    lines = [HEADING, ""]
    lines.append(
        f"Expected tracking error of the held weights ({inline(outcome.held)}): "
        f"**{percent(risk.tracking_error)}** a year."
    )
    lines.append("")
    lines.append(
        f"From the covariance of the constituent and benchmark {returns} over the whole window "
        f"({first} to {last}, {risk.n_periods} rows), Ledoit-Wolf shrunk towards a multiple "
        f"of the identity (shrinkage {fixed(risk.shrinkage, '.4f')}), annualized with "
        f"{risk.periods_per_year} periods a year. The unshrunk sample covariance of the same "
        f"rows gives {percent(risk.sample_tracking_error)}; the difference is the shrinkage, "
        "which treats part of every co-movement with the benchmark as noise and so adds to "
        "the expected tracking error of a close tracker."
    )
    lines.append("")
    lines.append(
        "The active weights are the held weights and -100% in the benchmark; cash carries no "
        "term. Each contribution is the active weight times the covariance with the active "
        "return, over the tracking error (Euler allocation): they add up to the total, and a "
        "negative one lowers it. It assumes the window's covariance holds ahead; the realized "
        "figures are in the Tracking section."
    )
    lines += ["", "### By name", ""]
    lines += _table("Name", name_rows(outcome), risk.tracking_error)
    groups = group_rows(outcome)
    if groups:
        lines += ["", "### By group", ""]
        lines += _table("Group", groups, risk.tracking_error)
    return lines


def ex_ante_json(outcome: FitOutcome) -> dict[str, Any]:
    """``{"ex_ante": ...}`` when the outcome carries ex-ante risk, else empty.

    ``by_name`` holds every name with a nonzero weight, in job order; ``by_group`` (null
    without a groups file) every group in sorted label order, then :data:`NO_GROUP`.
    """
    risk = outcome.risk
    if risk is None:
        return {}
    weights, _ = held_weights(outcome)
    names = outcome.data.names
    by_group = None
    if risk.groups:
        by_group = {
            NO_GROUP if g is None else g: float(c) for g, c in zip(risk.groups, risk.by_group)
        }
    return {
        "ex_ante": {
            "tracking_error": risk.tracking_error,
            "periods_per_year": risk.periods_per_year,
            "rows": risk.n_periods,
            "shrinkage": risk.shrinkage,
            "sample_tracking_error": risk.sample_tracking_error,
            "benchmark": risk.benchmark,
            "by_name": {names[i]: float(risk.by_name[i]) for i in np.flatnonzero(weights)},
            "by_group": by_group,
        }
    }


def ex_ante_png(outcome: FitOutcome) -> bytes:
    """Horizontal bars of the rows of :func:`name_rows`, largest absolute first, at the top.

    Raises
    ------
    ValueError
        If the outcome carries no ex-ante risk.
    """
    risk = _risk(outcome)
    rows = sorted(name_rows(outcome), key=lambda r: -abs(r.contribution))

    def draw(fig: Any) -> None:
        ax = fig.add_subplot()
        ax.grid(axis="y", visible=False)
        values = np.array([r.contribution for r in rows]) * 100.0
        labelled_bars(ax, values, [_label(r.label) for r in rows])
        ax.set_xlabel("Contribution to expected tracking error (% a year)")
        ax.set_title(
            f"Expected tracking error {risk.tracking_error * 100.0:.2f}% a year, "
            f"{_plain(outcome.held)}, as of {outcome.as_of.isoformat()}"
        )

    height = min(max(2.5, 1.3 + 0.3 * len(rows)), 16.0)
    return _render(draw, height=height)


def _table(first: str, rows: list[Row], total: float) -> list[str]:
    body = [
        [
            r.label,
            percent(r.active_weight),
            percent(r.contribution),
            percent(r.contribution / total, 1) if total > 0 else "n/a",
        ]
        for r in rows
    ]
    body.append(["Total", "", percent(total), "100.0%" if total > 0 else "n/a"])
    return table(
        [first, "Active weight", "Contribution", "Share of total"],
        body,
        [False, True, True, True],
    )


def _risk(outcome: FitOutcome) -> ExAnteRisk:
    if outcome.risk is None:
        raise ValueError("The outcome carries no ex-ante tracking error to show.")
    return outcome.risk
