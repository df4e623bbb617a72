"""The default engine: exact ridge by eigendecomposition, the exact lasso path by least angle
regression, elastic net by verified warm-started active sets, each checked and, where rounding
left more than a trace, polished by the feature-sign active-set solver."""

from __future__ import annotations

import numpy as np

from trackfit.core.gram import GramData
from trackfit.core.penalties import Penalty
from trackfit.core.solvers.active_set import solve_enet
from trackfit.core.solvers.base import PathSolution
from trackfit.core.solvers.lars import lasso_path_gram
from trackfit.core.solvers.ridge import ridge_path
from trackfit.core.solvers.threads import single_threaded
from trackfit.errors import SolverError

# Solutions whose KKT residual (relative to max|c|) exceeds this are polished by the active-set
# solver; far below trackfit.core.fit.KKT_LIMIT, so a reported solution is exact to rounding.
_POLISH = 1e-12


def kkt_residuals(
    data: GramData, coefs: np.ndarray, l1: np.ndarray, l2: np.ndarray, *, positive: bool
) -> np.ndarray:
    """:func:`trackfit.core.kkt.enet_kkt_residual` for many solutions at once.

    Parameters
    ----------
    coefs : ndarray of shape (n_alphas, k)
    l1, l2 : ndarray of shape (n_alphas,)

    Returns
    -------
    ndarray of shape (n_alphas,)
    """
    m, k = coefs.shape
    if k == 0:
        return np.zeros(m)
    r = data.xty - coefs @ data.gram - l2[:, None] * coefs
    active = coefs != 0
    excess = r - l1[:, None] if positive else np.abs(r) - l1[:, None]
    viol = np.where(active, np.abs(r - l1[:, None] * np.sign(coefs)), np.maximum(excess, 0.0))
    if positive:
        viol = np.maximum(viol, np.maximum(-coefs, 0.0))
    worst = viol.max(axis=1)
    scale = float(np.max(np.abs(data.xty)))
    return worst / scale if scale else worst


# A cold elastic-net solve far down the path (a refit at the chosen penalty) is reached by
# warm starts along penalties this far apart, as a CV grid would: each settles in a round or
# two, where a cold start at a small penalty takes hundreds of active-set steps.
_LEAD_STEP = 0.9


def _lead_in(data: GramData, alphas: np.ndarray, l1_ratio: float, positive: bool) -> np.ndarray:
    """Penalties from where every weight is zero down to (not including) ``alphas[0]``, when
    the first penalty asked for lies more than a few steps below that."""
    if len(alphas) == 0 or len(data.xty) == 0:
        return np.zeros(0)
    c = data.xty
    top = (float(np.max(c)) if positive else float(np.max(np.abs(c)))) / l1_ratio
    if not top > 0.0 or alphas[0] >= top * _LEAD_STEP**3:
        return np.zeros(0)
    count = int(np.ceil(np.log(alphas[0] / top) / np.log(_LEAD_STEP)))
    return top * _LEAD_STEP ** np.arange(count)


class ExactPathSolver:
    """Exact solutions along a decreasing penalty path."""

    def path(
        self, data: GramData, alphas: np.ndarray, l1_ratio: float, *, positive: bool = False
    ) -> PathSolution:
        alphas = np.asarray(alphas, dtype=float)
        penalty = Penalty(l1_ratio)
        if positive and not penalty.path_engine_long_only:
            raise SolverError("long-only ridge needs the constrained solver")
        # Solve in decreasing order whatever the order given, and hand back in the given order.
        order = np.argsort(-alphas, kind="stable")
        sorted_alphas = alphas[order]
        l1 = sorted_alphas * l1_ratio
        l2 = sorted_alphas * (1.0 - l1_ratio)
        if not penalty.has_l1:
            coefs = ridge_path(data.gram, data.xty, sorted_alphas)  # one large eigh: all threads
            steps = np.ones(len(alphas), dtype=int)
            kkt = kkt_residuals(data, coefs, l1, l2, positive=positive)
        else:
            # The check's product (n_alphas x k times k x k) is small too: one thread is faster.
            with single_threaded():
                coefs, steps = self._sparse_path(data, sorted_alphas, l1_ratio, positive)
                kkt = kkt_residuals(data, coefs, l1, l2, positive=positive)
                if np.any(kkt > _POLISH):
                    for i in np.flatnonzero(kkt > _POLISH):
                        w, extra = solve_enet(
                            data.gram, data.xty, l1[i], l2[i], positive=positive, start=coefs[i]
                        )
                        coefs[i], steps[i] = w, steps[i] + extra
                    kkt = kkt_residuals(data, coefs, l1, l2, positive=positive)
        back = np.empty_like(order)
        back[order] = np.arange(len(order))
        return PathSolution(coefs=coefs[back], kkt_residuals=kkt[back], iterations=steps[back])

    @staticmethod
    def _sparse_path(
        data: GramData, alphas: np.ndarray, l1_ratio: float, positive: bool
    ) -> tuple[np.ndarray, np.ndarray]:
        if l1_ratio < 1.0:
            # imported here: the elastic-net walk loads scipy, which start-up does not need
            from trackfit.core.solvers.enet_path import enet_path_gram

            lead = _lead_in(data, alphas, l1_ratio, positive)
            if len(lead) == 0:
                return enet_path_gram(data.gram, data.xty, alphas, l1_ratio, positive=positive)
            coefs, steps = enet_path_gram(
                data.gram, data.xty, np.concatenate([lead, alphas]), l1_ratio, positive=positive
            )
            return coefs[len(lead) :], steps[len(lead) :]
        coefs, steps, solved = lasso_path_gram(
            data.gram, data.xty, alphas, positive=positive, max_active=data.n
        )
        w = coefs[solved - 1] if solved else np.zeros(len(data.xty))
        for i in range(solved, len(alphas)):  # dependent columns: finish by active sets
            w, steps[i] = solve_enet(
                data.gram, data.xty, alphas[i], 0.0, positive=positive, start=w
            )
            coefs[i] = w
        return coefs, steps
