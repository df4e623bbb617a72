"""What a model is, as the fitting core sees it, and the one registry of model kinds.

A kind (:class:`ModelKind`) says everything the other layers need of a penalized family: its
default mixes, the job options it takes with their rules and defaults, how its penalty grid is
built (through :class:`trackfit.core.penalties.Penalty`), which engine serves it and a few
descriptive flags. The job reader, cross-validation and the single fit all read it from
:data:`MODEL_KINDS`; a new penalty is one entry here plus its solver support and one entry in
the parametrized test list of ``tests/test_penalties.py``.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from trackfit.core.penalties import Penalty


@dataclass(frozen=True)
class ModelSpec:
    """One penalized model to cross-validate.

    Parameters
    ----------
    name : str
        Label used in reports (``"lasso"``, ``"ridge"``, ...).
    kind : str
        Penalty family, a key of :data:`MODEL_KINDS`.
    l1_ratios : tuple of float
        Mixes searched by cross-validation: ``(1.0,)`` for lasso, ``(0.0,)`` for ridge,
        values in (0, 1) for elastic net.
    params : tuple of (str, float)
        The kind's other options, by name, in the kind's order (``(("gamma", 1.0),)`` for the
        adaptive lasso); empty for kinds without any.
    """

    name: str
    kind: str
    l1_ratios: tuple[float, ...]
    params: tuple[tuple[str, float], ...] = ()

    def param(self, name: str) -> float:
        """The value of option ``name``; KeyError when the spec has no such option."""
        for key, value in self.params:
            if key == name:
                return value
        raise KeyError(f"model {self.name!r} ({self.kind}) has no option {name!r}")


@dataclass(frozen=True)
class OptionRule:
    """One job option of a model kind: its name, allowed range and default.

    Parameters
    ----------
    name : str
        Key under ``models.<kind>`` in a job file.
    default : float or tuple of float
        Value when the option is not given (a tuple when ``many``).
    low, high : float
        Allowed range; a value must be finite.
    low_closed, high_closed : bool
        Whether ``low`` and ``high`` themselves are allowed.
    words : str
        The range in words, completing "a number ..." (``"strictly between 0 and 1"``).
    many : bool
        A number or a non-empty list of distinct numbers, each searched by cross-validation.
    mixes : bool
        The values are the kind's l1_ratios (:attr:`ModelSpec.l1_ratios`); otherwise they go
        to :attr:`ModelSpec.params`.
    """

    name: str
    default: float | tuple[float, ...]
    low: float
    high: float = math.inf
    low_closed: bool = False
    high_closed: bool = False
    words: str = ""
    many: bool = False
    mixes: bool = False

    def accepts(self, value: float) -> bool:
        """True when ``value`` is a finite number inside the range."""
        if not math.isfinite(value):
            return False
        above = value >= self.low if self.low_closed else value > self.low
        below = value <= self.high if self.high_closed else value < self.high
        return above and below


#: Given the rows of one fit, their scaling, the spec and the splitter, the column weighting
#: that turns the kind into a plain L1/L2 fit on rescaled columns (see ``ModelKind.reweight``).
Reweighter = Callable[..., object]


@dataclass(frozen=True)
class ModelKind:
    """One penalized family.

    Parameters
    ----------
    name : str
        Name in job files and reports.
    summary : str
        One line of what it is, for documentation and ``check``.
    l1_ratios : tuple of float
        Default mixes searched (``(1.0,)`` lasso, ``(0.0,)`` ridge).
    options : tuple of OptionRule
        Job options it accepts (none for lasso and ridge).
    has_l1 : bool
        Its penalty has an L1 term (under long-only and fully invested, that term is constant
        and cannot make a portfolio sparse: the command layer warns).
    reweight : callable or None
        Which engine serves it. None: the exact path engine (or the limited engine under
        limits) on the standardized columns. Otherwise a function
        ``reweight(X, y, spec, splitter, scaling) -> trackfit.core.adaptive.Reweighting``
        giving a per-column rescaling, chosen from the given rows only, under which the kind
        is a plain fit of its l1_ratio: the same engines then serve it, every mandate limit
        and the back-transform to original units included.
    """

    name: str
    summary: str
    l1_ratios: tuple[float, ...]
    options: tuple[OptionRule, ...] = ()
    has_l1: bool = True
    reweight: Reweighter | None = None

    def penalties(self, spec: ModelSpec) -> tuple[Penalty, ...]:
        """The penalty of each mix the spec searches."""
        return tuple(Penalty(r) for r in spec.l1_ratios)

    def spec(self, name: str | None = None, **values) -> ModelSpec:
        """A spec of this kind; options not given take their defaults.

        Values are assumed checked (the job reader checks them against :attr:`options`).
        """
        unknown = set(values) - {o.name for o in self.options}
        if unknown:
            raise ValueError(f"model kind {self.name!r} has no option(s) {sorted(unknown)}")
        ratios = self.l1_ratios
        params = []
        for option in self.options:
            value = values.get(option.name, option.default)
            if option.mixes:
                ratios = tuple(float(v) for v in value)
            else:
                params.append(
                    (option.name, tuple(float(v) for v in value) if option.many else float(value))
                )
        return ModelSpec(name or self.name, self.name, ratios, tuple(params))

    def describe(self, spec: ModelSpec) -> str:
        """The spec in a few words, such as ``"elastic_net (l1_ratio 0.25, 0.5)"``."""
        parts = []
        for option in self.options:
            value = spec.l1_ratios if option.mixes else spec.param(option.name)
            values = value if isinstance(value, tuple) else (value,)
            parts.append(f"{option.name} {', '.join(f'{v:g}' for v in values)}")
        return spec.name + (f" ({'; '.join(parts)})" if parts else "")


def _adaptive_reweight(X, y, spec, splitter, scaling):
    # Imported here: the pilot is cross-validated, and cross-validation imports this module.
    from trackfit.core.adaptive import adaptive_reweighting

    return adaptive_reweighting(X, y, scaling, splitter, gamma=spec.param("gamma"))


#: Every penalized family the core fits, by the name used in job files and reports.
MODEL_KINDS: dict[str, ModelKind] = {
    kind.name: kind
    for kind in (
        ModelKind("lasso", "L1 penalty", (1.0,)),
        ModelKind("ridge", "L2 penalty", (0.0,), has_l1=False),
        ModelKind(
            "elastic_net",
            "L1 and L2 penalties; cross-validation picks the mix",
            (0.25, 0.5, 0.75),
            options=(
                OptionRule(
                    "l1_ratio",
                    (0.25, 0.5, 0.75),
                    0.0,
                    1.0,
                    words="strictly between 0 and 1",
                    many=True,
                    mixes=True,
                ),
            ),
        ),
        ModelKind(
            "adaptive_lasso",
            "L1 penalty weighted per name by 1/|pilot ridge weight|^gamma (Zou 2006)",
            (1.0,),
            options=(OptionRule("gamma", 1.0, 0.0, words="greater than 0"),),
            reweight=_adaptive_reweight,
        ),
    )
}

#: Kind names in registry order.
KINDS = tuple(MODEL_KINDS)


def model_kind(name: str) -> ModelKind:
    """The registry entry of kind ``name``; ValueError for an unknown kind."""
    try:
        return MODEL_KINDS[name]
    except KeyError:
        raise ValueError(f"unknown model kind {name!r}; known: {', '.join(KINDS)}") from None


def describe_model(spec: ModelSpec) -> str:
    """:meth:`ModelKind.describe` of the spec's kind."""
    return model_kind(spec.kind).describe(spec)


__all__ = [
    "KINDS",
    "MODEL_KINDS",
    "ModelKind",
    "ModelSpec",
    "OptionRule",
    "describe_model",
    "model_kind",
]
