"""The command line: parse, call one function of :mod:`trackfit.commands`, turn errors into exit codes.

Exit codes: 0 success; 1 success, but the weights were produced with warnings (printed on
stderr unless --quiet, and kept in the report), or for ``check`` fit would warn; 2 the job, the data or the command line needs
fixing; 3 a fit could not reach the required accuracy; 4 an internal error (a bug in trackfit:
please report it); 5 another run holds the lock on the output folder. Cron can alert on any
non-zero code. Data (paths of files written) go to stdout; progress, warnings and errors go to
stderr. No command ever prompts.
"""

from __future__ import annotations

import sys
import traceback
from datetime import date
from pathlib import Path

import click
import numpy as np

from trackfit import __version__
from trackfit.commands.backtest import BACKENDS, run_backtest_command
from trackfit.commands.check import run_check
from trackfit.commands.diff import FORMATS, run_diff
from trackfit.commands.fit import run_fit
from trackfit.commands.lock import OutputLocked
from trackfit.commands.output import LAYOUTS, Written
from trackfit.errors import InfeasibleError, SolverError, TrackfitError

EXIT_WARNINGS = 1
EXIT_INPUT = 2
EXIT_SOLVER = 3
EXIT_INTERNAL = 4
EXIT_LOCKED = 5


class _Failure(click.ClickException):
    """A one-line error on stderr with our exit code, no traceback."""

    def __init__(self, message: str, code: int) -> None:
        super().__init__(message)
        self.exit_code = code


def _guarded(work):
    """Run ``work()``, converting every error into a :class:`_Failure` in this one place."""
    try:
        return work()
    except OutputLocked as exc:
        raise _Failure(str(exc), EXIT_LOCKED) from None
    except InfeasibleError as exc:  # limits that cannot all hold are the job's to fix
        raise _Failure(f"the mandate limits cannot all hold: {exc}", EXIT_INPUT) from None
    except SolverError as exc:
        raise _Failure(str(exc), EXIT_SOLVER) from None
    except TrackfitError as exc:
        raise _Failure(str(exc), EXIT_INPUT) from None
    except click.ClickException:
        raise
    except Exception:  # a bug: say so, keep the detail for the report
        detail = traceback.format_exc(limit=-3).strip().replace("\n", " | ")
        raise _Failure(
            f"internal error in trackfit {__version__}; please report it with the job file. "
            f"Detail: {detail}",
            EXIT_INTERNAL,
        ) from None


class _Date(click.ParamType):
    name = "YYYY-MM-DD"

    def convert(self, value, param, ctx):
        if isinstance(value, date):
            return value
        try:
            return date.fromisoformat(value)
        except ValueError:
            self.fail(
                f"{value!r} is not a date; write it as YYYY-MM-DD, e.g. 2026-11-30", param, ctx
            )


_JOB = click.argument("job", type=click.Path(dir_okay=False, path_type=Path))
_AS_OF = click.option(
    "--as-of",
    type=_Date(),
    default=None,
    help="Rebalance date: the window ends at the last date on or before it. "
    "Default: the last date common to all inputs.",
)


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="trackfit")
def main() -> None:
    """Build index-tracking weights from return histories, one rebalance at a time.

    A YAML job file names the benchmark, the constituents and how to fit; see the README for
    every key. Exit codes: 0 success, 1 success with warnings, 2 fix the job, data or command
    line, 3 a fit failed to reach the required accuracy, 4 internal error, 5 another run holds
    the output folder's lock.
    """


_QUIET = click.option(
    "--quiet", "-q", is_flag=True, help="Print no progress or warnings on stderr."
)
_LAYOUT = click.option(
    "--layout",
    type=click.Choice(LAYOUTS),
    default="fixed",
    show_default=True,
    help="fixed: overwrite the files in the output folder; dated: write into "
    "<output folder>/<as-of date>/.",
)


def _say(quiet: bool, only_on_terminal: bool = False):
    """Progress on stderr, or None when quiet (or when stderr is not a terminal, if asked)."""
    if quiet or (only_on_terminal and not sys.stderr.isatty()):
        return None
    return lambda msg: click.echo(msg, err=True)


