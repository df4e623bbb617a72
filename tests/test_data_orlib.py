"""A real price file through the data layer: OR-Library indtrack1 (31 stocks, 291 weekly levels).

The file holds no dates, so invented weekly dates are written beside its levels. Skipped when
the shared data folder is absent.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from orlib import orlib_path, read_orlib

from trackfit.core.models import ModelSpec
from trackfit.data import load_tracking_data
from trackfit.job import (
    ConstituentSource,
    CVSpec,
    DataSpec,
    GridSpec,
    Job,
    OutputSpec,
    SeriesRef,
    WindowSpec,
)

INDTRACK1 = orlib_path("indtrack1")

pytestmark = pytest.mark.skipif(INDTRACK1 is None, reason="shared/data/orlib-indtrack is absent")


def _write_wide(path, dates, header, columns):
    lines = [",".join(header)]
    for day, row in zip(dates, columns):
        lines.append(day + "," + ",".join(f"{v:.8f}" for v in row))
    path.write_text("\n".join(lines) + "\n")


def test_indtrack1_prices(tmp_path):
    index, stocks = read_orlib(INDTRACK1)
    assert index.shape == (291,) and stocks.shape == (291, 31)
    dates = list(pd.date_range("2001-01-05", periods=291, freq="W-FRI").strftime("%Y-%m-%d"))
    names = [f"stock_{i:02d}" for i in range(1, 32)]
    _write_wide(tmp_path / "index.csv", dates, ["date", "index"], index[:, None])
    _write_wide(tmp_path / "stocks.csv", dates, ["date", *names], stocks)
    job = Job(
        path=tmp_path / "job.yaml",
        name="indtrack1",
        benchmark=SeriesRef(tmp_path / "index.csv", None),
        constituents=(ConstituentSource(tmp_path / "stocks.csv", None),),
        risk_free=None,
        data=DataSpec(values="prices"),
        window=WindowSpec(),
        models=(ModelSpec("lasso", "lasso", (1.0,)),),
        hold="lasso",
        grid=GridSpec(),
        cv=CVSpec(),
        output=OutputSpec(directory=tmp_path / "out"),
    )
    data = load_tracking_data(job)
    assert len(data.dates) == 290
    assert data.constituents.shape == (290, 31) and data.names == tuple(names)
    assert (data.periods_per_year, data.periods_per_year_inferred) == (52, True)
    # the first two index levels of indtrack1.txt, as printed in the file
    assert data.benchmark[0] == pytest.approx(8713.53262793 / 8749.31759356 - 1, rel=1e-12)
    # reference: pandas DataFrame.pct_change on the same levels
    expected = pd.DataFrame(stocks).pct_change().to_numpy()[1:]
    np.testing.assert_allclose(data.constituents, expected, rtol=1e-12)
    assert data.warnings == ()
