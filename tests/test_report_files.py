"""Tests for trackfit.report.files.atomic_write_text."""

from __future__ import annotations

import os
import stat
import sys

import pytest

from trackfit.report import files
from trackfit.report.files import atomic_write_text


def test_writes_text_exactly_and_makes_the_folder(tmp_path):
    path = tmp_path / "a" / "b" / "weights.csv"
    atomic_write_text(path, "name,weight\nÅsgard Tools,0.5\n")
    # Bytes as given: UTF-8, "\n" kept as is on every platform.
    assert path.read_bytes() == "name,weight\nÅsgard Tools,0.5\n".encode()
    assert os.listdir(path.parent) == ["weights.csv"]


def test_replaces_an_existing_file_and_leaves_no_temp_file(tmp_path):
    path = tmp_path / "report.md"
    path.write_text("old\n")
    atomic_write_text(path, "new\n")
    assert path.read_text() == "new\n"
    assert os.listdir(tmp_path) == ["report.md"]


def test_no_newline_translation(tmp_path):
    path = tmp_path / "x.txt"
    atomic_write_text(path, "a\nb\r\nc")
    assert path.read_bytes() == b"a\nb\r\nc"


@pytest.mark.parametrize("failing", ["fsync", "replace"])
def test_failure_keeps_the_old_file_and_removes_the_temp_file(tmp_path, monkeypatch, failing):
    path = tmp_path / "summary.json"
    path.write_text("{}\n")

    def boom(*args, **kwargs):
        raise OSError(f"simulated {failing} failure")

    monkeypatch.setattr(files.os, failing, boom)
    with pytest.raises(OSError, match=f"simulated {failing} failure"):
        atomic_write_text(path, '{"new": true}\n')
    monkeypatch.undo()
    assert path.read_text() == "{}\n"
    assert os.listdir(tmp_path) == ["summary.json"]


def test_failure_on_a_new_file_leaves_nothing(tmp_path, monkeypatch):
    def boom(*args, **kwargs):
        raise OSError("disk full")

    monkeypatch.setattr(files.os, "fsync", boom)
    with pytest.raises(OSError, match="disk full"):
        atomic_write_text(tmp_path / "out" / "weights.csv", "name,weight\n")
    monkeypatch.undo()
    assert os.listdir(tmp_path / "out") == []


def test_a_non_text_value_leaves_nothing(tmp_path):
    with pytest.raises(TypeError):
        atomic_write_text(tmp_path / "weights.csv", b"bytes are not text")  # type: ignore[arg-type]
    assert os.listdir(tmp_path) == []


@pytest.mark.skipif(sys.platform == "win32", reason="POSIX permission bits")
def test_permissions_follow_the_umask(tmp_path):
    old = os.umask(0o022)
    try:
        atomic_write_text(tmp_path / "weights.csv", "x\n")
    finally:
        os.umask(old)
    # An ordinary new file under umask 022 is rw-r--r-- (common practice).
    assert stat.S_IMODE((tmp_path / "weights.csv").stat().st_mode) == 0o644