_FIGURES = click.option(
    "--figures/--no-figures",
    default=True,
    show_default=True,
    help="Draw PNG figures beside report.md and embed them in it (needs matplotlib: "
    "pip install 'trackfit[plots]'; without it the report says they were skipped).",
)

#: ``fit`` and ``backtest`` exit 1 when they wrote their files but with warnings, so that cron
#: can alert on any non-zero code; --no-warnings-exit turns that into 0.
FIT_WARNINGS_EXIT = True


def _warnings_exit(default: bool, when: str = "the files were written but with warnings"):
    return click.option(
        "--warnings-exit/--no-warnings-exit",
        default=default,
        show_default=True,
        help=f"Exit with code 1 (instead of 0) when {when}, so cron can alert on any non-zero "
        "code.",
    )


def _finish(written: Written, quiet: bool, warnings_exit: bool) -> int:
    """Print the warnings (unless quiet) and the paths; the exit code of a successful run."""
    if not quiet:
        for w in written.warnings:
            click.echo(f"warning: {w}", err=True)
    for p in written.paths:
        click.echo(str(p))
    return EXIT_WARNINGS if written.warnings and warnings_exit else 0


def _notify(quiet: bool):
    """Where a stale lock taken over is said: stderr, unless quiet."""
    return None if quiet else (lambda msg: click.echo(f"warning: {msg}", err=True))


@main.command()
@_JOB
@_AS_OF
@click.option(
    "--out",
    "out_dir",
    type=click.Path(file_okay=False, path_type=Path),
    default=None,
    help="Folder for weights.csv, report.md and summary.json. Default: the job's output.directory.",
)
@_QUIET
@_LAYOUT
@_warnings_exit(FIT_WARNINGS_EXIT)
@_FIGURES
@click.pass_context
def fit(
    ctx,
    job: Path,
    as_of: date | None,
    out_dir: Path | None,
    quiet: bool,
    layout: str,
    warnings_exit: bool,
    figures: bool,
) -> None:
    """Fit the weights to hold at the as-of date and write weights, report and summary.

    Penalties are chosen by time-ordered cross-validation on the rows before the holdout, the
    models are judged on the holdout, and the held weights are refitted on the whole window.
    The paths of the files written are printed on stdout, one per line. Exit code 1 means the
    files were written but with warnings (--no-warnings-exit makes that 0).
    """

    def work():
        written = run_fit(
            job,
            as_of=as_of,
            out_dir=out_dir,
            layout=layout,
            figures=figures,
            progress=_say(quiet),
            notify=_notify(quiet),
        )
        return _finish(written, quiet, warnings_exit)

    ctx.exit(_guarded(work))


@main.command()
@_JOB
@_AS_OF
@click.option(
    "--out",
    "out_dir",
    type=click.Path(file_okay=False, path_type=Path),
    default=None,
    help="Folder for weights_history.csv, returns.csv, report.md and summary.json. "
    "Default: <output.directory>/backtest.",
)
@click.option(
    "--jobs",
    "-j",
    "n_jobs",
    type=click.IntRange(min=1),
    default=1,
    show_default=True,
    help="Rebalances fitted in parallel (when no turnover limit links them); the results do "
    "not depend on it.",
)
@click.option(
    "--backend",
    type=click.Choice(BACKENDS),
    default="loky",
    show_default=True,
    help="Parallel backend: loky (local processes) or dask (dask.distributed; install "
    "trackfit[dask]).",
)
@click.option(
    "--scheduler",
    default=None,
    metavar="ADDRESS",
    help="With --backend dask: the scheduler to use, such as tcp://127.0.0.1:8786. "
    "Default: a local cluster of --jobs workers.",
)
@_QUIET
@_LAYOUT
@_warnings_exit(True)
@_FIGURES
@click.pass_context
def backtest(
    ctx,
    job: Path,
    as_of: date | None,
    out_dir: Path | None,
    n_jobs: int,
    backend: str,
    scheduler: str | None,
    quiet: bool,
    layout: str,
    warnings_exit: bool,
    figures: bool,
) -> None:
    """Walk the job forward: refit at every rebalance date, hold, pay costs, measure.

    Each rebalance fits the held model with the job's cross-validation on data up to that date
    only, with no holdout; the returns after it are the test. The schedule comes from the
    job's backtest section. The paths of the files written are printed on stdout. Progress
    goes to stderr when it is a terminal.
    """

    def work():
        written = run_backtest_command(
            job,
            as_of=as_of,
            out_dir=out_dir,
            layout=layout,
            n_jobs=n_jobs,
            backend=backend,
            scheduler=scheduler,
            figures=figures,
            progress=_say(quiet, only_on_terminal=True),
            notify=_notify(quiet),
        )
        return _finish(written, quiet, warnings_exit)

    ctx.exit(_guarded(work))


