"""Writing report files atomically: readers see the old file or the new one, never half."""

from __future__ import annotations

import os
import secrets
from pathlib import Path


def atomic_write_text(path: Path, text: str) -> None:
    """Write ``text`` to ``path`` as UTF-8, replacing any existing file in one step.

    The text goes to a temporary file in the same folder, is flushed and fsynced, then
    moved over ``path`` with :func:`os.replace`. The folder is made if missing. If
    anything fails, the temporary file is removed and ``path`` is left as it was.
    Line endings are written exactly as given (no translation).

    Parameters
    ----------
    path : Path
        Destination file.
    text : str
        Complete file contents.
    """
    _atomic_write(path, text, {"mode": "w", "encoding": "utf-8", "newline": ""})


def atomic_write_bytes(path: Path, data: bytes) -> None:
    """Write ``data`` to ``path`` exactly, replacing any existing file in one step.

    The same steps and guarantees as :func:`atomic_write_text`, for binary files (figures).

    Parameters
    ----------
    path : Path
        Destination file.
    data : bytes
        Complete file contents.
    """
    _atomic_write(path, data, {"mode": "wb"})


def _atomic_write(path: Path, contents: str | bytes, open_args: dict) -> None:
    path = Path(path)
    folder = path.parent
    folder.mkdir(parents=True, exist_ok=True)
    fd, temp = _open_temp(folder, path.name)
    try:
        with os.fdopen(fd, **open_args) as handle:
            handle.write(contents)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(temp, path)
    except BaseException:
        try:
            os.unlink(temp)
        except FileNotFoundError:
            pass
        raise
    _fsync_folder(folder)


def _open_temp(folder: Path, name: str) -> tuple[int, Path]:
    """Create a fresh hidden temporary file beside the destination.

    ``os.open`` with mode 0o666 lets the user's umask decide the final permissions, as for
    any ordinary file (``tempfile.mkstemp`` would leave the report readable by its owner only).
    """
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
    while True:
        temp = folder / f".{name}.{secrets.token_hex(6)}.tmp"
        try:
            return os.open(temp, flags, 0o666), temp
        except FileExistsError:
            continue


def _fsync_folder(folder: Path) -> None:
    """Make the rename itself durable where the platform allows it (POSIX)."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)
