"""From a job to aligned, cleaned returns over the fit window: the data layer's one entry point."""

from __future__ import annotations

from datetime import date

import numpy as np

from trackfit.data.calendar import MIN_DATES, irregular_warning, measure_periods_per_year
from trackfit.data.checks import check_finite, check_positive_prices, missing_by_column
from trackfit.data.dataset import DataStep, TrackingData
from trackfit.data.gaps import carry_forward, has_return, short_history
from trackfit.data.returns import per_period_rate, percent_to_decimal, simple_returns
from trackfit.data.screen import Screen, enforce, screen_returns
from trackfit.data.series import AlignedSeries, align_series
from trackfit.data.window import select_window
from trackfit.errors import DataError
from trackfit.job import Job


def load_tracking_data(
    job: Job, as_of: date | None = None, *, aligned: AlignedSeries | None = None
) -> TrackingData:
    """Read, align and clean the job's series over its fit window.

    In order: read each file once and pick the job's columns; keep the dates common to all
    files; turn prices into returns (after aligning, so every return spans the same dates);
    cut the window ending at ``as_of``; check the values it uses (finite, prices above zero);
    carry missing prices forward per ``data.carry_forward``; leave out constituents with a
    return on too few of the window's dates per ``data.min_coverage``; handle the missing
    values left per ``data.missing``; convert the risk-free rate to a per-period return and
    subtract it; drop constituents whose return never varies.

    With ``data.carry_forward`` N, the N file rows before the window are read and checked too,
    since their prices may be carried into it; only earlier rows fill a cell, so a window
    ending at d fills exactly as a longer history does.

    Parameters
    ----------
    job : Job
    as_of : date or None
        Last date the window may use; None means the last date common to all files.
    aligned : AlignedSeries, optional
        The job's series already read and aligned by :func:`align_series` (so a caller that
        needs them too reads the files once); default: read them here.

    Returns
    -------
    TrackingData
        ``steps`` lists every step that can drop dates, with counts, zero counts included.

    Raises
    ------
    DataError
        With the file, column and date concerned and what to change.
    """
    spec = job.data
    aligned = align_series(job) if aligned is None else aligned
    steps = list(aligned.steps)
    n_assets = len(aligned.names)
    n_priced = 1 + n_assets  # benchmark and constituents; the risk-free column is a rate
    dates = aligned.dates

    prices = spec.values == "prices"
    if prices:
        first = "first price date (a return needs the price before it)"
        steps.append(DataStep(first, len(dates), len(dates) - 1))
        return_dates = dates[1:]
    else:
        return_dates = dates
    window = select_window(return_dates, job.window, as_of)
    steps.extend(window.steps)

    # The file rows the window uses: with prices, also the row before its first return date,
    # and the rows whose prices data.carry_forward may carry into the window.
    lead = 1 if prices else 0
    carry = spec.carry_forward if prices else 0
    lo = max(0, window.start - carry)
    raw = aligned.values[lo : window.stop + lead]
    raw_dates = dates[lo : window.stop + lead]
    check_finite(raw, raw_dates, aligned.labels)
    if prices:
        check_positive_prices(raw[:, :n_priced], raw_dates, aligned.labels[:n_priced])
    warnings: list[str] = []
    if carry:
        raw = _carried(
            raw, raw_dates, window.start - lo, carry, aligned.labels[:n_priced], warnings
        )
    raw, raw_dates = raw[window.start - lo :], raw_dates[window.start - lo :]
    window_dates = return_dates[window.start : window.stop]

    labels, names = aligned.labels, aligned.names
    sources = aligned.sources or labels
    if spec.min_coverage is not None:
        present = has_return(raw[:, :n_priced], prices=prices)
        out = short_history(present, window_dates, labels[:n_priced], spec.min_coverage, warnings)
        if out.size:
            columns = np.delete(np.arange(raw.shape[1]), out)
            raw = raw[:, columns]
            labels = tuple(labels[c] for c in columns)
            sources = tuple(sources[c] for c in columns)
            names = tuple(names[c - 1] for c in columns[1 : n_priced - out.size])
            n_priced -= out.size
    missing = np.isnan(raw)
    if missing.any() and spec.missing == "error":
        raise DataError(
            f"missing values on dates the fit window uses ({raw_dates[0]} to {raw_dates[-1]}): "
            + "; ".join(missing_by_column(missing, raw_dates, labels))
            + "; fill the gaps in the files, or set data.missing: drop_dates to leave those "
            "dates out"
        )

    returns, rate = _returns(
        raw,
        prices=prices,
        percent=spec.returns_unit == "percent",
        n_priced=n_priced,
        has_rate=aligned.has_risk_free,
    )
    inferred = spec.periods_per_year is None
    calendar = None
    if inferred or len(window_dates) >= MIN_DATES:  # too few for a set value: the error below
        calendar = measure_periods_per_year(window_dates)
    if inferred:
        periods = calendar.value
        warnings.extend(w for w in (irregular_warning(calendar),) if w is not None)
    else:
        periods = spec.periods_per_year

    gaps = np.isnan(returns).any(axis=1)
    if rate is not None:
        gaps |= np.isnan(rate)
    keep = ~gaps
    steps.append(
        DataStep("dates with a missing value in the fit window", len(keep), int(keep.sum()))
    )
    where = "; ".join(missing_by_column(missing, raw_dates, labels))
    if gaps.any():
        why = "; a missing price leaves the returns into and out of its date without a value"
        warnings.append(
            f"data.missing is drop_dates: {int(gaps.sum())} of {len(keep)} return dates in the "
            f"fit window were left out because of missing values ({where})"
            + (why if prices else "")
        )
    returns, window_dates = returns[keep], window_dates[keep]
    if len(window_dates) < MIN_DATES:
        cause = f" after leaving out dates with missing values ({where})" if gaps.any() else ""
        raise DataError(
            f"only {len(window_dates)} return date(s) are left in the fit window{cause}; "
            f"fitting needs at least {MIN_DATES}; widen the window or fill the missing values"
        )

    rate = None if rate is None else rate[keep]
    screen_rows = len(window_dates)
    findings = screen_returns(
        returns,
        window_dates,
        sources[:n_priced],
        job.screen,
        values=spec.values,
        returns_unit=spec.returns_unit,
        periods_per_year=periods,
    )
    left_out = enforce(findings)
    warnings.extend(f.message for f in findings)
    if left_out:
        stay = ~np.isin(window_dates, np.array(left_out, dtype="datetime64[D]"))
        returns, window_dates = returns[stay], window_dates[stay]
        rate = None if rate is None else rate[stay]
        if len(window_dates) < MIN_DATES:
            raise DataError(
                f"only {len(window_dates)} return date(s) are left in the fit window after the "
                f"data screen left out {len(left_out)}; fitting needs at least {MIN_DATES}; "
                "fix the flagged values in the files or set those screen actions to warn"
            )

    risk_free = None
    if rate is not None:
        rf = job.risk_free
        risk_free = per_period_rate(rate, unit=rf.unit, quote=rf.quote, periods_per_year=periods)
    excess = returns if risk_free is None else returns - risk_free[:, None]
    kept = _varying_columns(returns, excess, window_dates, labels, warnings)

    return TrackingData(
        dates=np.ascontiguousarray(window_dates, dtype="datetime64[D]"),
        benchmark=np.ascontiguousarray(excess[:, 0], dtype=np.float64),
        constituents=np.ascontiguousarray(excess[:, 1 + kept], dtype=np.float64),
        names=tuple(names[j] for j in kept),
        benchmark_name=aligned.benchmark_name,
        risk_free=None if risk_free is None else np.ascontiguousarray(risk_free, np.float64),
        periods_per_year=periods,
        periods_per_year_inferred=inferred,
        steps=tuple(steps),
        warnings=tuple(warnings),
        calendar=calendar,
        screen=Screen(
            findings=findings,
            left_out=left_out,
            rows_before=screen_rows,
            rows_after=len(window_dates),
            names_kept=len(kept),
        ),
    )


