"""The command line: parse, call one function in :mod:`trackfit.run`, turn errors into exit codes.

Exit codes: 0 success; 2 the job, the data or the command line needs fixing; 3 a fit could
not reach the required accuracy; 4 an internal error (a bug in trackfit: please report it).
Data (paths of files written) go to stdout; progress, warnings and errors go to stderr.
"""

from __future__ import annotations

import sys
import traceback
from datetime import date
from pathlib import Path

import click

from trackfit import __version__
from trackfit.errors import SolverError, TrackfitError
from trackfit.job import load_job
from trackfit.run import describe_plan, fit_job, plan_fit

EXIT_INPUT = 2
EXIT_SOLVER = 3
EXIT_INTERNAL = 4


class _Failure(click.ClickException):
    """A one-line error on stderr with our exit code, no traceback."""

    def __init__(self, message: str, code: int) -> None:
        super().__init__(message)
        self.exit_code = code


def _guarded(work):
    """Run ``work()``, converting every error into a :class:`_Failure` in this one place."""
    try:
        return work()
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
            self.fail(f"{value!r} is not a date; write it as YYYY-MM-DD, e.g. 2026-11-30", param, ctx)


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
    every key. Exit codes: 0 success, 2 fix the job, data or command line, 3 a fit failed to
    reach the required accuracy, 4 internal error.
    """


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
@click.option("--quiet", "-q", is_flag=True, help="Print no progress or warnings on stderr.")
def fit(job: Path, as_of: date | None, out_dir: Path | None, quiet: bool) -> None:
    """Fit the weights to hold at the as-of date and write weights, report and summary.

    Penalties are chosen by time-ordered cross-validation on the rows before the holdout, the
    models are judged on the holdout, and the held weights are refitted on the whole window.
    The paths of the files written are printed on stdout, one per line.
    """
    progress = None if quiet else (lambda msg: click.echo(msg, err=True))

    def work():
        spec = load_job(job)
        outcome, paths = fit_job(spec, as_of=as_of, out_dir=out_dir, progress=progress)
        if not quiet:
            for w in outcome.warnings:
                click.echo(f"warning: {w}", err=True)
        for p in paths:
            click.echo(str(p))

    _guarded(work)


@main.command()
@_JOB
@_AS_OF
def check(job: Path, as_of: date | None) -> None:
    """Validate the job and its data and say what would be fitted; write nothing."""

    def work():
        spec = load_job(job)
        for line in describe_plan(spec, plan_fit(spec, as_of)):
            click.echo(line)

    _guarded(work)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
