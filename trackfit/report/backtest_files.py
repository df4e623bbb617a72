"""Write a backtest's files: weights_history.csv, returns.csv, report.md, summary.json."""

from __future__ import annotations

from pathlib import Path

from trackfit.outcomes.backtest import BacktestOutcome
from trackfit.report import plots
from trackfit.report.backtest_csv import render_returns_csv, render_weights_history_csv
from trackfit.report.backtest_json import render_backtest_json
from trackfit.report.backtest_markdown import render_backtest_markdown
from trackfit.report.files import atomic_write_bytes, atomic_write_text

#: The files a backtest writes, in the order they are listed on stdout.
BACKTEST_FILES = ("weights_history.csv", "returns.csv", "report.md", "summary.json")


#: Rolling window of the tracking-error figure, in periods (about a quarter of daily data).
ROLLING_WINDOW = 63


def backtest_figures(outcome: BacktestOutcome) -> list[tuple[str, str, bytes]]:
    """``(caption, file name, PNG bytes)`` of the backtest's figures, drawn now."""
    r = outcome.result
    window = max(2, min(ROLLING_WINDOW, len(r.active) // 4))
    return [
        (
            "Cumulative total return, portfolio and benchmark",
            "cumulative.png",
            plots.cumulative_png(outcome.period_dates, r.portfolio, r.benchmark),
        ),
        (
            f"Rolling tracking error ({window} periods)",
            "rolling_tracking_error.png",
            plots.rolling_te_png(outcome.period_dates, r.active, r.periods_per_year, window),
        ),
        (
            "Names held and turnover at each rebalance",
            "names_turnover.png",
            plots.names_turnover_png(outcome.dates, r.names_held, r.turnover),
        ),
    ]


def write_backtest_reports(
    outcome: BacktestOutcome, out_dir: Path, *, figures: bool = False
) -> list[Path]:
    """Render every file first, then write each atomically into ``out_dir`` (made if missing).

    Parameters
    ----------
    figures : bool
        Also draw the PNG figures and embed them at the end of report.md (when matplotlib is
        installed; otherwise report.md says they were skipped).

    Returns
    -------
    list of Path
        The files written, in the order of :data:`BACKTEST_FILES`, then the figures.
    """
    out_dir = Path(out_dir)
    skipped = figures and not plots.plots_available()
    drawn = backtest_figures(outcome) if figures and not skipped else []
    listed = [(caption, name) for caption, name, _ in drawn]
    renderers = (
        render_weights_history_csv,
        render_returns_csv,
        lambda o: render_backtest_markdown(o, figures=listed, figures_skipped=skipped),
        render_backtest_json,
    )
    texts = [(out_dir / name, render(outcome)) for name, render in zip(BACKTEST_FILES, renderers)]
    for path, text in texts:
        atomic_write_text(path, text)
    for _, name, data in drawn:
        atomic_write_bytes(out_dir / name, data)
    return [path for path, _ in texts] + [out_dir / name for _, name, _ in drawn]
