"""`trackfit fit` through CliRunner on the same invented data written wide, long and as Parquet:
the same weights.csv and report.md bytes, but for the lines naming the files."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from trackfit.cli import EXIT_INPUT, main

NAMES = [f"isle_{k}" for k in "abcdefgh"]
JOB = """\
benchmark: {{file: {bench}, column: bay_index{bench_keys}}}
constituents:
  - {{file: {members}{member_keys}}}
risk_free: {{file: {rate}, column: rate, unit: percent, quote: annual{rate_keys}}}
data: {{values: returns, missing: {missing}}}
window: {{holdout: 30}}
models: {{lasso: {{}}, ridge: {{}}}}
hold: lasso
cross_validation: {{folds: 4}}
"""


@pytest.fixture(scope="module")
def frames():
    """Invented returns whose benchmark is a known mix of the constituents, plus a rate."""
    rng = np.random.default_rng(11)
    n = 160
    dates = pd.bdate_range("2020-06-01", periods=n).strftime("%Y-%m-%d")
    x = rng.normal(0, 0.01, (n, len(NAMES)))
    y = x @ np.array([0.3, 0.25, 0.2, 0.15, 0.1, 0, 0, 0]) + rng.normal(0, 0.001, n)
    members = pd.DataFrame(x.round(8), columns=NAMES)
    members.insert(0, "date", dates)
    bench = pd.DataFrame({"date": dates, "bay_index": y.round(8)})
    rate = pd.DataFrame({"date": dates, "rate": np.linspace(1.0, 1.5, n).round(6)})
    return {"bench": bench, "members": members, "rate": rate}


def _long(frame):
    long = frame.melt(id_vars="date", var_name="name", value_name="value")
    return long.iloc[np.lexsort((np.arange(len(long)) // len(frame), long["date"]))]


def _write(frame, folder, stem, layout, fmt):
    if layout == "long":
        frame = _long(frame)
    if fmt == "parquet":
        # the numbers a CSV read gives, so both formats hold the same bits
        csv = folder / f"{stem}.tmp.csv"
        frame.to_csv(csv, index=False, float_format="%.10f", lineterminator="\n")
        frame = pd.read_csv(csv, dtype={"date": str})
        csv.unlink()
        frame.to_parquet(folder / f"{stem}.parquet", index=False)
        return f"{stem}.parquet"
    frame.to_csv(folder / f"{stem}.csv", index=False, float_format="%.10f", lineterminator="\n")
    return f"{stem}.csv"


def _fit(tmp_path, frames, layouts, missing="error", drop=None):
    """Write each source as layouts[source] = (layout, format); fit; return the two files."""
    folder = tmp_path / "_".join("-".join(v) for v in layouts.values())
    folder.mkdir()
    names, keys = {}, {}
    for stem, frame in frames.items():
        layout, fmt = layouts[stem]
        if drop is not None and stem == "members" and layout == "long":
            names[stem] = _write_long_dropped(frame, folder, fmt, drop)  # absent rows ...
        else:
            if drop is not None and stem == "members":  # ... or empty cells
                frame = frame.copy()
                for row, col in drop:
                    frame.loc[row, NAMES[col]] = np.nan
            names[stem] = _write(frame, folder, stem, layout, fmt)
        keys[stem] = ", layout: long" if layout == "long" else ""
    job = folder / "job.yaml"
    job.write_text(
        JOB.format(
            bench=names["bench"],
            members=names["members"],
            rate=names["rate"],
            bench_keys=keys["bench"],
            member_keys=keys["members"],
            rate_keys=keys["rate"],
            missing=missing,
        )
    )
    out = folder / "out"
    result = CliRunner().invoke(main, ["fit", str(job), "--out", str(out), "--no-figures", "-q"])
    assert result.exit_code in (0, 1), result.output
    report = (out / "report.md").read_text()
    # the lines naming the files are the one expected difference
    report = re.sub(r"\((bench|members|rate)\.(csv|parquet)\)", r"(\1.*)", report)
    return (out / "weights.csv").read_bytes(), report


def _write_long_dropped(frame, folder, fmt, drop):
    long = _long(frame).reset_index(drop=True)
    rows = [row * len(NAMES) + col for row, col in drop]  # date-major order, names in order
    return _write_rows(long.drop(index=rows), folder, fmt)


def _write_rows(long, folder, fmt):
    if fmt == "parquet":
        csv = folder / "members.tmp.csv"
        long.to_csv(csv, index=False, float_format="%.10f", lineterminator="\n")
        long = pd.read_csv(csv, dtype={"date": str})
        csv.unlink()
        long.to_parquet(folder / "members.parquet", index=False)
        return "members.parquet"
    long.to_csv(folder / "members.csv", index=False, float_format="%.10f", lineterminator="\n")
    return "members.csv"


WIDE = {"bench": ("wide", "csv"), "members": ("wide", "csv"), "rate": ("wide", "csv")}
CSV_VARIANTS = [
    {"bench": ("long", "csv"), "members": ("long", "csv"), "rate": ("long", "csv")},
    {"bench": ("wide", "csv"), "members": ("long", "csv"), "rate": ("wide", "csv")},  # mixed
]
PARQUET_VARIANTS = [
    {"bench": ("long", "parquet"), "members": ("long", "parquet"), "rate": ("long", "parquet")},
    {"bench": ("wide", "parquet"), "members": ("wide", "parquet"), "rate": ("wide", "parquet")},
    {"bench": ("wide", "csv"), "members": ("long", "parquet"), "rate": ("long", "csv")},  # mixed
]


@pytest.fixture(scope="module")
def wide_files(frames, tmp_path_factory):
    return _fit(tmp_path_factory.mktemp("wide"), frames, WIDE)


@pytest.mark.parametrize("layouts", CSV_VARIANTS)
def test_long_csv_fit_is_byte_identical_to_wide(tmp_path, frames, wide_files, layouts):
    weights, report = _fit(tmp_path, frames, layouts)
    assert weights == wide_files[0]
    assert report == wide_files[1]


@pytest.mark.parametrize("layouts", PARQUET_VARIANTS)
def test_parquet_fit_is_byte_identical_to_wide(tmp_path, frames, wide_files, layouts):
    pytest.importorskip("pyarrow")
    weights, report = _fit(tmp_path, frames, layouts)
    assert weights == wide_files[0]
    assert report == wide_files[1]


@pytest.mark.parametrize("fmt", ["csv", "parquet"])
def test_absent_long_rows_are_dropped_like_empty_wide_cells(tmp_path, frames, fmt):
    if fmt == "parquet":
        pytest.importorskip("pyarrow")
    drop = [(5, 1), (40, 3)]
    wide = _fit(tmp_path, frames, WIDE, missing="drop_dates", drop=drop)
    layouts = {**WIDE, "members": ("long", fmt)}
    long = _fit(tmp_path, frames, layouts, missing="drop_dates", drop=drop)
    assert long == wide
    assert "missing" in wide[1]


def test_a_long_source_error_exits_with_the_input_code(tmp_path):
    (tmp_path / "b.csv").write_text("date,bay\n2021-01-04,0.1\n")
    (tmp_path / "m.csv").write_text("date,name,value\n2021-01-04,a,0.1\n2021-01-04,a,0.2\n")
    job = tmp_path / "job.yaml"
    job.write_text("benchmark: {file: b.csv}\nconstituents: {file: m.csv, layout: long}\n")
    result = CliRunner().invoke(main, ["fit", str(job), "--out", str(tmp_path / "o")])
    assert result.exit_code == EXIT_INPUT
    assert "m.csv: date 2021-01-04 and name 'a' appear on both line 2 and line 3" in result.stderr
    assert not (tmp_path / "o").exists()
