"""From the limits a job names to the limits the core enforces: names become positions.

:func:`build_limits` reads the groups and holdings files the job names, checks that every name
and group label the job writes exists, and builds :class:`~trackfit.core.limits.Limits` over
the constituents of one fit. Problems in the job are JobErrors naming the job file; problems in
a data file are DataErrors naming that file. Everything else worth telling is a warning (what
a person must look at) or a note (a routine fact the report carries; it changes no exit code).
"""

from __future__ import annotations

import difflib
from collections.abc import Mapping, Sequence
from dataclasses import replace
from datetime import date
from pathlib import Path

import numpy as np

from trackfit.core.limits import (
    GroupLimit,
    Limits,
    LinearLimit,
    beta_limit,
    budget_limit,
    group_limit,
)
from trackfit.data.groups import read_groups
from trackfit.data.holdings import CurrentHoldings, HoldingsDrift, read_holdings
from trackfit.data.returns import per_period_rate, percent_to_decimal, simple_returns
from trackfit.data.series import AlignedSeries
from trackfit.errors import DataError, JobError
from trackfit.job import Job

__all__ = ["CurrentHoldings", "build_limits"]

_MAX_LISTED = 10
#: Holdings dated more than this many days before the as-of date get a warning.
STALE_DAYS = 93


def build_limits(
    job: Job,
    names: Sequence[str],
    *,
    aligned: AlignedSeries | None = None,
    as_of: date | None = None,
    periods_per_year: int | None = None,
    groups: Mapping[str, str] | None = None,
) -> tuple[Limits, CurrentHoldings | None, tuple[str, ...], tuple[str, ...]]:
    """The job's mandate limits over the constituents of one fit.

    Parameters
    ----------
    job : Job
    names : sequence of str, length n_assets
        The fit's constituents (``TrackingData.names``: zero-variance names already left out);
        positions in the result index this sequence.
    aligned : AlignedSeries, optional
        The job's series as read and aligned; with ``holdings.date`` set, the held weights are
        drifted by their total returns over the dates after it up to ``as_of``. None: the
        weights are used as the file gives them.
    as_of : date, optional
        The last date of the fit window (required with ``aligned``).
    periods_per_year : int, optional
        The fit's periods per year, to turn an annual risk-free rate into a per-period one
        (required with ``aligned`` when the job has a risk-free series).
    groups : mapping of str to str, optional
        The job's groups file as :func:`read_job_groups` read it, so a caller that needs it too
        reads it once; default: read here.

    Returns
    -------
    limits : Limits
        ``lower``/``upper`` of shape (n_assets,) when ``limits.weight`` or ``limits.names`` is
        set (``-inf``/``+inf`` where a name has no bound; lower at least 0 with long-only),
        else None. ``current`` of shape (n_assets,) whenever holdings are given (0 for names
        not held). ``linear``: the budget, the groups in sorted label order, then beta to the
        benchmark (its coefficients computed on the fit rows, see ``Limits.on_rows``).
    holdings : CurrentHoldings or None
        The holdings file as read, when the job names one; drifted (``drift`` set) when
        ``holdings.date`` is set and ``aligned`` is given, and ``limits.current`` holds the
        drifted weights then.
    warnings : tuple of str
        What a person must look at before holding the weights.
    notes : tuple of str
        Routine facts for the report (groups-file rows of names outside this fit).

    Raises
    ------
    JobError
        ``holdings.date`` is after ``as_of`` or before the first data date;
        ``limits.names`` names a name that is not a constituent; ``limits.groups.bounds``
        names a label that no row of the groups file uses, or sets a positive minimum for a
        group with no constituent in this fit.
    DataError
        A groups or holdings file cannot be read (see :func:`~trackfit.data.groups.read_groups`
        and :func:`~trackfit.data.holdings.read_holdings`), or a constituent has no group.
    """
    spec = job.limits
    index = {name: i for i, name in enumerate(names)}
    warnings: list[str] = []
    notes: list[str] = []
    lower, upper = _name_bounds(job, index)
    # Linear limits in the order of the solver's rows: budget, groups, then the others.
    linear = (
        *_budget(job),
        *(group_limit(g) for g in _group_limits(job, names, index, warnings, notes, groups)),
        *_beta(job),
    )
    holdings, current, outside = _current(
        job, index, warnings, aligned=aligned, as_of=as_of, periods_per_year=periods_per_year
    )
    limits = Limits(
        long_only=spec.long_only,
        lower=lower,
        upper=upper,
        linear=linear,
        current=current,
        outside_turnover=outside,
        turnover_penalty=0.0 if job.holdings is None else job.holdings.turnover_penalty,
        max_turnover=None if job.holdings is None else job.holdings.max_turnover,
        max_names=spec.max_names,
        min_position=spec.min_position,
    )
    return limits, holdings, tuple(warnings), tuple(notes)


