"""The backtest's data files: the weights set at each rebalance, and the returns of each period."""

from __future__ import annotations

import csv
import io

from trackfit.outcomes.backtest import BacktestOutcome
from trackfit.report.held import CASH_NAME
from trackfit.report.numbers import fixed, iso_date
from trackfit.report.weights_csv import WEIGHT_FORMAT

#: Fixed format of every return in returns.csv.
RETURN_FORMAT = ".10f"


def render_weights_history_csv(outcome: BacktestOutcome) -> str:
    """The text of weights_history.csv: ``date,name,weight``, long format.

    One row per rebalance date and constituent (zeros included), names sorted, then the
    ``(cash)`` row of that date; dates increasing. Weights ``%.10f``, lines end in ``"\\n"``.
    """
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["date", "name", "weight"])
    order = sorted(range(len(outcome.data.names)), key=lambda j: outcome.data.names[j])
    for day, target in zip(outcome.dates, outcome.result.targets):
        when = iso_date(day)
        for j in order:
            writer.writerow([when, outcome.data.names[j], fixed(target[j], WEIGHT_FORMAT)])
        writer.writerow([when, CASH_NAME, fixed(1.0 - target.sum(), WEIGHT_FORMAT)])
    return buffer.getvalue()


def render_returns_csv(outcome: BacktestOutcome) -> str:
    """The text of returns.csv: ``date,portfolio,benchmark,active``, one row per period.

    Total returns (not in excess of the risk-free rate), the portfolio's after costs, for
    every period after the first rebalance; ``%.10f``, lines end in ``"\\n"``.
    """
    r = outcome.result
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["date", "portfolio", "benchmark", "active"])
    for day, p, b, a in zip(outcome.period_dates, r.portfolio, r.benchmark, r.active):
        writer.writerow([iso_date(day)] + [fixed(v, RETURN_FORMAT) for v in (p, b, a)])
    return buffer.getvalue()
