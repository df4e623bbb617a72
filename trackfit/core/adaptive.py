"""The adaptive lasso's per-name weights, as a rescaling of the standardized columns.

The adaptive lasso (Zou 2006, "The adaptive lasso and its oracle properties", JASA
101:1418-1429) penalizes name ``j`` by ``v_j = 1 / |b_pilot_j|^gamma``:
``(1 / 2n) |y_s - X_s b|^2 + alpha * sum_j v_j |b_j|``. With ``theta_j = b_j / f_j`` and
``f_j = |b_pilot_j|^gamma`` this is a plain lasso in ``theta`` on the columns ``X_s[:, j] * f_j``,
that is on a :class:`Scaling` whose ``x_scale`` is divided by ``f``. Every engine, mandate limit
and back-transform then works unchanged: the weights in original units are
``theta * y_scale / (x_scale / f) = b * y_scale / x_scale``. Names whose pilot weight is zero
would carry an infinite penalty; they are marked unusable.

The pilot is a ridge fit in standardized units whose penalty is chosen by time-ordered
cross-validation on the rows given and nothing else, so inside a cross-validation fold it sees
only that fold's training rows.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from trackfit.core.fit import fit_penalized
from trackfit.core.folds import ForwardChaining
from trackfit.core.models import ModelSpec
from trackfit.core.results import Scaling
from trackfit.errors import SolverError

#: The pilot: an unconstrained ridge, penalty by the smallest mean CV error on the default grid.
PILOT_SPEC = ModelSpec("pilot ridge", "ridge", (0.0,))
PILOT_COUNT = 100
#: Fewest training rows a fallback splitter asks of the pilot's first fold (a standard
#: deviation needs two).
_FALLBACK_MIN_TRAIN = 2


@dataclass(frozen=True)
class Reweighting:
    """A column rescaling that turns a weighted L1 penalty into a plain one.

    Attributes
    ----------
    scaling : Scaling
        The scaling the engines work on: ``x_scale / factor`` where ``factor > 0``, unusable
        (scale 1.0) where the true scaling is unusable or ``factor == 0``.
    factor : ndarray of shape (n_assets,)
        ``|b_pilot|^gamma`` (0 where unusable): standardized weights in the true scaling are
        the engine's standardized weights times ``factor``.
    pilot : ndarray of shape (n_assets,)
        Pilot ridge weights in standardized units of the true scaling.
    pilot_alpha : float
        The pilot's penalty, chosen by cross-validation on the rows given.
    notes : tuple of str
        A fallback splitter, when the pilot needed one. The pilot's grid extensions are left
        out: a pilot at the small-penalty edge is a near-OLS pilot, Zou's own default.
    """

    scaling: Scaling
    factor: np.ndarray
    pilot: np.ndarray
    pilot_alpha: float
    notes: tuple[str, ...] = ()


def pilot_splitter(splitter: ForwardChaining, n: int) -> tuple[ForwardChaining, str | None]:
    """The splitter the pilot uses on ``n`` rows, and a note when it is a fallback.

    First ``splitter`` itself; when ``n`` rows cannot hold its folds, the same number of folds
    with a training floor of 2 rows, then one fold fewer at a time down to 2 (the gap and the
    rolling or expanding scheme are kept, so no validation row ever leaks into training).

    Raises
    ------
    SolverError
        When not even 2 folds fit in ``n`` rows.
    """
    tries = [splitter] + [
        replace(splitter, n_folds=k, min_train=min(splitter.min_train, _FALLBACK_MIN_TRAIN))
        for k in range(splitter.n_folds, 1, -1)
    ]
    for candidate in tries:
        try:
            candidate.split(n)
        except SolverError:
            continue
        if candidate == splitter:
            return candidate, None
        return candidate, (
            f"the pilot ridge on {n} rows used {candidate.n_folds} folds with at least "
            f"{candidate.min_train} training rows, as the job's folds do not fit in them"
        )
    raise SolverError(
        f"the adaptive lasso's pilot ridge: {n} rows cannot hold even 2 cross-validation "
        f"folds with gap {splitter.gap} to choose its penalty; lengthen the window or lower "
        "cross_validation.gap"
    )


def pilot_ridge(
    X: np.ndarray, y: np.ndarray, splitter: ForwardChaining
) -> tuple[np.ndarray, float, tuple[str, ...]]:
    """Ridge weights in standardized units, penalty chosen by cross-validation on these rows.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    splitter : ForwardChaining
        The job's splitter, applied to these rows (see :func:`pilot_splitter`).

    Returns
    -------
    coef_std : ndarray of shape (n_assets,)
    alpha : float
    notes : tuple of str
        A note when a fallback splitter was used.
    """
    # Imported here: cross-validation imports the model registry, which imports this lazily.
    from trackfit.core.cv import cross_validate

    chosen, note = pilot_splitter(splitter, len(y))
    cv = cross_validate(X, y, PILOT_SPEC, chosen, rule="min_error", count=PILOT_COUNT)
    fit = fit_penalized(X, y, cv.alpha, 0.0)
    return fit.coef_std, cv.alpha, (note,) if note else ()


def reweighted_scaling(scaling: Scaling, factor: np.ndarray) -> Scaling:
    """``scaling`` with ``x_scale`` divided by ``factor``; names with factor 0 unusable.

    Parameters
    ----------
    scaling : Scaling
    factor : ndarray of shape (n_assets,)
        Non-negative.
    """
    usable = scaling.usable & (factor > 0)
    safe = np.where(usable, factor, 1.0)
    x_scale = np.where(usable, scaling.x_scale / safe, 1.0)
    return Scaling(x_scale=x_scale, y_scale=scaling.y_scale, usable=usable)


def adaptive_reweighting(
    X: np.ndarray, y: np.ndarray, scaling: Scaling, splitter: ForwardChaining, *, gamma: float
) -> Reweighting:
    """The adaptive lasso's rescaling for a fit on these rows.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    scaling : Scaling
        Fitted on these rows (:func:`trackfit.core.scaling.fit_scaling`).
    splitter : ForwardChaining
        For the pilot's cross-validation on these rows.
    gamma : float
        Exponent of the weights, > 0.
    """
    if not gamma > 0:
        raise ValueError(f"The 'gamma' parameter must be greater than 0. Got {gamma!r}.")
    pilot, alpha, notes = pilot_ridge(X, y, splitter)
    factor = np.where(scaling.usable, np.abs(pilot) ** gamma, 0.0)
    working = reweighted_scaling(scaling, factor)
    return Reweighting(
        scaling=working,
        factor=np.where(working.usable, factor, 0.0),
        pilot=pilot,
        pilot_alpha=float(alpha),
        notes=notes,
    )


__all__ = [
    "PILOT_COUNT",
    "PILOT_SPEC",
    "Reweighting",
    "adaptive_reweighting",
    "pilot_ridge",
    "pilot_splitter",
    "reweighted_scaling",
]
