"""Tests for trackfit.data.holdings: the current holdings file -> CurrentHoldings."""

from __future__ import annotations

import re
from datetime import date
from pathlib import Path

import numpy as np
import pytest

from trackfit.core.models import ModelSpec
from trackfit.core.results import FittedWeights, Scaling
from trackfit.data.dataset import TrackingData
from trackfit.data.holdings import CurrentHoldings, read_holdings
from trackfit.errors import DataError
from trackfit.evaluate.holdout import HoldoutStudy, ModelOutcome
from trackfit.evaluate.metrics import tracking_metrics
from trackfit.job import CVSpec, DataSpec, GridSpec, Job, OutputSpec, SeriesRef, WindowSpec
from trackfit.outcomes.fit import FitOutcome
from trackfit.report.weights_csv import render_weights_csv

# Invented names; one needs CSV quoting, one is not ASCII.
NAMES = ("kestrel_minerals", "Harbour Gas, Preferred", "tidewater_power", "Île Reef Bank")


def _write(tmp_path: Path, text: str, name: str = "weights.csv") -> Path:
    path = tmp_path / name
    path.write_bytes(text.encode("utf-8"))
    return path


def _outcome(root: Path, weights: np.ndarray) -> FitOutcome:
    """A one-model FitOutcome built by hand, enough for the weights.csv renderer."""
    rng = np.random.default_rng(11)
    n = 12
    X = rng.normal(0.0, 0.02, (n, len(NAMES)))
    y = X @ weights + rng.normal(0.0, 0.001, n)
    dates = np.arange(np.datetime64("2026-11-17"), np.datetime64("2026-11-29"))
    fit = FittedWeights(
        weights=weights,
        cash=1.0 - float(weights.sum()),
        coef_std=weights,
        alpha=0.01,
        l1_ratio=1.0,
        kkt_residual=1e-12,
        scaling=Scaling(np.ones(len(NAMES)), 1.0, np.ones(len(NAMES), bool)),
    )
    metrics = tracking_metrics(X @ weights, y, weights, 252)
    model = ModelOutcome("lasso", "lasso", None, fit, metrics, None, fit)
    job = Job(
        path=root / "job.yaml",
        name="Lumen test",
        benchmark=SeriesRef(root / "i.csv", "lb"),
        constituents=(),
        risk_free=None,
        data=DataSpec(),
        window=WindowSpec(),
        models=(ModelSpec("lasso", "lasso", (1.0,)),),
        hold="lasso",
        grid=GridSpec(),
        cv=CVSpec(),
        output=OutputSpec(root / "out"),
    )
    data = TrackingData(
        dates=dates,
        benchmark=y,
        constituents=X,
        names=NAMES,
        benchmark_name="lb",
        risk_free=None,
        periods_per_year=252,
        periods_per_year_inferred=False,
        steps=(),
        warnings=(),
    )
    study = HoldoutStudy(n_train=n, n_holdout=0, models=(model,), warnings=())
    return FitOutcome(
        job=job, data=data, as_of=date(2026, 11, 28), study=study, held="lasso", warnings=()
    )


def test_reads_the_weights_csv_trackfit_writes(tmp_path):
    weights = np.array([0.4125, 0.0, -0.0375, 0.123456789012])
    text = render_weights_csv(_outcome(tmp_path, weights))
    assert '"Harbour Gas, Preferred"' in text  # the case where CSV quoting matters
    held = read_holdings(_write(tmp_path, text))
    assert isinstance(held, CurrentHoldings)
    assert held.names == NAMES
    # weights.csv keeps ten decimals
    np.testing.assert_allclose(held.weights, weights, rtol=0, atol=5e-11)
    assert held.weights.dtype == np.float64 and held.weights.shape == (4,)
    assert held.cash == pytest.approx(1.0 - weights.sum(), abs=5e-11)


@pytest.mark.parametrize(
    "text, names, weights, cash",
    [
        ("ticker,held\na,0.5\nb,0.25\n", ("a", "b"), [0.5, 0.25], None),
        ("name,weight\r\na,0.5\r\n\r\nb,-0.1\r\n(cash),0.6\r\n", ("a", "b"), [0.5, -0.1], 0.6),
        ("\ufeffname , weight\n  a  , 1.0e-2 \n,\nb,.5\n", ("a", "b"), [0.01, 0.5], None),
        ("name,weight\n(cash),1\n", (), [], 1.0),
        ("name,weight\n(cash),0.2\na,0.8\n", ("a",), [0.8], 0.2),
        ("name,weight\na,2.5\nb,-2.4\n", ("a", "b"), [2.5, -2.4], None),  # gross 4.9: allowed
        ('name,weight\n"a ""x""",0\n', ('a "x"',), [0.0], None),
    ],
)
def test_any_two_column_file_with_a_header(tmp_path, text, names, weights, cash):
    held = read_holdings(_write(tmp_path, text))
    assert held.names == names
    np.testing.assert_array_equal(held.weights, np.array(weights, dtype=float))
    assert held.cash == cash


