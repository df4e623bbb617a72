"""The output lock: one writer per folder, stale locks taken over, nothing left behind."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest

from trackfit.commands.lock import LOCK_NAME, OutputLock, OutputLocked, lock_text, parse_lock


def _dead_pid() -> int:
    """The pid of a process that has exited (and been reaped)."""
    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    proc.wait()
    return proc.pid


def test_the_lock_holds_our_pid_and_is_removed_on_exit(tmp_path):
    with OutputLock(tmp_path) as lock:
        owner = parse_lock((tmp_path / LOCK_NAME).read_text())
        assert owner is not None and owner[0] == os.getpid()
        assert lock.warnings == []
    assert not (tmp_path / LOCK_NAME).exists()


def test_the_lock_is_removed_when_the_work_fails(tmp_path):
    with pytest.raises(RuntimeError), OutputLock(tmp_path):
        raise RuntimeError("boom")
    assert not (tmp_path / LOCK_NAME).exists()


def test_a_live_owner_refuses_a_second_writer(tmp_path):
    (tmp_path / LOCK_NAME).write_text(lock_text(os.getpid(), "2026-11-30T06:00:00+00:00"))
    with (
        pytest.raises(OutputLocked, match=rf"pid {os.getpid()}.*wait for it to finish"),
        OutputLock(tmp_path),
    ):
        pass
    assert (tmp_path / LOCK_NAME).exists()  # the other run's lock is left alone


def test_two_locks_on_one_folder_cannot_both_be_held(tmp_path):
    with OutputLock(tmp_path):
        with pytest.raises(OutputLocked), OutputLock(tmp_path):
            pass
        assert (tmp_path / LOCK_NAME).exists()


def test_a_stale_lock_is_taken_over_with_a_warning(tmp_path):
    pid = _dead_pid()
    (tmp_path / LOCK_NAME).write_text(lock_text(pid, "2026-11-30T06:00:00+00:00"))
    with OutputLock(tmp_path) as lock:
        assert parse_lock((tmp_path / LOCK_NAME).read_text())[0] == os.getpid()
        assert len(lock.warnings) == 1 and f"pid {pid}" in lock.warnings[0]
    assert not (tmp_path / LOCK_NAME).exists()


def test_a_fresh_unreadable_lock_is_respected(tmp_path):
    (tmp_path / LOCK_NAME).write_text("")
    with pytest.raises(OutputLocked, match="does not say which run"), OutputLock(tmp_path):
        pass


def test_an_old_unreadable_lock_is_stale(tmp_path):
    path = tmp_path / LOCK_NAME
    path.write_text("garbage")
    os.utime(path, (1_000_000_000, 1_000_000_000))
    with OutputLock(tmp_path) as lock:
        assert "unreadable" in lock.warnings[0]


def test_a_folder_made_for_the_lock_is_removed_if_nothing_was_written(tmp_path):
    folder = tmp_path / "out"
    with OutputLock(folder):
        assert folder.is_dir()
    assert not folder.exists()
    with OutputLock(folder):
        (folder / "weights.csv").write_text("x")
    assert (folder / "weights.csv").exists() and not (folder / LOCK_NAME).exists()


@pytest.mark.parametrize(
    "text, expected",
    [
        ("pid=12\nstarted=2026-11-30T06:00:00+00:00\n", (12, "2026-11-30T06:00:00+00:00")),
        ("pid=12\n", (12, "unknown")),
        ("pid=x\n", None),
        ("pid=0\n", None),
        ("", None),
    ],
)
def test_parse_lock(text, expected):
    assert parse_lock(text) == expected
