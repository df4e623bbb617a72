"""Pick the job's series out of its files and line them up on the dates all files share."""

from __future__ import annotations

from dataclasses import dataclass
from functools import reduce
from pathlib import Path

import numpy as np

from trackfit.data.csvfile import WideTable, check_file, read_wide_csv
from trackfit.data.dataset import DataStep
from trackfit.data.longfile import LongTable, read_long_csv
from trackfit.data.parquetfile import read_parquet
from trackfit.errors import DataError
from trackfit.job import Job
from trackfit.jobfile.specs import FileLayout

#: Names the output files use for something other than a constituent.
RESERVED_NAMES = frozenset({"(cash)"})


@dataclass(frozen=True)
class AlignedSeries:
    """Raw file values (prices, returns or rates as written) on the common dates.

    Attributes
    ----------
    dates : ndarray of datetime64[D], shape (n_dates,)
        Dates present in every file used, increasing.
    values : ndarray of shape (n_dates, n_series)
        Column 0 is the benchmark, then the constituents in ``names`` order, then the
        risk-free rate when there is one.
    benchmark_name : str
    names : tuple of str
        Constituent names in the job's order.
    has_risk_free : bool
    labels : tuple of str, length n_series
        How messages name each column of ``values``: ``'name' (file)``.
    steps : tuple of DataStep
        One alignment step per file, in the order the job names the files.
    sources : tuple of str, length n_series
        How the data screen names each column: ``file: name``.
    """

    dates: np.ndarray
    values: np.ndarray
    benchmark_name: str
    names: tuple[str, ...]
    has_risk_free: bool
    labels: tuple[str, ...]
    steps: tuple[DataStep, ...]
    sources: tuple[str, ...] = ()


@dataclass(frozen=True)
class _Pick:
    table: WideTable
    column: str


def align_series(job: Job) -> AlignedSeries:
    """Read the job's files (each once), pick its columns and keep the dates common to all.

    Parameters
    ----------
    job : Job

    Returns
    -------
    AlignedSeries

    Raises
    ------
    DataError
        A file or column problem (see :func:`read_wide_csv`), a constituent name used twice,
        equal to the benchmark's or reserved, or no date common to every file.
    """
    base = job.path.parent.resolve()
    tables: dict[Path, WideTable] = {}
    layouts: dict[Path, tuple[FileLayout, str]] = {}

    def table(path: Path, layout: FileLayout, key: str) -> WideTable:
        path = (path if path.is_absolute() else base / path).resolve()
        if path not in tables:
            tables[path] = read_table(
                path,
                layout,
                date_column=job.data.date_column,
                date_format=job.data.date_format,
                label=_label(path, base),
            )
            layouts[path] = (layout, key)
        elif layouts[path][0] != layout:
            first, where = layouts[path]
            raise DataError(
                f"{_label(path, base)}: '{where}' and '{key}' read this file with different "
                f"layout keys ({_describe(first)} vs {_describe(layout)}); give both the same "
                "layout, format, name_column and value_column"
            )
        return tables[path]

    # Read in the job's order (benchmark, constituents, risk-free) so steps follow the job.
    bench_table = table(job.benchmark.file, job.benchmark.layout, "benchmark")
    keys = _constituent_keys(job)
    for key, source in zip(keys, job.constituents):
        table(source.file, source.layout, key)
    bench = _Pick(bench_table, _single_column(bench_table, job.benchmark.column, "benchmark"))
    rf = None
    if job.risk_free is not None:
        rf_table = table(job.risk_free.file, job.risk_free.layout, "risk_free")
        rf = _Pick(rf_table, _single_column(rf_table, job.risk_free.column, "risk_free"))
    picks = _constituent_picks(job, lambda s, k: table(s.file, s.layout, k), keys, bench, rf)
    _check_names(bench, picks)

    used = list(tables.values())
    common = reduce(np.intersect1d, (t.dates for t in used))
    if common.size == 0:
        spans = "; ".join(f"{t.label}: {t.dates[0]} to {t.dates[-1]}" for t in used)
        raise DataError(
            f"no date appears in every data file ({spans}); check that the files cover the "
            "same period and use the same date convention"
        )
    steps = tuple(
        DataStep(f"dates not in every file ({_short(t.path, base)})", len(t.dates), len(common))
        for t in used
    )
    columns = [bench, *picks] + ([rf] if rf is not None else [])
    values = np.empty((common.size, len(columns)), dtype=np.float64)
    for j, pick in enumerate(columns):
        rows = np.searchsorted(pick.table.dates, common)
        values[:, j] = pick.table.numbers(pick.column)[rows]
    return AlignedSeries(
        dates=common,
        values=values,
        benchmark_name=bench.column,
        names=tuple(p.column for p in picks),
        has_risk_free=rf is not None,
        labels=tuple(f"{p.column!r} ({p.table.label})" for p in columns),
        steps=steps,
        sources=tuple(f"{p.table.label}: {p.column}" for p in columns),
    )