def test_label_names_the_file_in_messages(tmp_path):
    path = _write(tmp_path, "name,weight\na,x\n")
    with pytest.raises(DataError, match=r"^current/weights\.csv: line 2: "):
        read_holdings(path, label="current/weights.csv")
    with pytest.raises(DataError, match="^" + re.escape(f"{path}: line 2: ")):
        read_holdings(path)


# (file bytes, expected message after "<path>: ")
ERRORS = [
    (
        b"",
        "the holdings file is empty; expected a header line (such as name,weight), then one "
        "line per name held",
    ),
    (b"\n  \n", "the holdings file is empty"),
    (
        b"name,weight\n",
        "the holdings file has a header but no rows; add one line per name held "
        "(a portfolio all in cash is one row: (cash),1)",
    ),
    (
        b"name\na\n",
        "line 1 has 1 field(s); a holdings file has exactly two columns: the name, then its weight",
    ),
    (b"name,weight,sector\na,0.1,x\n", "line 1 has 3 field(s); a holdings file has exactly two"),
    (
        b"name,weight\na,0.1\nb,0.2,extra\n",
        "line 3 has 3 field(s); a holdings file has exactly two columns",
    ),
    (
        b"a,0.5\nb,0.5\n",
        "line 1: the first line (a,0.5) looks like data, not a header; add a "
        "header line such as name,weight",
    ),
    (b"name,weight\n\na,0.1\n ,0.2\n", "line 4: the name is blank; give every row a name"),
    (
        b"name,weight\na,0.1\nb,0.2\na,0.1\n",
        "'a' appears twice (lines 2 and 4); give each name one row",
    ),
    (b"name,weight\n(cash),0.1\n(cash),0.2\n", "'(cash)' appears twice (lines 2 and 3)"),
    (
        b"name,weight\na,\n",
        "line 2: the weight of 'a' is missing; write 0 for a name not held, or remove the row",
    ),
    (
        b"name,weight\na,five\n",
        "line 2: the weight of 'a' is 'five', not a number; write a plain "
        "number with '.' as the decimal separator",
    ),
    (b"name,weight\na,0,05\n", "line 2 has 3 field(s)"),
    (
        b"name,weight\na,5%\n",
        "line 2: the weight of 'a' is '5%', not a number (weights are "
        "decimals: write 0.05 for 5 %)",
    ),
    (b"name,weight\na,1_000\n", "line 2: the weight of 'a' is '1_000', not a number"),
    (
        b"name,weight\na,nan\n",
        "line 2: the weight of 'a' is 'nan', not a finite number; write the weight held",
    ),
    (
        b"name,weight\na,0.1\nb,-Infinity\n",
        "line 3: the weight of 'b' is '-Infinity', not a finite number",
    ),
    (b"name,weight\na,1e999\n", "line 2: the weight of 'a' is '1e999', not a finite number"),
    (
        b"name,weight\na,45.5\nb,50\n(cash),4.5\n",
        "the weights add up to 95.5 in absolute value; "
        "weights must be decimals (0.05 = 5 %), and these look like percentages; divide them by "
        "100",
    ),
    (b"name,weight\na,3\nb,-3\n", "the weights add up to 6 in absolute value"),
    (b"name,weight\na,caf\xe9\n", "not UTF-8 text"),
    (
        b'name,weight\n"a,0.1\n',
        "line 2: not well-formed CSV (unexpected end of data); check the quotes on that line",
    ),
]


@pytest.mark.parametrize("data, message", ERRORS, ids=[f"{i:03d}" for i in range(len(ERRORS))])
def test_validation_messages(tmp_path, data, message):
    path = tmp_path / "weights.csv"
    path.write_bytes(data)
    with pytest.raises(DataError, match=re.escape(f"{path}: {message}")):
        read_holdings(path)


def test_missing_file_and_folder(tmp_path):
    path = tmp_path / "nope.csv"
    with pytest.raises(
        DataError,
        match=re.escape(
            f"{path}: the holdings file does not exist ({path}); check 'holdings.file' in the job "
            "file (relative paths start from the job file's folder)"
        ),
    ):
        read_holdings(path)
    with pytest.raises(
        DataError, match=re.escape(f"{tmp_path}: the holdings file is a folder, not a file")
    ):
        read_holdings(tmp_path)
