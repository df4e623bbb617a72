"""Start-up stays light: importing the command line loads no solver, compiler or plotting library.

`trackfit --help` and `trackfit check` should answer at once, so clarabel (constrained solves),
numba and the compiled lasso path (the first lasso path), matplotlib (figures) and
joblib/dask (parallel backtests) load only inside the command that needs them.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

#: Top-level packages that must not be loaded by ``import trackfit.cli``.
FORBIDDEN = ("clarabel", "numba", "matplotlib", "dask", "distributed", "joblib")
#: Our own modules that must not be loaded either (the compiled path imports numba).
FORBIDDEN_OWN = ("trackfit.core.solvers.lars_compiled",)


def _loaded_after(statement: str) -> set[str]:
    # A fresh interpreter, started in the checkout so that its code (not an installed copy) is
    # imported, reports every module it holds after the statement.
    code = f"{statement}\nimport sys\nprint('\\n'.join(sorted(sys.modules)))"
    done = subprocess.run(
        [sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True
    )
    return set(done.stdout.split())


def _offenders(loaded: set[str]) -> list[str]:
    top = {name.split(".")[0] for name in loaded}
    return sorted({n for n in FORBIDDEN if n in top} | {n for n in FORBIDDEN_OWN if n in loaded})


def test_import_cli_loads_no_heavy_library():
    loaded = _loaded_after("import trackfit.cli")
    assert "trackfit.cli" in loaded
    assert _offenders(loaded) == []


def test_modules_below_the_command_layer_load_no_heavy_library():
    # What the command modules import from the layers below, without the command modules
    # themselves (they are being restructured; this keeps the layers below honest meanwhile).
    loaded = _loaded_after(
        "import trackfit.core.constrained, trackfit.core.limited_fit, trackfit.core.cv, "
        "trackfit.core.solvers, trackfit.evaluate.holdout, trackfit.evaluate.backtest, "
        "trackfit.report, trackfit.report.backtest_files, trackfit.data.load, trackfit.commands.mandate, "
        "trackfit.evaluate.recipe, trackfit.outcomes.fit, trackfit.outcomes.backtest"
    )
    assert _offenders(loaded) == []
    # Cheap to avoid, so avoided: scipy loads on the first fit, pandas on the first file read.
    assert {"scipy", "pandas"}.isdisjoint({name.split(".")[0] for name in loaded})


def test_the_checker_sees_a_heavy_import():
    # The subprocess really reports what it loaded (a check that would pass on anything
    # proves nothing).
    assert _offenders(_loaded_after("import trackfit.core.solvers.lars_compiled")) == [
        "numba",
        "trackfit.core.solvers.lars_compiled",
    ]


def test_the_program_exits_with_the_command_code_and_flushes_its_output(tmp_path):
    # The entry point skips Python's teardown (os._exit): everything printed must still arrive
    # and the exit code must be the command's.
    demo = ROOT / "examples" / "lumen_bay" / "job.yaml"
    ok = subprocess.run(
        [sys.executable, "-m", "trackfit.cli", "check", str(demo)],
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert ok.returncode == 0, ok.stderr
    assert ok.stdout.startswith("job: Lumen Bay 60 tracker") and ok.stdout.endswith("\n")
    assert len(ok.stdout.splitlines()) > 10
    bad = subprocess.run(
        [sys.executable, "-m", "trackfit.cli", "fit", str(tmp_path / "no.yaml")],
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert bad.returncode == 2
    assert bad.stderr.count("\n") == 1 and "no.yaml" in bad.stderr
    usage = subprocess.run(
        [sys.executable, "-m", "trackfit.cli", "fit"],
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert usage.returncode == 2 and "Missing argument" in usage.stderr
