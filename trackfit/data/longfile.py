"""Read one long file (one row per date and series) into the table a wide file would give.

A long file names each series in a name column and holds its values in a value column. The
pivot gives exactly the :class:`~trackfit.data.csvfile.WideTable` of a wide file with the same
data, so nothing downstream knows the difference:

- dates sorted increasing, one row per date that appears anywhere in the file;
- one column per name, in the order the names first appear going down the file (so a file
  written date by date in a wide file's column order gives that order);
- a (date, name) pair the file does not hold is a missing value (NaN), left to
  ``data.missing`` as a missing cell of a wide file is; a pair given twice is an error.

Text turns into numbers with pandas' ``to_numeric``, the converter behind both wide CSV reads,
so the same text gives the same bits in either layout.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from trackfit.data.csvfile import (
    WideTable,
    cells_to_numbers,
    check_header,
    parse_dates,
    quoted,
    read_text_table,
)
from trackfit.errors import DataError
from trackfit.jobfile.specs import FileLayout


@dataclass(frozen=True, eq=False)
class LongTable(WideTable):
    """A long file pivoted to wide: ``columns`` are the names found in ``name_column``.

    Attributes
    ----------
    name_column : str
        The column of the file that held the names (for messages).
    """

    name_column: str = "name"

    def _words(self, column: str) -> tuple[str, str, str]:
        missing = f"no series named {column!r} in column {self.name_column!r}"
        return missing, "names", "in the file"


def read_long_csv(
    path: Path, *, layout: FileLayout, date_column: str, date_format: str | None, label: str
) -> LongTable:
    """Read a long CSV file: a header, then one line per (date, name) with its value.

    Parameters
    ----------
    path : Path
        File to read (UTF-8, comma-separated, header on the first line); other columns than
        the date, name and value columns are ignored.
    layout : FileLayout
        ``name_column`` and ``value_column`` of the file.
    date_column : str
    date_format : str or None
        strptime-style format of the dates; None means ISO 8601 ``YYYY-MM-DD``.
    label : str
        How messages name the file.

    Returns
    -------
    LongTable

    Raises
    ------
    DataError
        File missing, empty or malformed, a missing date, name or value column, an unreadable
        date, a blank name, a value that is not a number, or a (date, name) pair given twice.
    """
    if path.is_file() and not path.read_bytes().strip():
        raise DataError(
            f"{label}: the file is empty; expected a header line with the columns "
            f"{date_column!r}, {layout.name_column!r} and {layout.value_column!r}, then one line "
            "per date and series"
        )
    raw = read_text_table(path, label).fillna("").astype(str)
    header = [name.strip() for name in raw.iloc[0]]
    body = raw.iloc[1:].apply(lambda col: col.str.strip())
    lines = np.arange(2, len(raw) + 1)
    keep = (body != "").any(axis=1).to_numpy()  # blank lines are not rows
    body, lines = body[keep], lines[keep]
    check_header(header, label)
    for column, key in (
        (date_column, "data.date_column"),
        (layout.name_column, "name_column"),
        (layout.value_column, "value_column"),
    ):
        if column not in header:
            raise DataError(
                f"{label}: no column {column!r} in this long file; columns found: "
                f"{quoted(header, limit=12)}; set the source's {key} to the column's name"
            )
    if body.empty:
        raise DataError(
            f"{label}: the file has a header but no data rows; add one line per date and series"
        )
    body.columns = header
    dates = parse_dates(body[date_column], lines, date_format, label, date_column)
    names = body[layout.name_column].to_numpy(dtype=object)
    blank = np.flatnonzero(names == "")
    if blank.size:
        i = blank[0]
        raise DataError(
            f"{label}: line {lines[i]} (date {dates[i]}) has no name in column "
            f"{layout.name_column!r}; give every line the name of its series"
        )
    values = _numbers(body[layout.value_column], lines, dates, names, label, layout)
    return pivot_long(path, label, dates, names, values, lines, "line", layout.name_column)


def _numbers(text, lines, dates, names, label: str, layout: FileLayout) -> np.ndarray:
    values, bad = cells_to_numbers(text)
    if bad.size:
        i = bad[0]
        more = f" ({bad.size} such cells in the column)" if bad.size > 1 else ""
        raise DataError(
            f"{label}: line {lines[i]} (date {dates[i]}, name {names[i]!r}): "
            f"{text.iloc[i]!r} in column {layout.value_column!r} is not a number{more}; write "
            "plain numbers with '.' as the decimal separator, or leave the cell empty for a "
            "missing value"
        )
    return values


def pivot_long(
    path: Path,
    label: str,
    dates: np.ndarray,
    names: np.ndarray,
    values: np.ndarray,
    rows: np.ndarray,
    row_word: str,
    name_column: str,
) -> LongTable:
    """Pivot long rows to a table with one row per date and one column per name.

    Parameters
    ----------
    path : Path
    label : str
        How messages name the file.
    dates : ndarray of datetime64[D], shape (n_rows,)
    names : ndarray of str, shape (n_rows,)
    values : ndarray of float64, shape (n_rows,)
        NaN where a value is missing.
    rows : ndarray of int, shape (n_rows,)
        Where each row is in the file, for messages (a line number, or a row number).
    row_word : str
        What ``rows`` count: "line" or "row".
    name_column : str

    Returns
    -------
    LongTable
        ``lines`` holds, for each date, the first of its ``rows``.

    Raises
    ------
    DataError
        A (date, name) pair appears twice.
    """
    import pandas as pd

    codes, found = pd.factorize(pd.Index(names, dtype=object), sort=False)  # first appearance
    n_names = len(found)
    unique_dates, date_index = np.unique(dates, return_inverse=True)
    cell = date_index.astype(np.int64) * n_names + codes
    order = np.argsort(cell, kind="stable")
    twice = np.flatnonzero(cell[order][1:] == cell[order][:-1])
    if twice.size:
        first, second = order[twice[0]], order[twice[0] + 1]
        more = f" ({twice.size} repeated pairs in all)" if twice.size > 1 else ""
        raise DataError(
            f"{label}: date {dates[second]} and name {names[second]!r} appear on both "
            f"{row_word} {rows[first]} and {row_word} {rows[second]}{more}; keep one "
            f"{row_word} per date and name"
        )
    table = np.full((unique_dates.size, n_names), np.nan, order="F")
    table[date_index, codes] = values
    table.flags.writeable = False
    first_rows = np.full(unique_dates.size, np.iinfo(np.int64).max, dtype=np.int64)
    np.minimum.at(first_rows, date_index, rows)
    return LongTable(
        path=path,
        label=label,
        dates=unique_dates,
        columns=tuple(str(name) for name in found),
        lines=first_rows,
        values=table,
        name_column=name_column,
    )
