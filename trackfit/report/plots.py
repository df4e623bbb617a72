"""PNG figures: the fit's cross-validation curves and largest weights, and backtest charts.

matplotlib is optional (``pip install 'trackfit[plots]'``) and imported only inside the
functions that draw, so the rest of trackfit never needs it; ask :func:`plots_available`
first. Figures are drawn with the object-oriented API (a ``matplotlib.figure.Figure`` on an
Agg canvas): no backend is switched and no pyplot state is kept.

Same input, same bytes: every figure has a fixed size and dpi, is drawn in matplotlib's
default style whatever the user's matplotlibrc says, and is saved without the software tag
(PNG files from matplotlib carry no timestamp). Bytes can differ between matplotlib versions.

Only the values a chart needs are derived here (cumulative and rolling forms of given
returns); every number a figure is about was computed elsewhere.
"""

from __future__ import annotations

import io
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import numpy as np

from trackfit.report.held import held_model, held_weights

if TYPE_CHECKING:
    from trackfit.evaluate.holdout import ModelOutcome
    from trackfit.outcomes.fit import FitOutcome

#: The eight bytes every PNG file starts with.
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"

#: Width and default height of every figure, in inches, and its resolution.
WIDTH, HEIGHT, DPI = 8.0, 4.5, 100

#: Constituent names longer than this are cut (with "...") so the bars keep their room.
LABEL_CHARS = 40

_STYLE = {
    "font.size": 9,
    "axes.titlesize": 10,
    "axes.grid": True,
    "grid.alpha": 0.35,
    "grid.linewidth": 0.6,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "legend.framealpha": 0.9,
    "legend.edgecolor": "0.85",
}

_PORTFOLIO, _BENCHMARK, _NEGATIVE, _MUTED = "tab:blue", "tab:gray", "tab:red", "0.6"


def plots_available() -> bool:
    """True when matplotlib can be imported."""
    try:
        import matplotlib  # noqa: F401
    except ImportError:
        return False
    return True


# --- fit figures -----------------------------------------------------------------------------


def cv_curve_png(model: ModelOutcome) -> bytes:
    """Mean cross-validation error against the penalty, for one penalized model.

    One line per l1_ratio searched, each with a band of one standard error either side;
    vertical lines mark the chosen alpha and the alpha with the smallest error. Grid points
    whose error is not finite, or whose alpha is not positive, are left out.

    Parameters
    ----------
    model : ModelOutcome
        A model with a cross-validation result (``model.cv`` is not None).

    Returns
    -------
    bytes
        A PNG file.

    Raises
    ------
    ValueError
        If the model was not cross-validated.
    """
    cv = model.cv
    if cv is None:
        raise ValueError(
            f"Model {model.name!r} has no cross-validation result, so it has no curve to draw."
        )

    def draw(fig: Any) -> None:
        ax = fig.add_subplot()
        several = len(cv.curves) > 1
        drawn = False
        for curve in cv.curves:
            alphas = np.asarray(curve.alphas, dtype=float)
            mean = np.asarray(curve.mean_error, dtype=float)
            se = np.asarray(curve.std_error, dtype=float)
            keep = np.isfinite(mean) & np.isfinite(alphas) & (alphas > 0)
            if not keep.any():
                continue
            drawn = True
            order = np.argsort(alphas[keep], kind="stable")
            a, m = alphas[keep][order], mean[keep][order]
            s = np.where(np.isfinite(se[keep][order]), se[keep][order], 0.0)
            label = f"l1_ratio {curve.l1_ratio:.2f}" if several else "mean CV error"
            (line,) = ax.plot(a, m, marker=".", markersize=3, linewidth=1.2, label=label)
            band = "one standard error" if not several else None
            ax.fill_between(
                a, m - s, m + s, color=line.get_color(), alpha=0.15, linewidth=0, label=band
            )
        if not drawn:
            _empty(ax, "No finite cross-validation error to show.")
        else:
            ax.set_xscale("log")
            if cv.alpha > 0:
                ax.axvline(
                    cv.alpha,
                    color="black",
                    linestyle="--",
                    linewidth=1,
                    label=f"chosen alpha {cv.alpha:.3e} (l1_ratio {cv.l1_ratio:.2f})",
                )
            if cv.best_alpha > 0:
                ax.axvline(
                    cv.best_alpha,
                    color=_NEGATIVE,
                    linestyle=":",
                    linewidth=1.2,
                    label=f"smallest error at {cv.best_alpha:.3e} "
                    f"(l1_ratio {cv.best_l1_ratio:.2f})",
                )
            ax.legend(loc="best", fontsize=8)
        ax.set_xlabel("Penalty alpha (standardized units, log scale)")
        ax.set_ylabel("Mean CV error\n(mean squared active return per period)")
        ax.set_title(f"Cross-validation error, {_plain(model.name)} (rule: {_plain(cv.rule)})")

    return _render(draw)


