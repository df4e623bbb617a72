"""Parsers for ``models`` and ``hold``: which penalized models to fit and which one to hold."""

from __future__ import annotations

from typing import Any

from trackfit.core.models import KINDS, ModelSpec
from trackfit.jobfile.checks import Reader, closest

#: Always computed for comparison; may be held, never listed under ``models``.
BASELINES = ("ols", "equal_weight")
DEFAULT_L1_RATIOS = (0.25, 0.5, 0.75)
DEFAULT_MODELS = (
    ModelSpec("lasso", "lasso", (1.0,)),
    ModelSpec("elastic_net", "elastic_net", DEFAULT_L1_RATIOS),
    ModelSpec("ridge", "ridge", (0.0,)),
)


def parse_models(r: Reader, value: Any) -> tuple[ModelSpec, ...]:
    if value is None:
        return DEFAULT_MODELS
    if not isinstance(value, (dict, list)) or not value:
        raise r.bad("models", f"a non-empty mapping or list of model names ({', '.join(KINDS)})",
                    value)
    if isinstance(value, list):
        names = [_model_name(r, f"models[{i}]", item) for i, item in enumerate(value)]
        for i, name in enumerate(names):
            if name in names[:i]:
                raise r.error(f"'models' lists {name!r} twice; list each model once")
        return tuple(_model(r, name, None) for name in names)
    return tuple(_model(r, _model_name(r, "models", name), options)
                 for name, options in value.items())


def _model_name(r: Reader, key: str, name: Any) -> str:
    """Check one model name; ``key`` is the list entry's path or 'models' for a mapping key."""
    if name in BASELINES:
        raise r.error(f"{name!r} in '{key}': ols and equal_weight are always computed as "
                      "baselines; do not list them under 'models' (they may still be chosen "
                      "with 'hold')")
    if isinstance(name, str) and name in KINDS:
        return name
    if key == "models":
        raise r.unknown("models", name, KINDS, what="model")
    if isinstance(name, (dict, list)):
        raise r.bad(key, "a model name (" + ", ".join(KINDS) + "); to give options, write 'models' "
                    "as a mapping such as {elastic_net: {l1_ratio: [0.5]}}", name)
    raise r.bad(key, f"one of {', '.join(KINDS)}", name, suggest=closest(name, KINDS))


def _model(r: Reader, name: str, options: Any) -> ModelSpec:
    key = f"models.{name}"
    if name != "elastic_net":
        if options not in (None, {}):
            raise r.bad(key, f"empty ('{name}: {{}}' or '{name}:'); only elastic_net takes options "
                        "(l1_ratio)", options)
        return ModelSpec(name, name, (1.0,) if name == "lasso" else (0.0,))
    s = r.section(key, options, ("l1_ratio",))
    ratios = s.get("l1_ratio")
    if ratios is None:
        return ModelSpec(name, name, DEFAULT_L1_RATIOS)
    items = ratios if isinstance(ratios, list) else [ratios]
    if not items:
        raise r.bad(f"{key}.l1_ratio", "a number or a non-empty list of numbers strictly between "
                    "0 and 1", ratios)
    values = [r.fraction(f"{key}.l1_ratio[{i}]" if isinstance(ratios, list) else f"{key}.l1_ratio",
                         v) for i, v in enumerate(items)]
    for i, v in enumerate(values):
        if v in values[:i]:
            raise r.error(f"'{key}.l1_ratio' lists {items[i]!r} twice; list each value once")
    return ModelSpec(name, name, tuple(values))


def parse_hold(r: Reader, value: Any, models: tuple[ModelSpec, ...]) -> str:
    if value is None:
        return models[0].name
    allowed = tuple(m.name for m in models) + BASELINES
    if not isinstance(value, str) or value not in allowed:
        raise r.bad("hold", "a model listed under 'models' or a baseline: "
                    + ", ".join(f"'{a}'" for a in allowed), value)
    return value
