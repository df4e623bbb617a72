"""What a model is, as the fitting core sees it: a name and its penalty mix."""

from __future__ import annotations

from dataclasses import dataclass

#: The penalized families the core fits, keyed by the name used in job files and reports.
KINDS = ("lasso", "ridge", "elastic_net")


@dataclass(frozen=True)
class ModelSpec:
    """One penalized model to cross-validate.

    Parameters
    ----------
    name : str
        Label used in reports (``"lasso"``, ``"ridge"``, ``"elastic_net"``).
    kind : {"lasso", "ridge", "elastic_net"}
        Penalty family.
    l1_ratios : tuple of float
        Mixes searched by cross-validation: ``(1.0,)`` for lasso, ``(0.0,)`` for ridge,
        values in (0, 1) for elastic net.
    """

    name: str
    kind: str
    l1_ratios: tuple[float, ...]
