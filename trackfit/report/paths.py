"""Naming files in reports without absolute paths."""

from __future__ import annotations

import os
from pathlib import Path


def relative_path(path: Path, folder: Path) -> str:
    """``path`` as written relative to ``folder`` (the job's folder), with forward slashes.

    A relative ``path`` is returned as it is; a path on another drive (Windows), where no
    relative path exists, gives its file name only.
    """
    path = Path(path)
    if not path.is_absolute():
        return path.as_posix()
    try:
        return Path(os.path.relpath(path, folder)).as_posix()
    except ValueError:
        return path.name