def _returns(
    raw: np.ndarray, *, prices: bool, percent: bool, n_priced: int, has_rate: bool
) -> tuple[np.ndarray, np.ndarray | None]:
    """Decimal returns of shape (n_dates, n_priced) and the rate column as written, or None.

    With prices, ``raw`` has one more row than there are return dates (the price before the
    first one); the rate is a level, so it is read on each return date, not differenced.
    """
    if prices:
        returns = simple_returns(raw[:, :n_priced])
        rate = raw[1:, n_priced] if has_rate else None
    else:
        returns = percent_to_decimal(raw[:, :n_priced]) if percent else raw[:, :n_priced]
        rate = raw[:, n_priced] if has_rate else None
    return returns, rate


def _carried(
    raw: np.ndarray,
    dates: np.ndarray,
    skip: int,
    limit: int,
    labels: tuple[str, ...],
    warnings: list[str],
) -> np.ndarray:
    """``raw`` with its prices (the first ``len(labels)`` columns) carried forward; a warning.

    The first ``skip`` rows precede the window and only lend their prices; the warning counts
    the cells filled after them. The risk-free column is a rate, not a price, and stays as is.
    """
    n = len(labels)
    filled, carried = carry_forward(raw[:, :n], limit)
    carried = carried[skip:]
    if carried.any():
        where = "; ".join(missing_by_column(carried, dates[skip:], labels))
        warnings.append(
            f"data.carry_forward is {limit}: {int(carried.sum())} missing price(s) were filled "
            "with the last price before them, so the return over each gap is 0 and the move "
            f"lands on the next price ({where})"
        )
    return np.concatenate([filled, raw[:, n:]], axis=1)


def _varying_columns(
    returns: np.ndarray,
    excess: np.ndarray,
    dates: np.ndarray,
    labels: tuple[str, ...],
    warnings: list[str],
) -> np.ndarray:
    """Indices of the constituents whose return varies; warn about the others.

    ``returns`` and ``excess`` have shape (n_dates, 1 + n_assets), the benchmark first; a flat
    column is flat in raw returns (a suspended stock) or in excess of the risk-free rate.
    """
    raw_flat = np.ptp(returns, axis=0) == 0
    excess_flat = np.ptp(excess, axis=0) == 0

    def what(j: int) -> str:
        return "return" if raw_flat[j] else "return in excess of the risk-free rate"

    span = f"{dates[0]} to {dates[-1]}"
    flat = raw_flat | excess_flat
    if flat[0]:
        raise DataError(
            f"benchmark {labels[0]} has the same {what(0)} on every date of the fit window "
            f"({span}); there is nothing to track; check the column, the file and the window"
        )
    for j in np.flatnonzero(flat[1:]) + 1:
        warnings.append(
            f"constituent {labels[j]} was left out: its {what(j)} is the same on every date of "
            f"the fit window ({span}), as for a suspended stock, so it cannot help tracking"
        )
    kept = np.flatnonzero(~flat[1:])
    if kept.size == 0:
        raise DataError(
            f"every constituent has the same return on every date of the fit window ({span}); "
            "check the constituent files and the window"
        )
    return kept
