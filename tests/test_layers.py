"""The layers only look down: a walk over every import in the package (module level and inside
functions) fails on an import that reaches up."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

import trackfit

PACKAGE = Path(trackfit.__file__).parent

#: What an outcome may be made of, and so what the reporter and the commands may read too.
RESULTS = {"outcomes", "evaluate", "core", "data", "job", "jobfile", "errors"}

#: Which parts of trackfit each layer may import (its own part always). DEVELOPERS.md has the map.
ALLOWED = {
    "core": {"core", "errors"},
    "job": {"job", "jobfile", "core", "errors"},
    "jobfile": {"job", "jobfile", "core", "errors"},
    "data": {"data", "job", "jobfile", "errors"},
    "evaluate": {"evaluate", "core", "errors"},
    "outcomes": RESULTS,
    "report": RESULTS | {"report", "__init__"},
    "commands": RESULTS | {"commands", "report"},
    "cli": {"commands", "errors", "__init__"},
    "errors": set(),
    "__init__": set(),
}


def _part(module: str) -> str:
    """``trackfit.core.cv`` -> ``core``; ``trackfit`` -> ``__init__``."""
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else "__init__"


def _imports(path: Path) -> list[tuple[int, str]]:
    tree = ast.parse(path.read_text(), filename=str(path))
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found += [
                (node.lineno, a.name) for a in node.names if a.name.split(".")[0] == "trackfit"
            ]
        elif (
            isinstance(node, ast.ImportFrom)
            and node.module
            and node.level == 0
            and node.module.split(".")[0] == "trackfit"
        ):
            found.append((node.lineno, node.module))
    return found


def _modules():
    for path in sorted(PACKAGE.rglob("*.py")):
        rel = path.relative_to(PACKAGE.parent).with_suffix("")
        name = ".".join(rel.parts).removesuffix(".__init__")
        yield name, path


@pytest.mark.parametrize(
    "name,path", list(_modules()), ids=lambda v: str(v) if isinstance(v, str) else ""
)
def test_every_import_looks_down(name, path):
    layer = _part(name)
    assert layer in ALLOWED, (
        f"{name}: a new top-level part of trackfit; add it to ALLOWED and DEVELOPERS.md"
    )
    allowed = ALLOWED[layer] | {layer}
    bad = [
        f"line {line}: {target}" for line, target in _imports(path) if _part(target) not in allowed
    ]
    assert not bad, f"{name} ({layer}) imports above itself: {bad}"


def test_the_walk_sees_imports_inside_functions(tmp_path):
    probe = tmp_path / "probe.py"
    probe.write_text("def f():\n    from trackfit.commands.fit import run_fit\n")
    assert _imports(probe) == [(2, "trackfit.commands.fit")]


def test_the_job_reader_and_the_evaluation_agree_on_the_backtest_words():
    # The job reader keeps its own word lists so that it imports nothing of evaluate/.
    from trackfit.evaluate.backtest import MODES
    from trackfit.evaluate.schedule import EVERY
    from trackfit.jobfile import backtest

    assert backtest.MODES == MODES
    assert backtest.EVERY == EVERY
