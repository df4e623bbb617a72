"""Ridge for every penalty from one eigendecomposition of the Gram matrix."""

from __future__ import annotations

import numpy as np


def ridge_path(G: np.ndarray, c: np.ndarray, alphas: np.ndarray) -> np.ndarray:
    """Solve ``(G + alpha I) w = c`` for each alpha.

    Parameters
    ----------
    G : ndarray of shape (k, k)
        Symmetric positive semidefinite.
    c : ndarray of shape (k,)
    alphas : ndarray of shape (n_alphas,)
        Positive penalties.

    Returns
    -------
    ndarray of shape (n_alphas, k)
    """
    evals, evecs = np.linalg.eigh(G)
    evals = np.maximum(evals, 0.0)  # rounding can leave tiny negative eigenvalues
    q = evecs.T @ c
    return (q / (evals + alphas[:, None])) @ evecs.T
