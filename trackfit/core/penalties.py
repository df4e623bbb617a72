"""The penalty of one fit, and what its mix implies for grids and engines.

Every penalized fit in trackfit minimizes, in standardized units,
``(1 / 2n) |y_s - X_s b|^2 + alpha * (l1_ratio * |b|_1 + (1 - l1_ratio) / 2 * |b|^2)``.
Whether an L1 term is present decides how the penalty grid is built, whether the grid's top
holds no names and which engine can solve the fit long-only; the modules that need those
answers ask a :class:`Penalty` instead of testing ``l1_ratio`` themselves.
"""

from __future__ import annotations

from dataclasses import dataclass

#: Grid rules: log-spaced down from alpha_max (as LassoCV), or around the Gram's top eigenvalue.
L1_GRID = "l1"
EIGENVALUE_GRID = "eigenvalue"


@dataclass(frozen=True)
class Penalty:
    """One penalty mix.

    Parameters
    ----------
    l1_ratio : float
        Share of the L1 term, in [0, 1]: 1 for lasso, 0 for ridge.
    """

    l1_ratio: float

    def __post_init__(self) -> None:
        if not 0.0 <= self.l1_ratio <= 1.0:
            raise ValueError(
                f"The 'l1_ratio' parameter of Penalty must be in [0, 1]. Got {self.l1_ratio!r}."
            )

    @property
    def has_l1(self) -> bool:
        """An L1 term is present, so large penalties hold no names."""
        return self.l1_ratio > 0.0

    @property
    def grid_rule(self) -> str:
        """:data:`L1_GRID` or :data:`EIGENVALUE_GRID` (see :func:`trackfit.core.grid.penalty_grid`)."""
        return L1_GRID if self.has_l1 else EIGENVALUE_GRID

    @property
    def grid_needs_gram(self) -> bool:
        """The grid reads the Gram matrix of all rows (the L1 grid reads only ``X'y``)."""
        return self.grid_rule == EIGENVALUE_GRID

    @property
    def top_holds_nothing(self) -> bool:
        """The top of the grid holds no names, so a grid is only ever extended below."""
        return self.has_l1

    @property
    def path_engine_long_only(self) -> bool:
        """The exact path engine solves this penalty with positivity; long-only ridge has no
        active set to walk and needs the constrained engine."""
        return self.has_l1


__all__ = ["EIGENVALUE_GRID", "L1_GRID", "Penalty"]
