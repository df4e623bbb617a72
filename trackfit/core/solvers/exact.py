"""The default engine: exact ridge by eigendecomposition, exact lasso and elastic net by active sets."""

from __future__ import annotations

import numpy as np

from trackfit.core.gram import GramData
from trackfit.core.kkt import enet_kkt_residual
from trackfit.core.solvers.active_set import solve_enet
from trackfit.core.solvers.base import PathSolution
from trackfit.core.solvers.ridge import ridge_path
from trackfit.errors import SolverError


class ExactPathSolver:
    """Exact solutions along a decreasing penalty path, warm-started from one penalty to the next."""

    def path(
        self, data: GramData, alphas: np.ndarray, l1_ratio: float, *, positive: bool = False
    ) -> PathSolution:
        alphas = np.asarray(alphas, dtype=float)
        k = len(data.xty)
        if l1_ratio == 0.0 and not positive:
            coefs = ridge_path(data.gram, data.xty, alphas)
            steps = np.ones(len(alphas), dtype=int)
        else:
            if l1_ratio == 0.0:
                raise SolverError("long-only ridge needs the constrained solver")
            coefs = np.zeros((len(alphas), k))
            steps = np.zeros(len(alphas), dtype=int)
            w = np.zeros(k)
            for i, alpha in enumerate(alphas):
                w, steps[i] = solve_enet(
                    data.gram,
                    data.xty,
                    alpha * l1_ratio,
                    alpha * (1.0 - l1_ratio),
                    positive=positive,
                    start=w,
                )
                coefs[i] = w
        kkt = np.array(
            [
                enet_kkt_residual(
                    data, coefs[i], a * l1_ratio, a * (1.0 - l1_ratio), positive=positive
                )
                for i, a in enumerate(alphas)
            ]
        )
        return PathSolution(coefs=coefs, kkt_residuals=kkt, iterations=steps)
