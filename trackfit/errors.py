"""The errors trackfit raises for problems a user can fix.

Every message says what was wrong, where (file, column, key path, date) and what to do.
The command line turns these into a one-line message and an exit code in one place
(:mod:`trackfit.cli`); anything else that escapes is a bug.
"""

from __future__ import annotations


class TrackfitError(Exception):
    """Base class: a problem with the user's input or with a fit, explained in the message."""


class JobError(TrackfitError):
    """The job file is missing, unreadable, or has a bad or unknown key."""


class DataError(TrackfitError):
    """A data file or series is missing, malformed, misaligned or unusable."""


class SolverError(TrackfitError):
    """A fit could not reach the required accuracy or the problem is ill-posed."""


class InfeasibleError(SolverError):
    """No weights satisfy every mandate limit together (on the names allowed)."""
