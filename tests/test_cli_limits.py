"""Mandate limits from the job file through to weights.csv, report.md and summary.json."""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner

from trackfit.cli import EXIT_INPUT, EXIT_WARNINGS, main

NAMES = [f"firm_{c}" for c in "abcdefghijkl"]
# Current holdings within every limit below (harbour 45 %, tidal 35 %, kelp 20 %).
CURRENT = {"firm_a": 0.25, "firm_b": 0.2, "firm_e": 0.2, "firm_f": 0.15, "firm_i": 0.2}
SECTORS = {n: ("harbour" if i < 4 else "tidal" if i < 8 else "kelp") for i, n in enumerate(NAMES)}


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    """Weekly returns of 12 invented firms and a benchmark that holds 6 of them."""
    root = tmp_path_factory.mktemp("mandate")
    rng = np.random.default_rng(7)
    n = 160
    dates = np.arange(np.datetime64("2023-01-06"), np.datetime64("2023-01-06") + 7 * n, 7)
    market = 0.02 * rng.standard_normal(n)
    X = market[:, None] * rng.uniform(0.7, 1.3, 12) + 0.015 * rng.standard_normal((n, 12))
    truth = np.array([0.25, 0.2, 0, 0, 0.15, 0.15, 0, 0, 0.15, 0.1, 0, 0])
    y = X @ truth + 0.002 * rng.standard_normal(n)
    rows = ["date," + ",".join(NAMES)] + [
        f"{d}," + ",".join(f"{v:.8f}" for v in X[i]) for i, d in enumerate(dates)
    ]
    (root / "members.csv").write_text("\n".join(rows) + "\n")
    (root / "index.csv").write_text(
        "date,idx\n" + "".join(f"{d},{y[i]:.8f}\n" for i, d in enumerate(dates))
    )
    (root / "sectors.csv").write_text(
        "name,sector\n" + "".join(f"{k},{v}\n" for k, v in SECTORS.items())
    )
    current = CURRENT
    (root / "current.csv").write_text(
        "name,weight\n" + "".join(f"{k},{v}\n" for k, v in current.items())
    )
    return root


JOB = """\
benchmark: {file: index.csv, column: idx}
constituents: [{file: members.csv}]
window: {holdout: 30}
models: @MODELS@
hold: @HOLD@
penalty_grid: {count: 6}
cross_validation: {folds: 3}
limits:
  long_only: true
  budget: fully_invested
  weight: {max: 0.3}
  groups: {file: sectors.csv, group_column: sector, each: {max: 0.45}}
  @EXTRA@
holdings: @HOLDINGS@
"""


def _job(
    folder,
    name,
    *,
    models="{ridge: {}}",
    hold="ridge",
    extra="max_names: 5",
    holdings="{file: current.csv, turnover_penalty: 0.0005}",
):
    text = (
        JOB.replace("@MODELS@", models)
        .replace("@HOLD@", hold)
        .replace("@EXTRA@", extra)
        .replace("@HOLDINGS@", holdings)
    )
    path = folder / f"{name}.yaml"
    path.write_text(text)
    return path


def _fit(job, out):
    return CliRunner().invoke(main, ["fit", str(job), "--out", str(out)])


def _weights(out):
    lines = (out / "weights.csv").read_text().splitlines()[1:-1]
    return {line.split(",")[0]: float(line.split(",")[1]) for line in lines}


def test_every_limit_holds_in_the_weights_file_and_is_reported(folder, tmp_path):
    result = _fit(_job(folder, "capped"), tmp_path)
    assert result.exit_code == 0, result.stderr
    w = _weights(tmp_path)
    values = np.array(list(w.values()))
    assert abs(values.sum() - 1.0) <= 1e-9  # fully invested (10 decimals written)
    assert values.min() >= 0.0 and values.max() <= 0.3 + 1e-9
    assert np.count_nonzero(values) <= 5
    for sector in set(SECTORS.values()):
        assert sum(w[n] for n in NAMES if SECTORS[n] == sector) <= 0.45 + 1e-9
    report = (tmp_path / "report.md").read_text()
    for heading in ("## Mandate limits", "### Limit statuses", "### Name cap", "### Trades"):
        assert heading in report
    summary = json.loads((tmp_path / "summary.json").read_text())
    assert summary["limits"] and summary["trades"]


def test_a_turnover_cap_of_zero_keeps_the_current_holdings(folder, tmp_path):
    job = _job(
        folder, "frozen", extra="max_names: 12", holdings="{file: current.csv, max_turnover: 0.0}"
    )
    result = _fit(job, tmp_path)
    assert result.exit_code == 0, result.stderr
    w = _weights(tmp_path)
    assert w == {n: CURRENT.get(n, 0.0) for n in NAMES}


def test_l1_under_long_only_and_fully_invested_is_warned(folder, tmp_path):
    job = _job(folder, "l1", models="{lasso: {}}", hold="lasso", extra="max_names: 12")
    result = _fit(job, tmp_path)
    assert result.exit_code == EXIT_WARNINGS, result.stderr  # written, with a warning
    assert "an L1 penalty cannot make the portfolio sparse" in result.stderr
    assert "limits.max_names" in result.stderr
    assert "an L1 penalty cannot make the portfolio sparse" in (tmp_path / "report.md").read_text()


def test_conflicting_limits_fail_before_fitting_naming_them(folder, tmp_path):
    job = _job(folder, "conflict", extra="max_names: 2")  # 2 names x 30 % < 100 %
    result = _fit(job, tmp_path)
    assert result.exit_code == EXIT_INPUT
    assert "the mandate limits conflict" in result.stderr
    assert "max_names" in result.stderr or "2" in result.stderr
    assert not (tmp_path / "weights.csv").exists()


def test_cash_range_name_overrides_and_minimum_position(folder, tmp_path):
    job = folder / "ranged.yaml"
    job.write_text(
        "benchmark: {file: index.csv, column: idx}\n"
        "constituents: [{file: members.csv}]\n"
        "window: {holdout: 30}\n"
        "models: {lasso: {}}\n"
        "penalty_grid: {count: 6}\n"
        "cross_validation: {folds: 3}\n"
        "limits:\n"
        "  budget: {min: 0.9, max: 0.95}\n"
        "  weight: {min: -0.05, max: 0.3}\n"
        "  names: {firm_a: {max: 0.1}}\n"
        "  min_position: 0.03\n"
    )
    result = _fit(job, tmp_path)
    assert result.exit_code == 0, result.stderr
    values = np.array(list(_weights(tmp_path).values()))
    assert 0.9 - 1e-9 <= values.sum() <= 0.95 + 1e-9
    assert values.min() >= -0.05 - 1e-9 and values.max() <= 0.3 + 1e-9
    assert _weights(tmp_path)["firm_a"] <= 0.1 + 1e-9
    held = np.abs(values[values != 0])
    assert held.min() >= 0.03 - 1e-9
    summary = json.loads((tmp_path / "summary.json").read_text())
    kinds = {s["kind"] for s in summary["limits"]["statuses"]}
    assert {"budget_min", "budget_max", "lower", "upper", "min_position"} <= kinds
