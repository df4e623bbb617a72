"""Finding the held model in a FitOutcome and checking its weights can be written out."""

from __future__ import annotations

import numpy as np

from trackfit.errors import DataError, SolverError
from trackfit.evaluate.holdout import ModelOutcome
from trackfit.outcomes.fit import FitOutcome

#: Name of the last row of weights.csv; no constituent may use it.
CASH_NAME = "(cash)"


def held_model(outcome: FitOutcome) -> ModelOutcome:
    """The model in ``outcome.study.models`` named ``outcome.held``.

    Raises
    ------
    ValueError
        If no model has that name (a bug in whoever built the outcome).
    """
    for model in outcome.study.models:
        if model.name == outcome.held:
            return model
    known = ", ".join(repr(m.name) for m in outcome.study.models) or "none"
    raise ValueError(
        f"The held model {outcome.held!r} is not among the models of the study ({known})."
    )


def held_weights(outcome: FitOutcome) -> tuple[np.ndarray, float]:
    """Final weights of the held model, aligned with ``outcome.data.names``, and its cash.

    Returns
    -------
    weights : ndarray of shape (n_assets,)
    cash : float

    Raises
    ------
    DataError
        If a constituent name is repeated or is the reserved cash row name.
    SolverError
        If a weight or the cash is not finite.
    ValueError
        If the weights do not line up with the names (a bug in whoever built the outcome).
    """
    model = held_model(outcome)
    names = outcome.data.names
    weights = np.asarray(model.final_fit.weights, dtype=float)
    cash = float(model.final_fit.cash)
    if weights.shape != (len(names),):
        raise ValueError(
            f"The final weights of {model.name!r} have shape {weights.shape}, "
            f"but there are {len(names)} constituent names."
        )
    check_names(names)
    bad = [names[i] for i in np.flatnonzero(~np.isfinite(weights))]
    if bad or not np.isfinite(cash):
        where = ", ".join(repr(n) for n in bad) if bad else repr(CASH_NAME)
        raise SolverError(
            f"Model {model.name!r} gave a weight that is not a finite number for {where} "
            f"(as of {outcome.as_of.isoformat()}); no weights were written. Check the "
            "constituent returns for extreme values, or hold another model."
        )
    return weights, cash


def check_names(names: tuple[str, ...]) -> None:
    """Raise DataError unless the constituent names can label rows unambiguously."""
    if CASH_NAME in names:
        raise DataError(
            f"A constituent is named {CASH_NAME!r}, which weights.csv uses for the cash row; "
            "rename that column in the constituent file."
        )
    seen: set[str] = set()
    repeated: dict[str, None] = {}  # ordered, without duplicates
    for name in names:
        if name in seen:
            repeated[name] = None
        seen.add(name)
    if repeated:
        listed = ", ".join(repr(n) for n in repeated)
        raise DataError(
            f"Constituent names appear more than once: {listed}; "
            "give every constituent column a distinct name across the constituent files."
        )


def judged_label(model: ModelOutcome, held: str) -> str:
    """A row of a table of judged fits (fitted before the holdout): the held model's says so."""
    return f"{model.name} (held model, judged fit)" if model.name == held else model.name