@main.command()
@click.argument("old", type=click.Path(dir_okay=False, path_type=Path))
@click.argument("new", type=click.Path(dir_okay=False, path_type=Path))
@click.option(
    "--format",
    "fmt",
    type=click.Choice(FORMATS),
    default="text",
    show_default=True,
    help="text for a terminal, csv or json for scripts.",
)
@click.option(
    "--out",
    "out_file",
    type=click.Path(dir_okay=False, path_type=Path),
    default=None,
    help="Write to this file (atomically) and print its path, instead of printing the diff.",
)
def diff(old: Path, new: Path, fmt: str, out_file: Path | None) -> None:
    """Compare two weight files: names added, dropped and changed, and the one-way turnover.

    OLD and NEW are weights.csv files written by trackfit fit, or any name,weight CSV. Names
    are listed by the size of their change, largest first.
    """

    def work():
        text = run_diff(old, new, fmt=fmt, out_file=out_file)
        click.echo(text if out_file is None else f"{out_file}\n", nl=False)

    _guarded(work)


@main.command()
@_JOB
@_AS_OF
@_warnings_exit(True, when="fit would warn")
@click.pass_context
def check(ctx, job: Path, as_of: date | None, warnings_exit: bool) -> None:
    """Validate the job and its data and say what would be fitted; write nothing.

    The plan, the data screen's findings and the warnings go to stdout. Exit code 1 means
    fit would warn (a data, limit or design warning, or a finding that warns or leaves dates
    out; --no-warnings-exit makes that 0); 2 means the job or data need fixing, as for fit.
    """

    def work():
        checked = run_check(job, as_of=as_of)
        for line in checked.lines:
            click.echo(line)
        return EXIT_WARNINGS if checked.warned and warnings_exit else 0

    ctx.exit(_guarded(work))


def _no_huge_pages() -> None:
    """Ask numpy not to request transparent huge pages for large arrays in this process.

    Where the kernel compacts memory on demand for such requests (``defrag: madvise``, a common
    default), the first write to a fresh array measured five times slower with them on the
    benchmark machine (300 MB: 0.52 s against 0.11 s) and gave no huge page; a backtest writes
    its shared row blocks once, so it lost 0.45 s of 4 s. Only the command-line process is
    changed: a program importing trackfit keeps its own setting. Results never depend on it.
    """
    core = getattr(np, "_core", None) or getattr(np, "core", None)
    setter = getattr(getattr(core, "multiarray", None), "_set_madvise_hugepage", None)
    if setter is not None:
        setter(False)


def entry() -> None:  # pragma: no cover - exercised by the subprocess tests
    """The ``trackfit`` program: run one command, then leave without tearing Python down.

    Finalizing the modules a fit loads (numba, pandas, scipy) took 0.19 s of a 1.1 s
    ``trackfit fit``; the exit handlers still run (process pools shut down, as at any exit),
    the streams are flushed and every file was closed and renamed into place before, so only
    that teardown is skipped.
    """
    import atexit
    import os

    _no_huge_pages()
    try:
        main()
        code = 0
    except SystemExit as exc:
        code = exc.code
    if code is None:
        code = 0
    elif not isinstance(code, int):  # a message: print it as sys.exit would
        print(code, file=sys.stderr)
        code = 1
    atexit._run_exitfuncs()
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):  # a closed pipe: nothing more can be said
            pass
    os._exit(code)


if __name__ == "__main__":  # pragma: no cover
    entry()
