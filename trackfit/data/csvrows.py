"""Small CSV files read row by row (holdings, group mappings), with errors that name the line."""

from __future__ import annotations

import csv
from pathlib import Path

from trackfit.errors import DataError


def read_rows(path: Path, label: str, *, what: str, key: str | None) -> list[tuple[int, list[str]]]:
    """Non-blank rows with their line numbers, every field stripped.

    Parameters
    ----------
    path : Path
    label : str
        How messages name the file.
    what : str
        What the file is, for messages ("holdings file").
    key : str or None
        The job key that names the file, for messages ("holdings.file"); None when the
        command line names it.
    """
    if not path.is_file():
        state = "is a folder, not a file" if path.is_dir() else "does not exist"
        where = (
            "check the path given on the command line"
            if key is None
            else f"check '{key}' in the job file (relative paths start from the job file's folder)"
        )
        raise DataError(f"{label}: the {what} {state} ({path}); {where}")
    try:
        with path.open(encoding="utf-8-sig", newline="") as handle:
            reader = csv.reader(handle, strict=True)
            rows = []
            line = 1
            for fields in reader:
                stripped = [f.strip() for f in fields]
                if any(stripped):
                    rows.append((line, stripped))
                line = reader.line_num + 1
            return rows
    except UnicodeDecodeError as err:
        raise DataError(f"{label}: not UTF-8 text ({err.reason}); save it as UTF-8 CSV") from None
    except csv.Error as err:
        raise DataError(
            f"{label}: line {reader.line_num}: not well-formed CSV ({err}); check the "
            "quotes on that line"
        ) from None
    except OSError as err:
        raise DataError(f"{label}: cannot read the {what} ({err.strerror})") from None
