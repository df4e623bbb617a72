"""weights.csv: the held weights, one row per constituent, the file users diff each rebalance."""

from __future__ import annotations

import csv
import io

from trackfit.outcomes.fit import FitOutcome
from trackfit.report.held import CASH_NAME, held_weights
from trackfit.report.numbers import fixed

#: Fixed format of every weight in weights.csv.
WEIGHT_FORMAT = ".10f"


def render_weights_csv(outcome: FitOutcome) -> str:
    """The text of weights.csv for the held model.

    Header ``name,weight``; one row per constituent in job order, zeros included; then a
    last row ``(cash),<cash>``. Weights are written ``%.10f``, with negative zero written
    as zero, and lines end in ``"\\n"``. Names are quoted only where CSV needs it.

    Parameters
    ----------
    outcome : FitOutcome

    Returns
    -------
    str
    """
    weights, cash = held_weights(outcome)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["name", "weight"])
    for name, weight in zip(outcome.data.names, weights):
        writer.writerow([name, fixed(weight, WEIGHT_FORMAT)])
    writer.writerow([CASH_NAME, fixed(cash, WEIGHT_FORMAT)])
    return buffer.getvalue()