def _name_bounds(job: Job, index: dict[str, int]) -> tuple[np.ndarray | None, np.ndarray | None]:
    spec = job.limits
    if spec.weight is None and not spec.names:
        return None, None
    n = len(index)
    lower, upper = np.full(n, -np.inf), np.full(n, np.inf)
    if spec.weight is not None:
        if spec.weight.min is not None:
            lower[:] = spec.weight.min
        if spec.weight.max is not None:
            upper[:] = spec.weight.max
    for name, bounds in spec.names:
        if name not in index:
            raise JobError(
                f"{job.path}: 'limits.names' lists {name!r}, which is not a constituent of this "
                f"fit{_close(name, index)}; fix the name or remove it ({_left_out(job)}; see "
                "the warnings)"
            )
        i = index[name]
        if bounds.min is not None:
            lower[i] = bounds.min
        if bounds.max is not None:
            upper[i] = bounds.max
    if spec.long_only:
        # Long-only already keeps every weight at 0 or above; only positive minimums add to it.
        lower = np.where(lower > 0.0, lower, -np.inf)
    return lower, upper


def _budget(job: Job) -> tuple[LinearLimit, ...]:
    budget = job.limits.budget
    return () if budget is None else (budget_limit(*budget),)


def _beta(job: Job) -> tuple[LinearLimit, ...]:
    beta = job.limits.beta
    return () if beta is None else (beta_limit(beta.min, beta.max),)


def read_job_groups(job: Job) -> dict[str, str] | None:
    """The job's groups file as a mapping from name to group, or None when it names none."""
    spec = job.limits.groups
    return None if spec is None else read_groups(spec, label=_label(spec.file, job))


def _group_limits(
    job: Job,
    names: Sequence[str],
    index: dict[str, int],
    warnings: list[str],
    notes: list[str],
    mapping: Mapping[str, str] | None,
) -> tuple[GroupLimit, ...]:
    spec = job.limits.groups
    if spec is None:
        return ()
    label = _label(spec.file, job)
    if mapping is None:
        mapping = read_job_groups(job)
    missing = [name for name in names if name not in mapping]
    if missing:
        raise DataError(
            f"{label}: no group for {len(missing)} constituent(s): {_listed(missing)}; add a "
            f"row for each with its group in column {spec.group_column!r}"
        )
    ignored = sum(1 for name in mapping if name not in index)
    if ignored:  # a sector file usually covers more names than the fund can trade
        notes.append(
            f"{label}: {ignored} name(s) in the groups file are not constituents of this fit; "
            "their rows are ignored"
        )
    members: dict[str, list[int]] = {}
    for name in names:
        members.setdefault(mapping[name], []).append(index[name])
    labels = sorted(set(mapping.values()))
    bounds = dict(spec.bounds)
    for group in bounds:
        if group not in labels:
            raise JobError(
                f"{job.path}: 'limits.groups.bounds' names group {group!r}, which no row of "
                f"{label} has in column {spec.group_column!r}{_close(group, labels)}; fix the "
                "label in the job file or the groups file"
            )
    limits = []
    for group in sorted(set(members) | set(bounds)):
        b = bounds.get(group, spec.each)
        if b is None:
            continue
        if group not in members:
            if b.min is not None and b.min > 0:
                raise JobError(
                    f"{job.path}: 'limits.groups.bounds.{group}.min' is {b.min:g}, but no "
                    f"constituent of this fit is in group {group!r} ({label}), so the minimum "
                    "cannot be met; remove the minimum or add constituents of that group"
                )
            warnings.append(
                f"group {group!r} has no constituent in this fit; its bounds in "
                "'limits.groups.bounds' have nothing to limit"
            )
            continue
        limits.append(GroupLimit(group, tuple(members[group]), b.min, b.max))
    return tuple(limits)


