"""summary.json of a backtest: the schedule, the out-of-sample measures and every rebalance."""

from __future__ import annotations

from typing import Any

import trackfit
from trackfit.outcomes.backtest import BacktestOutcome
from trackfit.report.caution import CAUTION
from trackfit.report.summary_json import dump_json, screen_tree


def render_backtest_json(outcome: BacktestOutcome) -> str:
    """The text of a backtest's summary.json.

    Keys in the order built here; floats rounded to 12 significant digits, nan as null, dates
    ``YYYY-MM-DD``; no absolute path. Two-space indented, ending in ``"\\n"``.
    """
    o, r, m = outcome, outcome.result, outcome.result.metrics
    spec = o.spec
    tree: dict[str, Any] = {
        "trackfit_version": trackfit.__version__,
        "caution": CAUTION,
        "job": {"name": o.job.name, "file": o.job.path.name},
        "as_of": o.as_of,
        "model": o.model,
        "schedule": {
            "every": spec.every,
            "periods": spec.periods,
            "start": spec.start,
            "end": spec.end,
            "window": spec.window,
            "lookback": o.lookback,
            "mode": spec.mode,
            "cost_bps": spec.cost_bps,
            "cost_bps_names": {name: bps for name, bps in spec.cost_bps_names},
            "coupled": o.coupled,
            "rebalances": len(r.rebalance),
            "first": o.dates[0],
            "last": o.dates[-1],
        },
        **screen_tree(o.data),
        "out_of_sample": {
            "periods": len(r.portfolio),
            "first": o.period_dates[0],
            "last": o.period_dates[-1],
            "years": r.years,
            "periods_per_year": r.periods_per_year,
            "tracking_error": m.tracking_error,
            "tracking_difference": r.tracking_difference,
            "mean_active": m.mean_active,
            "information_ratio": m.information_ratio,
            "r_squared": m.r_squared,
            "beta": m.beta,
            "max_drawdown_active": m.max_drawdown_active,
            "annual_turnover": r.annual_turnover,
            "cost_drag": r.cost_drag,
            "mean_names_held": r.mean_names_held,
        },
        "rebalances": [
            {
                "date": day,
                "window_first": o.data.dates[fit.window_start],
                "window_rows": int(row) - fit.window_start + 1,
                "names_held": r.names_held[i],
                "added": o.added[i],
                "dropped": o.dropped[i],
                "turnover": r.turnover[i],
                "cost": r.costs[i],
                "alpha": r.alphas[i],
                "l1_ratio": r.l1_ratios[i],
                "kkt_residual": r.kkt[i],
            }
            for i, (day, row, fit) in enumerate(zip(o.dates, r.rebalance, o.fits))
        ],
        "names": [
            {
                "name": h.name,
                "rebalances": h.rebalances,
                "first": h.first,
                "last": h.last,
                "mean_weight": h.mean_weight,
                "last_weight": h.last_weight,
            }
            for h in o.names
        ],
        "notes": list(o.notes),
        "warnings": list(o.warnings),
    }
    return dump_json(tree)
