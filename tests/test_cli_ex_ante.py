"""``trackfit fit`` writes the expected tracking error of the held weights on the demo."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from trackfit.cli import main
from trackfit.core.risk import ex_ante_risk
from trackfit.data.groups import read_groups
from trackfit.job import load_job
from trackfit.report.ex_ante import HEADING

DEMO = Path(__file__).resolve().parents[1] / "examples" / "lumen_bay"


@pytest.fixture(scope="module")
def grouped(tmp_path_factory):
    """The demo job with its sectors file and a group limit that cannot bind, fitted once."""
    root = tmp_path_factory.mktemp("exante")
    shutil.copytree(DEMO / "data", root / "data")
    text = (DEMO / "job.yaml").read_text()
    text += "limits:\n  groups: {file: data/sectors.csv, group_column: sector, each: {max: 1.0}}\n"
    (root / "job.yaml").write_text(text)
    result = CliRunner().invoke(
        main, ["fit", str(root / "job.yaml"), "--out", str(root / "out"), "--no-figures"]
    )
    return root, result


def test_report_and_summary_carry_the_expected_tracking_error(grouped):
    root, result = grouped
    assert result.exit_code in (0, 1), result.stderr  # 1: the groups file lists extra names
    report = (root / "out" / "report.md").read_text()
    assert f"\n{HEADING}\n" in report
    assert report.index(HEADING) < report.index("\n## Penalty choice\n")
    assert "### By name" in report and "### By group" in report
    summary = json.loads((root / "out" / "summary.json").read_text())
    got = summary["ex_ante"]
    lines = (root / "out" / "weights.csv").read_text().splitlines()[1:-1]
    weights = {n: float(w) for n, w in (line.split(",") for line in lines)}
    assert sorted(got["by_name"]) == sorted(n for n, w in weights.items() if w != 0.0)
    te = got["tracking_error"]
    assert sum(got["by_name"].values()) + got["benchmark"] == pytest.approx(te, rel=1e-10)
    assert sum(got["by_group"].values()) + got["benchmark"] == pytest.approx(te, rel=1e-10)
    job = load_job(root / "job.yaml")
    sectors = set(read_groups(job.limits.groups).values())
    assert set(got["by_group"]) <= sectors  # every demo name has a sector: no "(no group)"


def test_summary_total_is_recomputed_from_the_written_weights(grouped):
    # Recomputed outside the fit: the job's data (through the loader) and weights.csv.
    from trackfit.data.load import load_tracking_data

    root, _ = grouped
    summary = json.loads((root / "out" / "summary.json").read_text())
    data = load_tracking_data(load_job(root / "job.yaml"))
    lines = (root / "out" / "weights.csv").read_text().splitlines()[1:-1]
    by = {n: float(w) for n, w in (line.split(",") for line in lines)}
    w = np.array([by[n] for n in data.names])
    # weights.csv is rounded to its fixed decimals, so agreement is to that rounding.
    risk = ex_ante_risk(data.constituents, data.benchmark, w, periods_per_year=261)
    assert summary["ex_ante"]["tracking_error"] == pytest.approx(risk.tracking_error, rel=1e-6)
