"""Parsers for ``models`` and ``hold``: which penalized models to fit and which one to hold.

Which kinds exist and which options each takes come from the core's registry
(:data:`trackfit.core.models.MODEL_KINDS`); nothing here names a kind.
"""

from __future__ import annotations

from typing import Any

from trackfit.core.models import KINDS, MODEL_KINDS, ModelSpec, OptionRule
from trackfit.jobfile.checks import Reader, closest

#: Always computed for comparison; may be held, never listed under ``models``.
BASELINES = ("ols", "equal_weight")
DEFAULT_L1_RATIOS = MODEL_KINDS["elastic_net"].spec().l1_ratios
DEFAULT_MODELS = tuple(MODEL_KINDS[k].spec() for k in ("lasso", "elastic_net", "ridge"))


def parse_models(r: Reader, value: Any) -> tuple[ModelSpec, ...]:
    if value is None:
        return DEFAULT_MODELS
    if not isinstance(value, (dict, list)) or not value:
        raise r.bad(
            "models", f"a non-empty mapping or list of model names ({', '.join(KINDS)})", value
        )
    if isinstance(value, list):
        names = [_model_name(r, f"models[{i}]", item) for i, item in enumerate(value)]
        for i, name in enumerate(names):
            if name in names[:i]:
                raise r.error(f"'models' lists {name!r} twice; list each model once")
        return tuple(_model(r, name, None) for name in names)
    return tuple(
        _model(r, _model_name(r, "models", name), options) for name, options in value.items()
    )


def _model_name(r: Reader, key: str, name: Any) -> str:
    """Check one model name; ``key`` is the list entry's path or 'models' for a mapping key."""
    if name in BASELINES:
        raise r.error(
            f"{name!r} in '{key}': ols and equal_weight are always computed as "
            "baselines; do not list them under 'models' (they may still be chosen "
            "with 'hold')"
        )
    if isinstance(name, str) and name in KINDS:
        return name
    if key == "models":
        raise r.unknown("models", name, KINDS, what="model")
    if isinstance(name, (dict, list)):
        raise r.bad(
            key,
            "a model name (" + ", ".join(KINDS) + "); to give options, write 'models' "
            "as a mapping such as {elastic_net: {l1_ratio: [0.5]}}",
            name,
        )
    raise r.bad(key, f"one of {', '.join(KINDS)}", name, suggest=closest(name, KINDS))


def _with_options() -> str:
    """ "only elastic_net takes options (l1_ratio)", from the registry."""
    kinds = [k for k in MODEL_KINDS.values() if k.options]
    named = [f"{k.name} ({', '.join(o.name for o in k.options)})" for k in kinds]
    if len(named) == 1:
        return f"only {kinds[0].name} takes options ({', '.join(o.name for o in kinds[0].options)})"
    return f"only {', '.join(named[:-1])} and {named[-1]} take options"


def _model(r: Reader, name: str, options: Any) -> ModelSpec:
    key = f"models.{name}"
    kind = MODEL_KINDS[name]
    if not kind.options:
        if options not in (None, {}):
            raise r.bad(key, f"empty ('{name}: {{}}' or '{name}:'); {_with_options()}", options)
        return kind.spec()
    s = r.section(key, options, tuple(o.name for o in kind.options))
    values = {
        o.name: _option(r, f"{key}.{o.name}", o, s[o.name])
        for o in kind.options
        if s.get(o.name) is not None
    }
    return kind.spec(**values)


def _number(r: Reader, key: str, rule: OptionRule, value: Any) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not rule.accepts(value):
        raise r.bad(key, f"a number {rule.words}", value, "number")
    return float(value)


def _option(r: Reader, key: str, rule: OptionRule, value: Any) -> float | tuple[float, ...]:
    """One option's value by its rule: a number, or for ``many`` a non-empty list of
    distinct numbers (a single number is a one-element list)."""
    if not rule.many:
        return _number(r, key, rule, value)
    items = value if isinstance(value, list) else [value]
    if not items:
        raise r.bad(key, f"a number or a non-empty list of numbers {rule.words}", value)
    values = [
        _number(r, f"{key}[{i}]" if isinstance(value, list) else key, rule, v)
        for i, v in enumerate(items)
    ]
    for i, v in enumerate(values):
        if v in values[:i]:
            raise r.error(f"'{key}' lists {items[i]!r} twice; list each value once")
    return tuple(values)


def parse_hold(r: Reader, value: Any, models: tuple[ModelSpec, ...]) -> str:
    if value is None:
        return models[0].name
    allowed = tuple(m.name for m in models) + BASELINES
    if not isinstance(value, str) or value not in allowed:
        raise r.bad(
            "hold",
            "a model listed under 'models' or a baseline: " + ", ".join(f"'{a}'" for a in allowed),
            value,
        )
    return value
