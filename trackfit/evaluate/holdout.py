"""Holdout study: choose and fit on the rows before the holdout, judge on the holdout, refit on all.

STUB: dataclasses are the agreed interface.
"""

from __future__ import annotations

from dataclasses import dataclass

from trackfit.core.results import CVResult, FittedWeights
from trackfit.evaluate.metrics import TrackingMetrics


@dataclass(frozen=True)
class ModelOutcome:
    """One model through the whole study.

    Attributes
    ----------
    name : str
        ``"lasso"``, ``"ridge"``, ``"elastic_net"``, ``"ols"`` or ``"equal_weight"``.
    kind : str
        Penalty family, or ``"ols"`` / ``"equal_weight"`` for the baselines.
    cv : CVResult or None
        None for the baselines.
    train_fit : FittedWeights
        Fitted on the training rows (before the holdout) with the chosen penalty.
    in_sample : TrackingMetrics
        ``train_fit`` on the training rows.
    holdout : TrackingMetrics or None
        ``train_fit`` applied unchanged to the holdout rows (None when there is no holdout).
    final_fit : FittedWeights
        Refitted on the whole window with the chosen penalty: the weights to hold.
    """

    name: str
    kind: str
    cv: CVResult | None
    train_fit: FittedWeights
    in_sample: TrackingMetrics
    holdout: TrackingMetrics | None
    final_fit: FittedWeights


@dataclass(frozen=True)
class HoldoutStudy:
    """All models, with the row split used.

    ``n_train`` rows [0, n_train) choose and fit; ``n_holdout`` rows after them judge.
    """

    n_train: int
    n_holdout: int
    models: tuple[ModelOutcome, ...]
    warnings: tuple[str, ...]