def read_table(
    path: Path, layout: FileLayout, *, date_column: str, date_format: str | None, label: str
) -> WideTable:
    """Read one source file, wide or long, CSV or Parquet, as the table of a wide CSV file.

    Parameters
    ----------
    path : Path
        Absolute path of the file.
    layout : FileLayout
        The source's layout keys (``kind`` and ``format`` choose the reader).
    date_column : str
    date_format : str or None
    label : str
        How messages name the file.

    Returns
    -------
    WideTable
        Dates increasing; a long file's names as its columns (see :mod:`trackfit.data.longfile`).

    Raises
    ------
    DataError
        See :func:`~trackfit.data.csvfile.read_wide_csv`,
        :func:`~trackfit.data.longfile.read_long_csv` and
        :func:`~trackfit.data.parquetfile.read_parquet`.
    """
    check_file(path, label)
    options = {"date_column": date_column, "date_format": date_format, "label": label}
    if layout.format == "parquet":
        return read_parquet(path, layout=layout, **options)
    if layout.kind == "long":
        return read_long_csv(path, layout=layout, **options)
    return read_wide_csv(path, **options)


def _describe(layout: FileLayout) -> str:
    if layout.kind == "wide":
        return f"wide {layout.format}"
    return (
        f"long {layout.format}, names in {layout.name_column!r}, values in {layout.value_column!r}"
    )


def _constituent_keys(job: Job) -> list[str]:
    return [f"constituents[{i}]" for i in range(len(job.constituents))]


def _single_column(table: WideTable, column: str | None, key: str) -> str:
    if column is not None:
        table.require(column, f"{key}.column")
        return column
    if len(table.columns) == 1:
        return table.columns[0]
    found = ", ".join(repr(c) for c in table.columns) or "none"
    if isinstance(table, LongTable):
        raise DataError(
            f"{table.label}: {key}.column is not set, so the long file must hold exactly one "
            f"series, but column {table.name_column!r} holds {len(table.columns)} names "
            f"({found}); set {key}.column to one of them"
        )
    raise DataError(
        f"{table.label}: {key}.column is not set, so the file must hold exactly one series "
        f"besides the date column, but it has {len(table.columns)} ({found}); set "
        f"{key}.column to one of them"
    )


def _constituent_picks(
    job: Job, table, keys: list[str], bench: _Pick, rf: _Pick | None
) -> list[_Pick]:
    # With `columns: all` a shared file's benchmark and rate columns are not constituents.
    taken = {(bench.table.path, bench.column)}
    if rf is not None:
        taken.add((rf.table.path, rf.column))
    picks: list[_Pick] = []
    for i, (key, source) in enumerate(zip(keys, job.constituents)):
        t = table(source, key)
        if source.columns is None:
            columns = [c for c in t.columns if (t.path, c) not in taken]
            if not columns:
                raise DataError(
                    f"{t.label}: constituents[{i}] takes every column but the date column, "
                    "and the file has no other series column; add the constituent columns"
                )
        else:
            columns = list(source.columns)
            for c in columns:
                t.require(c, f"constituents[{i}].columns")
        picks.extend(_Pick(t, c) for c in columns)
    return picks


def _check_names(bench: _Pick, picks: list[_Pick]) -> None:
    first: dict[str, _Pick] = {}
    for pick in picks:
        name = pick.column
        if name in RESERVED_NAMES:
            raise DataError(
                f"{pick.table.label}: constituent column {name!r} uses a name trackfit "
                "reserves for the output files; rename the column"
            )
        if name == bench.column:
            raise DataError(
                f"{pick.table.label}: constituent {name!r} has the same name as the benchmark "
                f"column in {bench.table.label}; rename one of them or list the constituent "
                "columns explicitly"
            )
        if name in first:
            where = (
                f"twice among the columns taken from {pick.table.label}"
                if first[name].table is pick.table
                else f"in both {first[name].table.label} and {pick.table.label}"
            )
            raise DataError(
                f"constituent {name!r} appears {where}; every constituent needs a unique name; "
                "rename a column or drop it from one source's columns"
            )
        first[name] = pick


def _label(path: Path, base: Path) -> str:
    """Path relative to the job file's folder when it lies under it, else the full path."""
    try:
        return path.relative_to(base).as_posix()
    except ValueError:
        return str(path)


def _short(path: Path, base: Path) -> str:
    """Like :func:`_label`, but never a full path (these texts end up in output files)."""
    try:
        return path.relative_to(base).as_posix()
    except ValueError:
        return path.name
