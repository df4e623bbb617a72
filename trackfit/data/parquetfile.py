"""Read one Parquet file, wide or long, into the table a CSV file of the same data would give.

pyarrow is an optional extra (``pip install 'trackfit[parquet]'``); it is imported here, on the
first Parquet read, so nothing else pays for it. Dates may be stored as dates, timestamps (the
calendar date is kept; with a time zone, the local one) or text in ``data.date_format`` (ISO
8601 by default). Series values must be stored as numbers; a null is a missing value.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from trackfit.data.csvfile import WideTable, check_unique, parse_dates, quoted
from trackfit.data.longfile import pivot_long
from trackfit.errors import DataError
from trackfit.jobfile.specs import FileLayout

INSTALL_HINT = "pip install 'trackfit[parquet]'"


@dataclass(frozen=True, eq=False)
class ParquetTable(WideTable):
    """A wide Parquet file; a column not stored as numbers fails only when a job asks for it.

    Attributes
    ----------
    not_numbers : tuple of (str, str)
        (column, stored type) of each series column that does not hold numbers.
    """

    not_numbers: tuple[tuple[str, str], ...] = ()

    def numbers(self, column: str) -> np.ndarray:
        for name, kind in self.not_numbers:
            if name == column:
                raise DataError(
                    f"{self.label}: column {column!r} is stored as {kind}, not as numbers; "
                    "store the series as integers or floating-point numbers"
                )
        return super().numbers(column)


def read_parquet(
    path: Path, *, layout: FileLayout, date_column: str, date_format: str | None, label: str
) -> WideTable:
    """Read a Parquet file laid out as ``layout.kind`` says.

    Parameters
    ----------
    path : Path
    layout : FileLayout
    date_column : str
    date_format : str or None
        Format of dates stored as text; None means ISO 8601 ``YYYY-MM-DD``.
    label : str
        How messages name the file.

    Returns
    -------
    WideTable
        A :class:`ParquetTable` for a wide file, a :class:`LongTable` for a long one.

    Raises
    ------
    DataError
        pyarrow not installed, the file unreadable or without rows, a missing column, a date
        that is missing or unreadable, values not stored as numbers, a date given twice (wide)
        or a (date, name) pair given twice (long).
    """
    try:
        import pyarrow as pa
        import pyarrow.parquet as pq
    except ImportError:
        raise DataError(
            f"{label}: reading Parquet files needs pyarrow, which is not installed; install "
            f"it with {INSTALL_HINT}, or save the file as CSV"
        ) from None
    try:
        data = pq.read_table(path)
    except (pa.ArrowException, OSError) as err:
        reason = str(err).strip().splitlines()[0] if str(err).strip() else type(err).__name__
        raise DataError(
            f"{label}: not a readable Parquet file ({reason}); write it again, or set the "
            "source's format: csv if it is a CSV file"
        ) from None
    header = list(data.column_names)
    twice = sorted({name for name in header if header.count(name) > 1})
    if twice:
        raise DataError(
            f"{label}: column name {quoted(twice)} appears more than once; column names must "
            "be unique"
        )
    needed = [(date_column, "data.date_column")]
    if layout.kind == "long":
        needed += [(layout.name_column, "name_column"), (layout.value_column, "value_column")]
    for column, key in needed:
        if column not in header:
            raise DataError(
                f"{label}: no column {column!r}; columns found: {quoted(header, limit=12)}; "
                f"set the source's {key} to the column's name"
            )
    if data.num_rows == 0:
        raise DataError(f"{label}: the file has no rows; add one row per date")
    rows = np.arange(1, data.num_rows + 1)
    dates = _dates(pa, data.column(date_column), rows, date_format, label, date_column)
    if layout.kind == "long":
        names = _names(pa, data.column(layout.name_column), rows, dates, label, layout)
        column = data.column(layout.value_column)
        if not _numeric(pa, column.type):
            raise DataError(
                f"{label}: column {layout.value_column!r} is stored as {column.type}, not as "
                "numbers; store the values as integers or floating-point numbers"
            )
        values = _floats(pa, column)
        return pivot_long(path, label, dates, names, values, rows, "row", layout.name_column)
    check_unique(dates, label)
    order = np.argsort(dates, kind="stable")
    columns = tuple(name for name in header if name != date_column)
    values = np.full((len(dates), len(columns)), np.nan, order="F")
    not_numbers = []
    for j, name in enumerate(columns):
        column = data.column(name)
        if _numeric(pa, column.type):
            values[:, j] = _floats(pa, column)[order]
        else:
            not_numbers.append((name, str(column.type)))
    values.flags.writeable = False
    return ParquetTable(
        path=path,
        label=label,
        dates=dates[order],
        columns=columns,
        lines=rows[order],
        values=values,
        not_numbers=tuple(not_numbers),
    )


def _numeric(pa, kind) -> bool:
    return pa.types.is_integer(kind) or pa.types.is_floating(kind) or pa.types.is_decimal(kind)


def _floats(pa, column) -> np.ndarray:
    """A numeric column as float64 of shape (n_rows,), NaN where null."""
    return np.asarray(
        column.cast(pa.float64()).to_numpy(zero_copy_only=False), dtype=np.float64
    ).copy()


def _null_row(column, rows: np.ndarray) -> int | None:
    if column.null_count == 0:
        return None
    valid = np.asarray(column.is_valid().to_numpy(zero_copy_only=False), dtype=bool)
    return int(rows[np.flatnonzero(~valid)[0]])


def _dates(pa, column, rows, date_format, label: str, name: str) -> np.ndarray:
    import pandas as pd

    kind = column.type
    row = _null_row(column, rows)
    if row is not None:
        raise DataError(f"{label}: row {row} has no date in column {name!r}; give every row a date")
    if pa.types.is_string(kind) or pa.types.is_large_string(kind):
        text = pd.Series(column.to_pylist(), dtype=object).str.strip()
        return parse_dates(text, rows, date_format, label, name)
    if pa.types.is_date(kind) or pa.types.is_timestamp(kind):
        stamps = pd.to_datetime(pd.Series(column.to_pandas()))
        if stamps.dt.tz is not None:  # keep the local calendar date, as a CSV %z date does
            stamps = stamps.dt.tz_localize(None)
        return stamps.to_numpy().astype("datetime64[D]")
    raise DataError(
        f"{label}: date column {name!r} is stored as {kind}; store dates as a date or "
        "timestamp type, or as YYYY-MM-DD text"
    )


def _names(pa, column, rows, dates, label: str, layout: FileLayout) -> np.ndarray:
    kind = column.type
    if pa.types.is_dictionary(kind):
        column = column.cast(kind.value_type)
        kind = column.type
    if not (pa.types.is_string(kind) or pa.types.is_large_string(kind)):
        raise DataError(
            f"{label}: name column {layout.name_column!r} is stored as {kind}; store the "
            "series names as text"
        )
    names = np.array([n.strip() if n is not None else "" for n in column.to_pylist()], object)
    blank = np.flatnonzero(names == "")
    if blank.size:
        i = blank[0]
        raise DataError(
            f"{label}: row {rows[i]} (date {dates[i]}) has no name in column "
            f"{layout.name_column!r}; give every row the name of its series"
        )
    return names