def top_weights_png(outcome: FitOutcome) -> bytes:
    """Horizontal bars of the held model's largest weights by size.

    The names are those of the "Held weights" table of report.md: the
    ``job.output.top_weights`` largest ``|weight|``, zeros left out, ties in job order,
    largest at the top. The figure grows a little taller with the number of bars.

    Parameters
    ----------
    outcome : FitOutcome

    Returns
    -------
    bytes
        A PNG file.

    Raises
    ------
    DataError, SolverError, ValueError
        As :func:`trackfit.report.held.held_weights`, when the weights cannot be shown.
    """
    model = held_model(outcome)
    weights, _ = held_weights(outcome)
    names = outcome.data.names
    top_n = max(int(outcome.job.output.top_weights), 0)
    order = np.argsort(-np.abs(weights), kind="stable")
    shown = [int(i) for i in order if weights[i] != 0.0][:top_n]
    held_count = int(np.count_nonzero(weights))

    def draw(fig: Any) -> None:
        ax = fig.add_subplot()
        ax.grid(axis="y", visible=False)
        if not shown:
            _empty(ax, "No names held." if held_count == 0 else "No weights asked for.")
        else:
            labelled_bars(ax, weights[shown] * 100.0, [_label(names[i]) for i in shown])
        ax.set_xlabel("Weight (% of portfolio value)")
        ax.set_title(
            f"Largest weights held, {_plain(model.name)}, as of {outcome.as_of.isoformat()} "
            f"({len(shown)} shown of {held_count} names held)"
        )

    height = min(max(2.5, 1.3 + 0.3 * len(shown)), 16.0)
    return _render(draw, height=height)


def labelled_bars(ax: Any, values: np.ndarray, labels: list[str]) -> None:
    """Horizontal bars in percent, the first at the top, each labelled with its value;
    negative ones in their own colour, with a line at zero."""
    rows = np.arange(len(values))[::-1]  # the first at the top
    colors = [_PORTFOLIO if v >= 0 else _NEGATIVE for v in values]
    ax.barh(rows, values, color=colors, height=0.7)
    ax.set_yticks(rows, labels)
    ax.axvline(0.0, color="black", linewidth=0.8)
    for row, value in zip(rows, values):
        ax.annotate(
            f"{value:.2f}%",
            (value, row),
            xytext=(3 if value >= 0 else -3, 0),
            textcoords="offset points",
            va="center",
            fontsize=8,
            ha="left" if value >= 0 else "right",
        )
    ax.margins(x=0.15)


# --- backtest figures ------------------------------------------------------------------------


def cumulative_png(dates: Any, portfolio: Any, benchmark: Any) -> bytes:
    """Cumulative total return of the portfolio and of the benchmark, out of sample.

    The value at each date is ``prod(1 + r) - 1`` over the periods up to and including it.

    Parameters
    ----------
    dates : array-like of dates, shape (m,)
        Date of each out-of-sample period (``numpy.datetime64``, ``datetime.date`` or ISO text).
    portfolio, benchmark : array-like of shape (m,)
        Per-period total returns, decimal (the portfolio's after costs, as it was held).

    Returns
    -------
    bytes
        A PNG file.

    Raises
    ------
    ValueError
        If the arrays are not one-dimensional, differ in length, are empty or not finite.
    """
    days = _dates("cumulative_png", dates)
    p = _series("cumulative_png", "portfolio", portfolio, len(days))
    b = _series("cumulative_png", "benchmark", benchmark, len(days))

    def draw(fig: Any) -> None:
        ax = fig.add_subplot()
        ax.plot(
            days,
            (np.cumprod(1.0 + p) - 1.0) * 100.0,
            color=_PORTFOLIO,
            linewidth=1.4,
            label="Portfolio",
        )
        ax.plot(
            days,
            (np.cumprod(1.0 + b) - 1.0) * 100.0,
            color=_BENCHMARK,
            linewidth=1.2,
            linestyle="--",
            label="Benchmark",
        )
        ax.axhline(0.0, color="black", linewidth=0.6)
        _date_axis(ax)
        ax.set_ylabel("Cumulative total return (%)")
        ax.set_title(f"Cumulative return out of sample, {_span(days)}")
        ax.legend(loc="best")

    return _render(draw)


