"""The one model recipe: choose a penalty, fit at it, word what went wrong.

Every place that turns rows into weights goes through here: the fit's holdout study (once on
the rows before the holdout, once on the whole window) and every backtest rebalance. So the
penalty is chosen the same way, the baselines are fitted the same way and the warnings and notes
read the same everywhere.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from trackfit.core.cv import cross_validate
from trackfit.core.fit import KKT_LIMIT, equal_weights, fit_ols
from trackfit.core.folds import ForwardChaining
from trackfit.core.gram import RowBlocks
from trackfit.core.limited_fit import FULL_SEARCH, SearchOptions, fit_limited
from trackfit.core.limits import NO_LIMITS, Limits
from trackfit.core.model_fit import fit_model as fit_at_penalty
from trackfit.core.models import ModelSpec
from trackfit.core.results import CVResult, FittedWeights
from trackfit.core.solvers import PathSolver

#: Always computed beside the penalized models; either may be held.
BASELINES = ("ols", "equal_weight")

#: Held cash above this share, with no budget limit, gets a note: a penalty shrinks the weights
#: toward zero, and with no budget that means toward cash (2 %: common practice for a cash drag
#: worth a look, not a derived threshold).
CASH_NOTE_SHARE = 0.02


@dataclass(frozen=True)
class StudyDesign:
    """How penalties are chosen: the folds, the selection rule and the grid."""

    splitter: ForwardChaining
    rule: str = "min_error"
    count: int = 100
    min_ratio: float = 1e-3


@dataclass(frozen=True)
class Model:
    """One model of a job: a penalized spec, or a baseline by name.

    Attributes
    ----------
    name : str
    kind : str
        The penalty family, or the baseline's name (``"ols"``, ``"equal_weight"``).
    spec : ModelSpec or None
        None for the baselines.
    """

    name: str
    kind: str
    spec: ModelSpec | None = None

    @classmethod
    def of(cls, spec: ModelSpec) -> Model:
        return cls(name=spec.name, kind=spec.kind, spec=spec)

    @classmethod
    def baseline(cls, name: str) -> Model:
        if name not in BASELINES:
            raise ValueError(f"baseline must be one of {BASELINES}; got {name!r}")
        return cls(name=name, kind=name)

    @property
    def penalized(self) -> bool:
        return self.spec is not None


def choose_penalty(
    X: np.ndarray,
    y: np.ndarray,
    model: Model,
    design: StudyDesign,
    limits: Limits = NO_LIMITS,
    *,
    solver: PathSolver | None = None,
    blocks: RowBlocks | None = None,
    row_offset: int = 0,
) -> CVResult | None:
    """Time-ordered cross-validation of a penalized model on these rows; None for a baseline.

    ``blocks`` and ``row_offset`` share row-block statistics between many windows of one
    series (see :func:`trackfit.core.cv.cross_validate`).
    """
    if not model.penalized:
        return None
    return cross_validate(
        X,
        y,
        model.spec,
        design.splitter,
        rule=design.rule,
        count=design.count,
        min_ratio=design.min_ratio,
        solver=solver,
        limits=limits,
        blocks=blocks,
        row_offset=row_offset,
    )


def fit_model(
    X: np.ndarray,
    y: np.ndarray,
    model: Model,
    cv: CVResult | None,
    design: StudyDesign,
    limits: Limits = NO_LIMITS,
    *,
    start: np.ndarray | None = None,
    search: SearchOptions = FULL_SEARCH,
) -> FittedWeights:
    """Fit ``model`` on these rows at the penalty ``cv`` chose, under ``limits``.

    OLS is least squares under the limits (alpha 0); equal weights are the naive baseline and
    obey no limit. ``start`` seeds a max-names search with the names chosen on other rows.
    A kind that chooses more on the rows it fits (the adaptive lasso's pilot) uses the
    design's splitter for it.
    """
    if model.kind == "equal_weight":
        return equal_weights(X.shape[1])
    if model.kind == "ols":
        if not limits.any:
            return fit_ols(X, y)
        return fit_limited(X, y, 0.0, 0.0, limits, start=start, search=search)
    return fit_at_penalty(
        X,
        y,
        model.spec,
        cv.alpha,
        cv.l1_ratio,
        limits,
        splitter=design.splitter,
        start=start,
        search=search,
    )


def held_support(fit: FittedWeights) -> np.ndarray | None:
    """The names a capped fit chose, as a start for the next search (None when uncapped)."""
    return fit.weights != 0 if fit.search is not None else None


def fit_warnings(
    model: Model,
    fit: FittedWeights,
    names: Sequence[str],
    rows: str,
    *,
    held: bool,
) -> list[str]:
    """What the user must hear about one fit, in the words every command uses.

    Parameters
    ----------
    model : Model
    fit : FittedWeights
    names : sequence of str, length n_assets
    rows : str
        Which rows were fitted, for the message ("the whole window", "the fit window").
    held : bool
        True for the weights to hold: only those are checked for an all-cash choice.
    """
    out = []
    if fit.scaling is not None and not fit.scaling.usable.all():
        left = [names[j] for j in np.flatnonzero(~fit.scaling.usable)]
        out.append(f"{model.name}: left out {', '.join(left)}: zero variance on {rows}")
    if model.kind == "ols" and fit.kkt_residual > KKT_LIMIT:
        out.append(
            f"ols: the normal equations hold only to {fit.kkt_residual:.1e} on {rows}; the "
            "constituents are nearly collinear, so the OLS weights are unreliable"
        )
    if held and model.penalized and not np.any(fit.weights):
        out.append(
            f"{model.name}: the chosen penalty holds no names (all cash); the benchmark may be "
            "unrelated to the constituents over this window"
        )
    return out


def fit_notes(model: Model, weights: np.ndarray, limits: Limits = NO_LIMITS) -> list[str]:
    """Routine facts about held weights the report carries, in the words every command uses.

    Shorts in names no limit keeps at zero or above, negative cash with no budget limit, and
    more than :data:`CASH_NOTE_SHARE` cash in a penalized fit with no budget limit. Allowed
    by the job, so notes (no exit code), each pointing at the key that forbids it.

    Parameters
    ----------
    model : Model
        The held model.
    weights : ndarray of shape (n_assets,) or (n_rebalances, n_assets)
        The held weights of one fit, or the targets of every rebalance of a backtest (the notes
        then count the rebalances).
    limits : Limits
        The mandate limits the weights were fitted under.
    """
    w = np.atleast_2d(np.asarray(weights, dtype=float))
    many = np.ndim(weights) == 2
    # Names a short is allowed in: no long-only, and no lower bound of zero or above.
    floor = np.full(w.shape[1], -np.inf) if limits.lower is None else limits.lower
    may_short = np.zeros(w.shape[1], dtype=bool) if limits.long_only else floor < 0.0
    shorts = np.sum((w < 0.0) & may_short, axis=1)
    cash = 1.0 - w.sum(axis=1)
    no_budget = limits.budget is None
    out = []

    def counted(mask: np.ndarray, one: str, each: str) -> None:
        n = int(np.count_nonzero(mask))
        if n and many:
            out.append(f"{model.name}: {n} of {len(mask)} rebalances {each}")
        elif n:
            out.append(f"{model.name}: {one}")

    where = "no limit forbids them; to hold none set limits.long_only: true"
    counted(
        shorts > 0,
        f"the held weights include {int(shorts[0])} short position(s) (negative weights); {where}",
        f"held shorts (negative weights); {where}",
    )
    if no_budget:
        counted(
            cash < 0.0,
            f"the held weights sum to {w[0].sum():.4f}, so cash is negative "
            f"({cash[0]:.4f}, borrowed); to bound the sum of weights set limits.budget",
            "held negative cash (weights summing above 1, borrowed); to bound the sum of "
            "weights set limits.budget",
        )
    if no_budget and model.penalized:
        shrink = (
            "penalized fits shrink the weights toward zero, so with no budget limit toward "
            "cash; to hold none set limits.budget: fully_invested"
        )
        counted(
            cash > CASH_NOTE_SHARE,
            f"the held weights leave {cash[0]:.2%} in cash; {shrink}",
            f"held more than {CASH_NOTE_SHARE:.0%} cash; {shrink}",
        )
    return out


__all__ = [
    "BASELINES",
    "CASH_NOTE_SHARE",
    "Model",
    "StudyDesign",
    "choose_penalty",
    "fit_model",
    "fit_notes",
    "fit_warnings",
    "held_support",
]
