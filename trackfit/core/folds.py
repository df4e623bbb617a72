"""Time-ordered cross-validation folds: every validation block lies after its training rows."""

from __future__ import annotations

from dataclasses import dataclass

from trackfit.core.results import Fold
from trackfit.errors import SolverError


@dataclass(frozen=True)
class ForwardChaining:
    """Forward-chaining splitter over ``n`` time-ordered rows.

    The last ``n_folds * test_size`` rows form ``n_folds`` consecutive validation blocks. Each
    block is validated by a fit on the rows before it, less ``gap`` rows next to it. Expanding
    folds train on everything before; rolling folds keep the first fold's training length.

    With ``min_train=1`` and ``rolling=False`` the folds equal scikit-learn's
    ``TimeSeriesSplit(n_splits=n_folds, gap=gap)``; with ``rolling=True`` they equal it with
    ``max_train_size`` set to the first fold's training length.

    Parameters
    ----------
    n_folds : int
        Number of validation blocks, >= 2.
    min_train : int
        Fewest training rows allowed in the first fold. When the default validation size
        (``n // (n_folds + 1)``) leaves fewer, the validation blocks shrink.
    gap : int
        Rows dropped between the end of training and the start of validation.
    rolling : bool
        Keep the training length fixed instead of expanding it.
    """

    n_folds: int = 5
    min_train: int = 1
    gap: int = 0
    rolling: bool = False

    def split(self, n: int) -> tuple[Fold, ...]:
        """Folds for ``n`` rows, in time order.

        Raises
        ------
        SolverError
            If ``n`` rows cannot hold the folds with the required training length.
        """
        k, gap, min_train = self.n_folds, self.gap, max(1, self.min_train)
        test_size = n // (k + 1)
        if n - gap - k * test_size < min_train:
            test_size = (n - gap - min_train) // k
        if test_size < 1:
            raise SolverError(
                f"{n} rows cannot hold {k} cross-validation folds with gap {gap} and at least "
                f"{min_train} training rows; lengthen the window or lower "
                "cross_validation.folds, gap or min_train"
            )
        first_stop = n - k * test_size - gap
        folds = []
        for i in range(k):
            val_start = n - (k - i) * test_size
            train_stop = val_start - gap
            train_start = max(0, train_stop - first_stop) if self.rolling else 0
            folds.append(Fold(train_start, train_stop, val_start, val_start + test_size))
        return tuple(folds)
