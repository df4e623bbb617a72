"""report.md of a backtest: the schedule, the out-of-sample tracking, and every rebalance."""

from __future__ import annotations

from collections.abc import Sequence

from trackfit.outcomes.backtest import BacktestOutcome
from trackfit.report.caution import CAUTION
from trackfit.report.data_quality import quality_section
from trackfit.report.markdown import figures_section
from trackfit.report.numbers import fixed, iso_date, percent
from trackfit.report.tables import inline, table

#: Section headings, in the order they appear.
HEADINGS = (
    "## Schedule",
    "## Out-of-sample tracking",
    "## Rebalances",
    "## Names held over time",
    "## Notes",
    "## Warnings",
)

_EVERY = {
    "month_end": "at the last data date of every month",
    "week_end": "at the last data date of every week",
}
_MODES = {
    "buy_and_hold": "buy and hold: the weights drift with prices between rebalances",
    "constant_mix": "constant mix: the weights are reset to the target every period, free of "
    "cost; costs are charged only at the rebalances",
}


def render_backtest_markdown(
    outcome: BacktestOutcome,
    *,
    figures: Sequence[tuple[str, str]] | None = None,
    figures_skipped: bool = False,
) -> str:
    """The text of a backtest's report.md: ``"\\n"`` line endings, ending in one ``"\\n"``.

    ``figures`` (caption, relative file) are listed in a last "Figures" section, as in the fit
    report; ``figures_skipped`` says matplotlib was missing.
    """
    first, last = iso_date(outcome.dates[0]), iso_date(outcome.dates[-1])
    lines = [f"# {inline(outcome.job.name)}: backtest, {first} to {last}", ""]
    lines += [f"> {inline(CAUTION)}", ""]
    for section in (_schedule, _quality, _tracking, _rebalances, _names, _notes, _warnings):
        part = section(outcome)
        if part:  # the data-quality section is absent when no screen ran
            lines += part
            lines.append("")
    lines += figures_section(tuple(figures or ()), figures_skipped)
    return "\n".join(lines).rstrip("\n") + "\n"


def _schedule(o: BacktestOutcome) -> list[str]:
    spec, r = o.spec, o.result
    every = _EVERY.get(spec.every, f"every {spec.periods} rows")
    if o.lookback is None:
        window = "expanding: every row from the first date up to the rebalance date"
    else:
        window = f"rolling: the last {o.lookback} rows up to and including the rebalance date"
    if spec.cost_bps_names:
        costs = f"{fixed(spec.cost_bps, 'g')} bps per unit traded, except " + ", ".join(
            f"{n} {fixed(b, 'g')} bps" for n, b in spec.cost_bps_names
        )
    else:
        costs = f"{fixed(spec.cost_bps, 'g')} bps per unit of value traded, on each side"
    coupling = (
        "each rebalance trades from the previous one's drifted holdings, under the job's "
        "turnover limits (the first from the holdings file)"
        if o.coupled
        else "each rebalance is fitted on its own; the first buys from cash"
    )
    return [
        HEADINGS[0],
        "",
        f"- Model held: {o.model}, fitted at every rebalance date on data up to that date only, "
        "with its penalty chosen by time-ordered cross-validation on the same rows; no holdout.",
        f"- Rebalances: {len(r.rebalance)}, {every}, from {iso_date(o.dates[0])} to "
        f"{iso_date(o.dates[-1])}.",
        f"- Fit window: {window}.",
        f"- Holding: {_MODES[spec.mode]}; cash earns the risk-free rate"
        + (" (none given: 0)." if o.data.risk_free is None else "."),
        f"- Costs: {costs}.",
        f"- Turnover: {coupling}.",
        f"- Out of sample: {len(r.portfolio)} periods, "
        f"{iso_date(o.period_dates[0])} to {iso_date(o.period_dates[-1])} "
        f"({fixed(r.years, '.2f')} years, {r.periods_per_year} periods a year); total returns.",
    ]


def _quality(o: BacktestOutcome) -> list[str]:
    return quality_section(o.data.screen, level=2)


def _tracking(o: BacktestOutcome) -> list[str]:
    r, m = o.result, o.result.metrics
    rows = [
        ("Tracking error (annualized)", percent(m.tracking_error)),
        ("Tracking difference (annualized, geometric)", percent(r.tracking_difference)),
        ("Mean active return (annualized)", percent(m.mean_active)),
        ("Information ratio", fixed(m.information_ratio, ".3f")),
        ("R-squared", fixed(m.r_squared, ".4f")),
        ("Beta", fixed(m.beta, ".4f")),
        ("Largest drawdown of cumulative active return", percent(m.max_drawdown_active)),
        ("One-way turnover per year (after the first build)", percent(r.annual_turnover)),
        ("Cost drag per year", percent(r.cost_drag, 3)),
        ("Mean names held", fixed(r.mean_names_held, ".1f")),
    ]
    return [HEADINGS[1], ""] + table(("Measure", "Value"), rows, (False, True))


def _rebalances(o: BacktestOutcome) -> list[str]:
    r = o.result
    rows = []
    for i, (day, row, fit) in enumerate(zip(o.dates, r.rebalance, o.fits)):
        rows.append(
            (
                iso_date(day),
                int(row) - fit.window_start + 1,
                int(r.names_held[i]),
                int(o.added[i]),
                int(o.dropped[i]),
                percent(r.turnover[i]),
                percent(r.costs[i], 4),
                fixed(r.alphas[i], ".4g"),
                fixed(r.l1_ratios[i], ".2f"),
                fixed(r.kkt[i], ".1e"),
            )
        )
    headers = (
        "Date",
        "Rows",
        "Names",
        "Added",
        "Dropped",
        "Turnover",
        "Cost",
        "alpha",
        "l1_ratio",
        "KKT",
    )
    return [
        HEADINGS[2],
        "",
        "Turnover is one-way, from the holdings just before the rebalance (the first from "
        "cash); alpha is in standardized units.",
        "",
    ] + table(headers, rows, (False,) + (True,) * 9)


def _names(o: BacktestOutcome) -> list[str]:
    if not o.names:
        return [HEADINGS[3], "", "No name was held at any rebalance."]
    rows = [
        (
            h.name,
            h.rebalances,
            iso_date(h.first),
            iso_date(h.last),
            percent(h.mean_weight),
            percent(h.last_weight),
        )
        for h in o.names
    ]
    headers = ("Name", "Rebalances held", "First held", "Last held", "Mean weight", "Last weight")
    return [HEADINGS[3], ""] + table(headers, rows, (False, True, False, False, True, True))


def _notes(o: BacktestOutcome) -> list[str]:
    return [HEADINGS[4], ""] + ([f"- {inline(n)}" for n in o.notes] or ["None."])


def _warnings(o: BacktestOutcome) -> list[str]:
    return [HEADINGS[5], ""] + ([f"- {inline(w)}" for w in o.warnings] or ["None."])


__all__ = ["HEADINGS", "render_backtest_markdown"]
