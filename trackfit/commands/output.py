"""Where a command writes: the output folder's layout, its lock, and what is handed back."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from datetime import date
from pathlib import Path
from typing import TypeVar

from trackfit.commands.lock import OutputLock

#: ``fixed``: overwrite the files in the output folder; ``dated``: write into
#: ``<output folder>/<as-of date>/``.
LAYOUTS = ("fixed", "dated")

T = TypeVar("T")


@dataclass(frozen=True)
class Written:
    """What a command that writes files hands back to the command line.

    Attributes
    ----------
    paths : tuple of Path
        The files written, in the order they are listed on stdout.
    warnings : tuple of str
        The run's warnings, as kept in its report (a run with warnings may exit 1).
    """

    paths: tuple[Path, ...]
    warnings: tuple[str, ...]


def output_folder(root: Path, layout: str, as_of: date) -> Path:
    """``root`` for the fixed layout, ``root/<YYYY-MM-DD>`` for the dated one."""
    if layout not in LAYOUTS:
        raise ValueError(f"layout must be one of {LAYOUTS}; got {layout!r}")
    return Path(root) if layout == "fixed" else Path(root) / as_of.isoformat()


Notify = Callable[[str], None]


def with_lock(root: Path, work: Callable[[], T], notify: Notify | None = None) -> T:
    """Run ``work()`` holding the lock on ``root``.

    ``notify`` hears at once of a stale lock taken over (said on stderr, not kept in a report,
    and no reason to exit 1).
    """
    with OutputLock(root) as lock:
        for message in lock.warnings if notify is not None else ():
            notify(message)
        return work()
