"""Whole-command benchmark: `trackfit fit` and `trackfit backtest` as processes, against plain
scikit-learn scripts run the same way, in the same run, on the same invented files.

Measurement only. It writes seeded factor-model returns as wide CSV files, job files and two
reference scripts into a temporary folder, then times whole processes (interpreter start-up,
imports, CSV reading, fitting and writing all included) and prints the median of the repeats,
the ratio reference / trackfit and PASS/FAIL against the targets. It also prints the time of
`import trackfit.cli` and of reading a wide CSV file against `pandas.read_csv`.
See benchmarks/README.md.

Usage::

    python benchmarks/commands.py [--repeats N] [--quick] [--threads T] [--keep DIR]
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import textwrap
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

from factor_data import factor_returns  # noqa: E402

FIT = {"rows": 750, "names": 500}
BACKTEST = {"window": 750, "dates": 24, "step": 21, "names": 500}
CSV_LARGE = {"rows": 2520, "names": 2000}
QUICK = 4  # --quick divides the row and name counts by this (the 24 monthly dates stay)
TARGETS = {"fit": 3.0, "backtest": 8.0, "csv": 1.5}
THREAD_VARS = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")
FIRST_DATE = np.datetime64("2011-01-03")


# ---------------------------------------------------------------------------------------------
# Data and files


def business_days(n: int) -> np.ndarray:
    """``n`` weekdays from FIRST_DATE, as datetime64[D]."""
    return np.busday_offset(FIRST_DATE, np.arange(n), roll="forward")


def names(p: int) -> list[str]:
    return [f"lumen_{j:04d}" for j in range(p)]


def write_wide(path: Path, dates: np.ndarray, columns: list[str], values: np.ndarray) -> None:
    """A wide CSV file: ``date`` then one column per series, values with 8 significant digits."""
    cells = np.char.mod("%.8g", values)
    lines = [",".join(["date", *columns])]
    lines += [f"{d}," + ",".join(row) for d, row in zip(dates.astype(str), cells.tolist())]
    path.write_text("\n".join(lines) + "\n")


def write_case(folder: Path, rows: int, p: int, seed: int) -> tuple[np.ndarray, list[str]]:
    """``benchmark.csv`` and ``constituents.csv`` of invented returns in ``folder``."""
    folder.mkdir(parents=True, exist_ok=True)
    X, y = factor_returns(rows, p, seed)
    dates = business_days(rows)
    cols = names(p)
    write_wide(folder / "benchmark.csv", dates, ["lumen_bay"], y[:, None])
    write_wide(folder / "constituents.csv", dates, cols, X)
    return dates, cols


JOB = """\
name: Lumen Bay command benchmark
benchmark: {{file: benchmark.csv, column: lumen_bay}}
constituents:
  - file: constituents.csv
data: {{date_column: date, values: returns, missing: error}}
window: {{lookback: {lookback}, holdout: 0}}
models:
  lasso: {{}}
hold: lasso
cross_validation: {{folds: 5, gap: 0, scheme: expanding, rule: min_error}}
penalty_grid: {{count: 100, min_ratio: 0.001}}
output: {{directory: out, top_weights: 10}}
"""

BACKTEST_SECTION = "backtest: {{every: month_end, start: {start}, end: {end}, window: rolling}}\n"


def month_end_rows(dates: np.ndarray) -> np.ndarray:
    """Rows holding the last date of each month present in ``dates``."""
    months = dates.astype("datetime64[M]")
    return np.flatnonzero(np.r_[months[1:] != months[:-1], True])


# The reference scripts: what a careful analyst would write with pandas and scikit-learn.
REFERENCE_COMMON = '''\
import sys
import numpy as np
import pandas as pd
from sklearn.linear_model import LassoCV
from sklearn.model_selection import TimeSeriesSplit
from sklearn.preprocessing import StandardScaler


def read(folder):
    bench = pd.read_csv(f"{folder}/benchmark.csv", index_col="date", parse_dates=["date"])
    cons = pd.read_csv(f"{folder}/constituents.csv", index_col="date", parse_dates=["date"])
    both = bench.join(cons, how="inner").sort_index()
    if both.isna().any().any():
        raise SystemExit("missing values")
    return both.index, both["lumen_bay"].to_numpy(), both.drop(columns="lumen_bay")


def weights(X, y):
    """LassoCV on X and y scaled without centering; weights in the data's units."""
    sx = StandardScaler(with_mean=False).fit(X)
    sy = StandardScaler(with_mean=False).fit(y[:, None])
    # alphas=100: a grid of 100 penalties (the argument once called n_alphas)
    model = LassoCV(cv=TimeSeriesSplit(5), fit_intercept=False, alphas=100, eps=1e-3)
    model.fit(sx.transform(X), sy.transform(y[:, None]).ravel())
    return model.coef_ / sx.scale_ * sy.scale_[0]