def rolling_te_png(dates: Any, active: Any, periods_per_year: int, window: int) -> bytes:
    """Annualized tracking error over a rolling window of periods, out of sample.

    The value at a date is ``std(a, ddof=1) * sqrt(periods_per_year)`` over the ``window``
    active returns ending at that date (the definition of
    :func:`trackfit.evaluate.metrics.tracking_metrics`); a horizontal line shows the same
    over the whole period.

    Parameters
    ----------
    dates : array-like of dates, shape (m,)
    active : array-like of shape (m,)
        Per-period active returns (portfolio minus benchmark), decimal.
    periods_per_year : int
        Periods in a year, for annualizing.
    window : int
        Periods in each window, at least 2.

    Returns
    -------
    bytes
        A PNG file.

    Raises
    ------
    ValueError
        Bad arrays (as :func:`cumulative_png`), ``periods_per_year`` not a positive integer or
        ``window`` not an integer of at least 2.
    """
    days = _dates("rolling_te_png", dates)
    a = _series("rolling_te_png", "active", active, len(days))
    k = _integer("rolling_te_png", "periods_per_year", periods_per_year, 1)
    w = _integer("rolling_te_png", "window", window, 2)

    def draw(fig: Any) -> None:
        ax = fig.add_subplot()
        if len(a) < w:
            _empty(ax, f"Fewer than {w} periods out of sample ({len(a)}); nothing to show.")
        else:
            views = np.lib.stride_tricks.sliding_window_view(a, w)
            rolling = np.std(views, axis=1, ddof=1) * np.sqrt(k) * 100.0
            ax.plot(
                days[w - 1 :], rolling, color=_PORTFOLIO, linewidth=1.4, label=f"{w}-period window"
            )
            whole = float(np.std(a, ddof=1)) * np.sqrt(k) * 100.0
            ax.axhline(
                whole,
                color=_BENCHMARK,
                linestyle="--",
                linewidth=1,
                label=f"whole period, {whole:.2f}%",
            )
            ax.set_ylim(bottom=0.0)
            ax.set_xlim(days[0], days[-1])  # the same span as the other backtest charts
            ax.legend(loc="best")
            _date_axis(ax)
        ax.set_ylabel("Tracking error, annualized (%)")
        ax.set_title(f"Rolling tracking error, {w}-period window, {k} periods a year")

    return _render(draw)


def names_turnover_png(dates: Any, names_held: Any, turnover: Any) -> bytes:
    """Names held (top) and one-way turnover (bottom) at each rebalance.

    The first rebalance buys from cash, so its turnover is drawn apart (grey).

    Parameters
    ----------
    dates : array-like of dates, shape (n_rebalances,)
        Date of each rebalance.
    names_held : array-like of int, shape (n_rebalances,)
        Count of nonzero target weights.
    turnover : array-like of shape (n_rebalances,)
        One-way turnover of each rebalance, decimal.

    Returns
    -------
    bytes
        A PNG file.

    Raises
    ------
    ValueError
        Bad arrays (as :func:`cumulative_png`).
    """
    days = _dates("names_turnover_png", dates)
    held = _series("names_turnover_png", "names_held", names_held, len(days))
    t = _series("names_turnover_png", "turnover", turnover, len(days)) * 100.0

    from matplotlib.ticker import MaxNLocator

    def draw(fig: Any) -> None:
        top, bottom = fig.subplots(2, 1, sharex=True)
        top.step(days, held, where="post", color=_PORTFOLIO, linewidth=1.2)
        top.plot(days, held, "o", color=_PORTFOLIO, markersize=3)
        top.set_ylim(bottom=0.0)
        top.yaxis.set_major_locator(MaxNLocator(integer=True))
        top.set_ylabel("Names held")
        top.set_title(f"Names held and turnover at each rebalance, {_span(days)}")
        bottom.vlines(days[1:], 0.0, t[1:], color=_PORTFOLIO, linewidth=1.2)
        bottom.plot(days[1:], t[1:], "o", color=_PORTFOLIO, markersize=3, label="rebalance")
        bottom.vlines(days[:1], 0.0, t[:1], color=_MUTED, linewidth=1.2)
        bottom.plot(
            days[:1],
            t[:1],
            "o",
            color=_MUTED,
            markersize=3,
            label="first rebalance (bought from cash)",
        )
        bottom.set_ylim(bottom=0.0)
        bottom.set_ylabel("One-way turnover (%)")
        bottom.legend(loc="best", fontsize=8)
        _date_axis(bottom)

    return _render(draw, height=5.5)


