"""Uncentered scaling: divide by the ddof=0 standard deviation, never subtract the mean.

The fits have no intercept, so centering would change the model; scaling only changes the units
in which the penalty is measured. This equals scikit-learn's ``StandardScaler(with_mean=False)``.
"""

from __future__ import annotations

import numpy as np

from trackfit.core.results import Scaling
from trackfit.errors import SolverError

# A column whose standard deviation is this small relative to its root mean square is constant
# up to rounding (numpy's std of a constant column is ~1e-17 of its level, not always 0).
_CONSTANT_RTOL = 1e-10


def fit_scaling(X: np.ndarray, y: np.ndarray) -> Scaling:
    """Scales of constituents and benchmark on the given rows.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)

    Returns
    -------
    Scaling
        Constituents with zero variance on these rows are marked unusable (scale set to 1.0).

    Raises
    ------
    SolverError
        If the benchmark has zero variance on these rows.
    """
    x_std = X.std(axis=0, ddof=0)
    x_rms = np.sqrt(np.mean(X * X, axis=0))
    usable = x_std > _CONSTANT_RTOL * x_rms
    y_std = float(y.std(ddof=0))
    if not y_std > _CONSTANT_RTOL * float(np.sqrt(np.mean(y * y))):
        raise SolverError(
            f"the benchmark is constant on {len(y)} rows, so there is nothing to track; "
            "check the benchmark column and the window"
        )
    return Scaling(x_scale=np.where(usable, x_std, 1.0), y_scale=y_std, usable=usable)


def to_original_units(coef_std: np.ndarray, scaling: Scaling) -> np.ndarray:
    """Map standardized weights back: ``w = w_std * y_scale / x_scale``, 0 for unusable columns.

    Parameters
    ----------
    coef_std : ndarray of shape (n_assets,)

    Returns
    -------
    ndarray of shape (n_assets,)
    """
    w = coef_std * scaling.y_scale / scaling.x_scale
    w[~scaling.usable] = 0.0
    # Exactly zero stays exactly zero, and never -0.0, so the count of names held is exact.
    w[w == 0.0] = 0.0
    return w
