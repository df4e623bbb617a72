"""Solvers behind one small interface (:class:`PathSolver`)."""

from trackfit.core.solvers.base import PathSolution, PathSolver
from trackfit.core.solvers.exact import ExactPathSolver

__all__ = ["ExactPathSolver", "PathSolution", "PathSolver", "default_solver"]


def default_solver() -> PathSolver:
    """The engine trackfit uses unless told otherwise."""
    return ExactPathSolver()
