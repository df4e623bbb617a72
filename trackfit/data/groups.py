"""Read the group mapping for group limits: which group (sector, country) each name belongs to.

The file is a CSV with a header and at least two columns: one of names, one of group labels
(named by ``limits.groups.name_column`` and ``limits.groups.group_column``); other columns are
ignored. A name may be listed more than once with the same group.
"""

from __future__ import annotations

import difflib
from pathlib import Path

from trackfit.data.csvrows import read_rows
from trackfit.errors import DataError
from trackfit.job import GroupsSpec

_MAX_LISTED = 12


def read_groups(spec: GroupsSpec, *, label: str | None = None) -> dict[str, str]:
    """Read the name -> group mapping a job's group limits use.

    Parameters
    ----------
    spec : GroupsSpec
        File and column names.
    label : str or None
        How messages name the file; None = ``str(spec.file)``.

    Returns
    -------
    dict of str to str
        Name -> group label, in file order of first appearance.

    Raises
    ------
    DataError
        The file is missing, unreadable, empty or has no rows; a column is missing; a row is
        short; a name or group label is blank; or a name is given two different groups.
    """
    label = str(spec.file) if label is None else label
    rows = _read_rows(spec.file, label)
    if not rows:
        raise DataError(
            f"{label}: the groups file is empty; expected a header line with the "
            f"columns {spec.name_column!r} and {spec.group_column!r}, then one line "
            "per name"
        )
    (_, header), body = rows[0], rows[1:]
    _check_header(header, label)
    at = {}
    for key, column in (("name_column", spec.name_column), ("group_column", spec.group_column)):
        if column not in header:
            raise DataError(
                f"{label}: no column {column!r} (named by limits.groups.{key}); "
                f"{_hint(column, header)}; fix the name in the job file or the "
                "file's header"
            )
        at[key] = header.index(column)
    if not body:
        raise DataError(
            f"{label}: the groups file has a header but no rows; add one line per "
            "name with its group"
        )
    mapping: dict[str, str] = {}
    first: dict[str, int] = {}
    for line, fields in body:
        if len(fields) != len(header):
            raise DataError(
                f"{label}: line {line} has {len(fields)} field(s) but the header has "
                f"{len(header)}; every line needs one field per column"
            )
        name, group = fields[at["name_column"]], fields[at["group_column"]]
        if not name:
            raise DataError(
                f"{label}: line {line}: the name in column {spec.name_column!r} is "
                "blank; give every row a name"
            )
        if not group:
            raise DataError(
                f"{label}: line {line}: {name!r} has a blank group label in column "
                f"{spec.group_column!r}; give every name a group"
            )
        if name in mapping and mapping[name] != group:
            raise DataError(
                f"{label}: {name!r} is in group {mapping[name]!r} on line "
                f"{first[name]} and in group {group!r} on line {line}; a name "
                "belongs to one group"
            )
        if name not in mapping:
            mapping[name], first[name] = group, line
    return mapping


def _read_rows(path: Path, label: str) -> list[tuple[int, list[str]]]:
    return read_rows(path, label, what="groups file", key="limits.groups.file")


def _check_header(header: list[str], label: str) -> None:
    if len(header) < 2:
        raise DataError(
            f"{label}: the header has {len(header)} column(s); a groups file needs "
            "at least two: the names and their groups"
        )
    blank = [i + 1 for i, name in enumerate(header) if not name]
    if blank:
        raise DataError(
            f"{label}: column {blank[0]} of the header has no name; give every column a name"
        )
    twice = sorted({name for name in header if header.count(name) > 1})
    if twice:
        raise DataError(
            f"{label}: column name {twice[0]!r} appears more than once in the "
            "header; column names must be unique"
        )


def _hint(column: str, header: list[str]) -> str:
    shown = ", ".join(repr(c) for c in header[:_MAX_LISTED])
    more = f", ... ({len(header)} in all)" if len(header) > _MAX_LISTED else ""
    close = difflib.get_close_matches(column, header, n=1, cutoff=0.6)
    guess = f" (close match: {close[0]!r})" if close else ""
    return f"columns found: {shown}{more}{guess}"
