"""One writer per output folder: a lock file made with O_CREAT | O_EXCL, removed on exit.

Unattended runs (cron) may overlap when one takes longer than the interval between them. Two
runs writing the same folder could leave weights from one next to a report from the other, so
each run holds ``<folder>/.trackfit.lock`` while it works. The file holds the owner's pid and
start time. A second run finds it and stops with :class:`OutputLocked`; a lock whose pid is no
longer alive (a run that was killed) is stale and is taken over, with a warning.
"""

from __future__ import annotations

import os
import time
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path

from trackfit.errors import TrackfitError

#: Name of the lock file inside the output folder.
LOCK_NAME = ".trackfit.lock"
#: A lock file this many seconds old that says nothing readable is from a run that died while
#: writing it (a live owner writes it within microseconds of creating it).
UNREADABLE_STALE_SECONDS = 10.0


class OutputLocked(TrackfitError):
    """Another live run holds the lock on the output folder."""


@dataclass
class OutputLock:
    """Hold the lock on ``folder`` for the duration of a ``with`` block.

    Parameters
    ----------
    folder : Path
        The output folder; made if missing (and removed again on exit if it was made here and
        is still empty, so a run that fails early leaves nothing behind).

    Attributes
    ----------
    warnings : list of str
        Set on entry: a note when a stale lock was taken over.
    """

    folder: Path
    warnings: list[str] = field(default_factory=list)
    _made_folder: bool = False
    _held: bool = False

    @property
    def path(self) -> Path:
        return Path(self.folder) / LOCK_NAME

    def __enter__(self) -> OutputLock:
        folder = Path(self.folder)
        self._made_folder = not folder.exists()
        folder.mkdir(parents=True, exist_ok=True)
        try:
            self._acquire()
        except BaseException:
            self._remove_folder_if_made()
            raise
        self._held = True
        return self

    def __exit__(self, *exc) -> None:
        if self._held:
            try:
                os.unlink(self.path)
            except FileNotFoundError:
                pass
            self._held = False
        self._remove_folder_if_made()

    def _acquire(self) -> None:
        for _ in range(2):  # a second try only after a stale lock was removed
            if _create(self.path):
                return
            text = _read(self.path)
            if text is None:  # vanished between our create and our read: try again
                continue
            owner = parse_lock(text)
            if owner is not None and _alive(owner[0]):
                raise OutputLocked(
                    f"{self.folder}: another trackfit run (pid {owner[0]}, started {owner[1]}) "
                    f"is writing to this folder and holds {LOCK_NAME}; wait for it to finish. "
                    f"If no trackfit run is active, delete {self.path}"
                )
            if owner is None and _age(self.path) < UNREADABLE_STALE_SECONDS:
                raise OutputLocked(
                    f"{self.folder}: {LOCK_NAME} exists but does not say which run holds it "
                    f"(it may be being written right now); try again, or delete {self.path} "
                    "if no trackfit run is active"
                )
            # Remove only the stale lock we read, not one a faster run has just made.
            if _read(self.path) == text:
                try:
                    os.unlink(self.path)
                except FileNotFoundError:
                    pass
            who = f"pid {owner[0]}, started {owner[1]}" if owner else "unreadable"
            self.warnings.append(
                f"{self.path.name} in {self.folder} was left by a run that is no longer "
                f"running ({who}); took it over"
            )
        if not _create(self.path):
            raise OutputLocked(
                f"{self.folder}: another trackfit run took the lock {LOCK_NAME} at the same "
                "moment; wait for it to finish"
            )

    def _remove_folder_if_made(self) -> None:
        if self._made_folder:
            try:
                Path(self.folder).rmdir()  # only succeeds when empty
            except OSError:
                pass
            self._made_folder = False


def lock_text(pid: int, started: str) -> str:
    """The lock file's contents: ``pid=<pid>`` and ``started=<ISO time>`` lines."""
    return f"pid={pid}\nstarted={started}\n"


def parse_lock(text: str) -> tuple[int, str] | None:
    """``(pid, started)`` from a lock file's text, or None when it is not one."""
    fields = dict(line.split("=", 1) for line in text.splitlines() if "=" in line)
    try:
        pid = int(fields["pid"])
    except (KeyError, ValueError):
        return None
    return (pid, fields.get("started", "unknown")) if pid > 0 else None


def _create(path: Path) -> bool:
    """Make the lock file with our pid; False when it exists already."""
    try:
        fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o644)
    except FileExistsError:
        return False
    started = datetime.now(timezone.utc).isoformat(timespec="seconds")
    with os.fdopen(fd, "w", encoding="utf-8", newline="") as handle:
        handle.write(lock_text(os.getpid(), started))
        handle.flush()
        os.fsync(handle.fileno())
    return True


def _read(path: Path) -> str | None:
    try:
        return path.read_text(encoding="utf-8", errors="replace")
    except FileNotFoundError:
        return None


def _age(path: Path) -> float:
    try:
        return time.time() - path.stat().st_mtime
    except FileNotFoundError:
        return float("inf")


def _alive(pid: int) -> bool:
    """True when a process with this pid exists (on this machine)."""
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # it exists, under another user
        return True
    except OSError:
        return False
    return True
