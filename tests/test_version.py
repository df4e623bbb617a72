"""The version is written once, in trackfit/__init__.py; the installed metadata must agree."""

from __future__ import annotations

import importlib.metadata

import pytest
from click.testing import CliRunner

import trackfit
from trackfit.cli import main


def test_installed_metadata_reads_the_package_version():
    try:
        installed = importlib.metadata.version("trackfit")
    except importlib.metadata.PackageNotFoundError:
        pytest.skip("trackfit is not installed; the tests run from a source tree")
    # pyproject.toml: dynamic = ["version"], read by setuptools from trackfit.__version__.
    assert installed == trackfit.__version__


def test_the_command_line_prints_the_package_version():
    result = CliRunner().invoke(main, ["--version"])
    assert result.exit_code == 0
    assert result.stdout == f"trackfit, version {trackfit.__version__}\n"