def _current(
    job: Job,
    index: dict[str, int],
    warnings: list[str],
    *,
    aligned: AlignedSeries | None = None,
    as_of: date | None = None,
    periods_per_year: int | None = None,
) -> tuple[CurrentHoldings | None, np.ndarray | None, float]:
    """The holdings read (drifted when dated), weights over the constituents, forced turnover."""
    if job.holdings is None:
        return None, None, 0.0
    label = _label(job.holdings.file, job)
    held = read_holdings(job.holdings.file, label=label)
    if job.holdings.date is not None and aligned is not None:
        held = _drifted(job, held, aligned, as_of, periods_per_year, label, warnings)
    current = np.zeros(len(index))
    sold: list[tuple[str, float]] = []
    for name, weight in zip(held.names, held.weights):
        if name in index:
            current[index[name]] = weight
        elif weight != 0.0:  # a zero row for a former constituent has nothing to sell
            sold.append((name, float(weight)))
    outside = sum(abs(w) for _, w in sold) / 2.0
    if sold:
        shown = [f"{name!r} ({weight:.4f})" for name, weight in sold]
        warnings.append(
            f"{label}: {len(sold)} name(s) held now are not constituents of this fit and will "
            f"be sold: {_listed(shown, quote=False)}; one-way turnover {outside:.4f} from them "
            "alone"
        )
    return held, current, float(outside)


def _drifted(
    job: Job,
    held: CurrentHoldings,
    aligned: AlignedSeries,
    as_of: date,
    periods_per_year: int | None,
    label: str,
    warnings: list[str],
) -> CurrentHoldings:
    """``held`` carried from ``holdings.date`` to ``as_of`` by buy-and-hold.

    Each name grows by its total return (the file's, before any risk-free rate is taken off)
    over the return dates after the holdings date up to and including ``as_of``; cash grows by
    the risk-free rate (not at all without one); names with no series keep their value. Every
    data date counts, also those the fit leaves out (missing values, the data screen): the
    holdings earned those returns all the same.
    """
    when = job.holdings.date
    if when > as_of:
        raise JobError(
            f"{job.path}: 'holdings.date' is {when}, after the as-of date {as_of}; the "
            "holdings cannot be from after the fit's last date; fix the date or pass a later "
            "--as-of"
        )
    dates = aligned.dates
    i0 = int(np.searchsorted(dates, np.datetime64(when, "D"), side="right")) - 1
    i1 = int(np.searchsorted(dates, np.datetime64(as_of, "D"), side="right")) - 1
    if i0 < 0:
        raise JobError(
            f"{job.path}: 'holdings.date' is {when}, before the first data date {dates[0]}; "
            "the weights cannot be drifted from it; fix the date or remove it"
        )
    if (as_of - when).days > STALE_DAYS:
        warnings.append(
            f"{label}: 'holdings.date' {when} is {(as_of - when).days} days before the as-of "
            f"date {as_of} (more than {STALE_DAYS}); the drifted weights may no longer be what "
            "is held: check that the holdings file is the latest"
        )
    growth, cash_growth = _growth(job, aligned, i0, i1, periods_per_year, held, label)
    column = {name: j for j, name in enumerate(aligned.names)}
    kept = tuple(n for n, w in zip(held.names, held.weights) if n not in column and w != 0.0)
    g = np.array([growth[column[n]] if n in column else 1.0 for n in held.names])
    file_cash = 1.0 - float(held.weights.sum())
    grown = held.weights * g
    value = float(grown.sum()) + file_cash * cash_growth
    weights = grown / value
    drift = HoldingsDrift(
        date=when,
        start=_day(dates[i0]),
        end=as_of,
        periods=i1 - i0,
        file_weights=held.weights,
        file_cash=file_cash,
        kept=kept,
    )
    return replace(held, weights=weights, cash=1.0 - float(weights.sum()), drift=drift)