'''

REFERENCE_FIT = (
    REFERENCE_COMMON
    + """

folder, lookback, out = sys.argv[1], int(sys.argv[2]), sys.argv[3]
dates, y, X = read(folder)
w = weights(X.to_numpy()[-lookback:], y[-lookback:])
pd.DataFrame({"name": X.columns, "weight": w}).to_csv(out, index=False, float_format="%.10f")
"""
)

REFERENCE_BACKTEST = (
    REFERENCE_COMMON
    + """

folder, lookback, rows_file, out = sys.argv[1], int(sys.argv[2]), sys.argv[3], sys.argv[4]
dates, y, X = read(folder)
values = X.to_numpy()
rows = [int(r) for r in open(rows_file).read().split()]
history = [(dates[r].date(), weights(values[r - lookback + 1 : r + 1], y[r - lookback + 1 : r + 1]))
           for r in rows]
table = pd.DataFrame([w for _, w in history], index=[d for d, _ in history], columns=X.columns)
table.to_csv(out, float_format="%.10f")
"""
)


# ---------------------------------------------------------------------------------------------
# Timing


def run(cmd: list[str]) -> float:
    """Wall time of one process, started from the checkout so that its code is imported."""
    t0 = time.perf_counter()
    done = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, check=False)
    elapsed = time.perf_counter() - t0
    if done.returncode != 0:
        raise SystemExit(f"failed ({done.returncode}): {' '.join(cmd)}\n{done.stderr[-2000:]}")
    return elapsed


def median_of(cmds: dict[str, list[str]], repeats: int) -> dict[str, float]:
    """Median wall time of each command, the commands taking turns so that drift in the
    machine's load falls on both sides alike."""
    times: dict[str, list[float]] = {k: [] for k in cmds}
    for _ in range(repeats):
        for key, cmd in cmds.items():
            times[key].append(run(cmd))
    return {k: statistics.median(v) for k, v in times.items()}


def import_time(repeats: int) -> tuple[float, float]:
    """Median seconds of ``import trackfit.cli`` in a fresh process, and of the whole
    ``python -m trackfit.cli --help`` process."""
    code = (
        "import time; t = time.perf_counter(); import trackfit.cli; print(time.perf_counter() - t)"
    )
    imports, helps = [], []
    for _ in range(max(repeats, 5)):
        done = subprocess.run(
            [sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True
        )
        imports.append(float(done.stdout))
        helps.append(run([sys.executable, "-m", "trackfit.cli", "--help"]))
    return statistics.median(imports), statistics.median(helps)


def csv_read_times(path: Path, repeats: int) -> tuple[float, float]:
    """Median seconds of trackfit's whole read of ``path`` (dates parsed and checked, every
    column's numbers checked) and of a plain ``pandas.read_csv(path)``, taking turns."""
    import pandas as pd

    from trackfit.data.csvfile import read_wide_csv

    def ours() -> None:
        table = read_wide_csv(path, date_column="date", date_format=None, label=path.name)
        for column in table.columns:
            table.numbers(column)

    ours(), pd.read_csv(path)  # warm the page cache and the imports
    mine, theirs = [], []
    for _ in range(max(repeats, 5)):
        t0 = time.perf_counter()
        ours()
        mine.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        pd.read_csv(path)
        theirs.append(time.perf_counter() - t0)
    return statistics.median(mine), statistics.median(theirs)


def weight_gap(trackfit_csv: Path, reference_csv: Path) -> float:
    """Largest absolute difference between the two fits' weights."""
    import pandas as pd

    ours = pd.read_csv(trackfit_csv).set_index("name")["weight"]
    ref = pd.read_csv(reference_csv).set_index("name")["weight"]
    return float((ours.reindex(ref.index) - ref).abs().max())


# ---------------------------------------------------------------------------------------------
# Main


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--repeats", type=int, default=3, help="runs of each process (median)")
    parser.add_argument("--quick", action="store_true", help=f"row and name counts / {QUICK}")
    parser.add_argument("--keep", type=Path, help="write the files here and keep them")
    parser.add_argument(
        "--threads", type=int, help="BLAS/OpenMP threads of every timed process (default: as set)"
    )
    args = parser.parse_args()
    if args.threads:
        for var in THREAD_VARS:  # inherited by every process started below
            os.environ[var] = str(args.threads)
    threads = ", ".join(f"{v}={os.environ.get(v, 'unset')}" for v in THREAD_VARS)
    div = QUICK if args.quick else 1
    py = sys.executable
    root = args.keep or Path(tempfile.mkdtemp(prefix="trackfit-commands-"))
    root.mkdir(parents=True, exist_ok=True)
    print(f"files in {root}; {args.repeats} repeats; {os.cpu_count()} cores; {threads}")
    print(f"load average at the start: {os.getloadavg()[0]:.2f}")

    # a) fit
    fit_dir = root / "fit"
    rows, p = FIT["rows"] // div, FIT["names"] // div
    write_case(fit_dir, rows, p, seed=11)
    (fit_dir / "job.yaml").write_text(JOB.format(lookback=rows))
    (root / "reference_fit.py").write_text(REFERENCE_FIT)

    # b) backtest: 24 month ends, each with a full rolling window behind it
    bt_dir = root / "backtest"
    window, p_bt = BACKTEST["window"] // div, BACKTEST["names"] // div
    total = window + BACKTEST["dates"] * BACKTEST["step"] + 10
    dates, _ = write_case(bt_dir, total, p_bt, seed=12)
    # Complete months only (the last month of data is cut short), each with a full window.
    ends = month_end_rows(dates)[:-1]
    ends = ends[ends >= window][: BACKTEST["dates"]]
    section = BACKTEST_SECTION.format(start=dates[ends[0]], end=dates[ends[-1]])
    (bt_dir / "job.yaml").write_text(JOB.format(lookback=window) + section)
    (root / "reference_backtest.py").write_text(REFERENCE_BACKTEST)

    tf = [py, "-m", "trackfit.cli"]
    quiet = ["-q", "--no-figures", "--no-warnings-exit"]
    cases = {
        "fit": {
            "trackfit": tf
            + ["fit", str(fit_dir / "job.yaml"), "--out", str(fit_dir / "out"), *quiet],
            "reference": [
                py,
                str(root / "reference_fit.py"),
                str(fit_dir),
                str(rows),
                str(fit_dir / "reference_weights.csv"),
            ],
        },
        "backtest": {
            "trackfit": tf
            + ["backtest", str(bt_dir / "job.yaml"), "--out", str(bt_dir / "out"), *quiet],
            "reference": [
                py,
                str(root / "reference_backtest.py"),
                str(bt_dir),
                str(window),
                str(bt_dir / "rows.txt"),
                str(bt_dir / "reference_weights.csv"),
            ],
        },
    }
    run(tf + ["check", str(fit_dir / "job.yaml")])
    run(tf + ["check", str(bt_dir / "job.yaml")])
    # One untimed run of each: compiles (or loads) numba's cache and warms the page cache.
    run(cases["backtest"]["trackfit"])
    summary = json.loads((bt_dir / "out" / "summary.json").read_text())
    rebalances = _rebalance_dates(summary)
    rows_of = {str(d): i for i, d in enumerate(dates)}
    (bt_dir / "rows.txt").write_text("\n".join(str(rows_of[d]) for d in rebalances) + "\n")
    for case in cases.values():
        for cmd in case.values():
            run(cmd)

    results = {name: median_of(case, args.repeats) for name, case in cases.items()}
    imp, helps = import_time(args.repeats)

    csv_files = [("constituents, fit case", fit_dir / "constituents.csv")]
    if not args.quick:
        big = root / "wide"
        write_case(big, CSV_LARGE["rows"], CSV_LARGE["names"], seed=13)
        csv_files.append(("constituents, 2,520 x 2,000", big / "constituents.csv"))
    csv_times = [(label, path, *csv_read_times(path, args.repeats)) for label, path in csv_files]

    print()
    print(f"fit: {rows} rows x {p} names, lasso, 5 expanding folds, 100-point grid, no holdout")
    print(
        f"backtest: {len(rebalances)} month ends from {rebalances[0]} to {rebalances[-1]}, "
        f"rolling {window}-row window, {p_bt} names, {total} rows"
    )
    print(
        f"largest weight difference, fit: "
        f"{weight_gap(fit_dir / 'out' / 'weights.csv', fit_dir / 'reference_weights.csv'):.2e}"
    )
    print()
    head = f"{'case':<10} {'trackfit s':>11} {'reference s':>12} {'ratio':>7} {'target':>7}  result"
    print(head)
    print("-" * len(head))
    for name, t in results.items():
        ratio = t["reference"] / t["trackfit"]
        verdict = "PASS" if ratio >= TARGETS[name] else "FAIL"
        print(
            f"{name:<10} {t['trackfit']:>11.3f} {t['reference']:>12.3f} {ratio:>6.2f}x "
            f"{'>= ' + format(TARGETS[name], 'g') + 'x':>7}  {verdict}"
        )
    print()
    print(f"load average at the end: {os.getloadavg()[0]:.2f}")
    print(f"import trackfit.cli: {imp:.3f} s; whole `python -m trackfit.cli --help`: {helps:.3f} s")
    for label, path, mine, theirs in csv_times:
        ratio = mine / theirs
        verdict = "PASS" if ratio <= TARGETS["csv"] else "FAIL"
        size = path.stat().st_size / 2**20
        print(
            f"CSV read ({label}, {size:.1f} MB): trackfit {mine:.3f} s, pandas.read_csv "
            f"{theirs:.3f} s, {ratio:.2f}x (target <= {TARGETS['csv']:g}x)  {verdict}"
        )
    if not args.keep:
        shutil.rmtree(root)


def _rebalance_dates(summary: dict) -> list[str]:
    """The rebalance dates trackfit used, from its summary.json."""
    found = summary.get("rebalances")
    if isinstance(found, list) and found and isinstance(found[0], dict) and "date" in found[0]:
        return [r["date"] for r in found]
    raise SystemExit(
        "summary.json has no list 'rebalances' of objects with a 'date'; keys: "
        + textwrap.shorten(", ".join(summary), 200)
    )


if __name__ == "__main__":
    main()