# --- drawing helpers -------------------------------------------------------------------------


def _render(draw: Callable[[Any], None], *, height: float = HEIGHT) -> bytes:
    """Draw on a fresh figure in the default style and return its PNG bytes."""
    import matplotlib.style
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    with matplotlib.style.context(["default", _STYLE]):
        fig = Figure(figsize=(WIDTH, height), dpi=DPI, layout="constrained")
        FigureCanvasAgg(fig)
        draw(fig)
        buffer = io.BytesIO()
        fig.savefig(buffer, format="png", dpi=DPI, metadata={"Software": None})
    return buffer.getvalue()


def _empty(ax: Any, message: str) -> None:
    ax.set_xticks([])
    ax.set_yticks([])
    ax.grid(False)
    ax.text(0.5, 0.5, message, transform=ax.transAxes, ha="center", va="center")


def _date_axis(ax: Any) -> None:
    import matplotlib.dates as mdates

    locator = mdates.AutoDateLocator()
    ax.xaxis.set_major_locator(locator)
    ax.xaxis.set_major_formatter(mdates.ConciseDateFormatter(locator))


def _plain(text: object) -> str:
    """Text shown as written: one line, and ``$`` not read as the start of mathematics."""
    return " ".join(str(text).split()).replace("$", r"\$")


def _label(name: str) -> str:
    name = " ".join(str(name).split())
    if len(name) > LABEL_CHARS:
        name = name[: LABEL_CHARS - 3].rstrip() + "..."
    return _plain(name)


def _span(days: np.ndarray) -> str:
    return f"{days[0]} to {days[-1]}"


def _dates(func: str, dates: Any) -> np.ndarray:
    try:
        days = np.asarray(dates).astype("datetime64[D]")
    except (TypeError, ValueError) as exc:
        raise ValueError(
            f"The 'dates' parameter of {func} must hold dates (numpy datetime64, "
            f"datetime.date or ISO text). Got {exc}."
        ) from None
    if days.ndim != 1 or days.size == 0:
        raise ValueError(
            f"The 'dates' parameter of {func} must be a non-empty 1-d array. "
            f"Got shape {days.shape}."
        )
    if np.isnat(days).any():
        raise ValueError(f"The 'dates' parameter of {func} must not hold missing dates (NaT).")
    return days


def _series(func: str, name: str, values: Any, n: int) -> np.ndarray:
    arr = np.asarray(values, dtype=float)
    if arr.shape != (n,):
        raise ValueError(
            f"The '{name}' parameter of {func} must be a 1-d array with one value per date "
            f"({n}). Got shape {arr.shape}."
        )
    if not np.all(np.isfinite(arr)):
        raise ValueError(
            f"The '{name}' parameter of {func} must hold finite numbers. "
            f"Got a non-finite value at position {int(np.flatnonzero(~np.isfinite(arr))[0])}."
        )
    return arr


def _integer(func: str, name: str, value: Any, least: int) -> int:
    if (
        isinstance(value, (bool, np.bool_))
        or not isinstance(value, (int, np.integer))
        or value < least
    ):
        raise ValueError(
            f"The '{name}' parameter of {func} must be an integer >= {least}. Got {value!r}."
        )
    return int(value)