def _growth(
    job: Job,
    aligned: AlignedSeries,
    i0: int,
    i1: int,
    periods_per_year: int | None,
    held: CurrentHoldings,
    label: str,
) -> tuple[np.ndarray, float]:
    """Growth of one unit of each constituent, shape (n_constituents,), and of cash."""
    n = len(aligned.names)
    raw = aligned.values[i0 : i1 + 1]
    if job.data.values == "prices":
        returns = simple_returns(raw[:, 1 : 1 + n])
    else:
        returns = raw[1:, 1 : 1 + n]
        if job.data.returns_unit == "percent":
            returns = percent_to_decimal(returns)
    weight = dict(zip(held.names, held.weights))
    dates = aligned.dates[i0 + 1 : i1 + 1]
    for j, name in enumerate(aligned.names):
        bad = ~np.isfinite(returns[:, j])
        if weight.get(name, 0.0) != 0.0 and bad.any():
            raise DataError(
                f"{aligned.labels[1 + j]}: no return on {dates[bad][0]}, between the holdings "
                f"date and the as-of date, so the weight held in {label} cannot be drifted; "
                "fill the gap in the file, or remove 'holdings.date'"
            )
    growth = np.prod(1.0 + np.where(np.isfinite(returns), returns, 0.0), axis=0)
    if not aligned.has_risk_free:
        return growth, 1.0
    rf = job.risk_free
    rate = per_period_rate(
        raw[1:, -1], unit=rf.unit, quote=rf.quote, periods_per_year=periods_per_year
    )
    if not np.isfinite(rate).all():
        raise DataError(
            f"{aligned.labels[-1]}: no rate on {dates[~np.isfinite(rate)][0]}, between the "
            "holdings date and the as-of date, so cash cannot be drifted; fill the gap"
        )
    return growth, float(np.prod(1.0 + rate))


def _day(value: np.datetime64) -> date:
    return value.astype("datetime64[D]").item()


def _left_out(job: Job) -> str:
    """Why a constituent of the job can be missing from the fit."""
    coverage = job.data.min_coverage
    if coverage is None:
        return "constituents whose return never varies in the window are left out of the fit"
    return (
        "constituents whose return never varies in the window, or that have a return on fewer "
        f"than {coverage:.0%} of its dates (data.min_coverage: {coverage:g}; listed late, "
        "delisted or with long gaps), are left out of the fit"
    )


def _close(word: str, choices) -> str:
    close = difflib.get_close_matches(word, list(choices), n=3, cutoff=0.6)
    return "; close matches: " + ", ".join(repr(c) for c in close) if close else ""


def _listed(items: Sequence[str], quote: bool = True) -> str:
    shown = [repr(x) if quote else x for x in items[:_MAX_LISTED]]
    more = f", ... ({len(items)} in all)" if len(items) > _MAX_LISTED else ""
    return ", ".join(shown) + more


def _label(path: Path, job: Job) -> str:
    """Path relative to the job file's folder when it lies under it, else the full path."""
    try:
        return path.relative_to(job.path.parent).as_posix()
    except ValueError:
        return str(path)
