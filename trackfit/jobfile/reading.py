"""Job file text -> one YAML mapping, with problems YAML would hide reported by line."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

import yaml

from trackfit.errors import JobError
from trackfit.jobfile.checks import yaml_kind

NodeCheck = Callable[["yaml.Node | None", str], None]


def read_yaml(path: Path, src: str, check_nodes: NodeCheck) -> dict:
    """Read the job file and return its top-level mapping.

    Parameters
    ----------
    path : Path
        The job file.
    src : str
        How messages name it.
    check_nodes : callable
        Run on the composed node tree before construction, normally :func:`check_nodes`.

    Raises
    ------
    JobError
        Missing, unreadable, not UTF-8, not valid YAML, empty, or not a mapping.
    """
    try:
        text = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise JobError(f"{src}: job file not found; check the path") from None
    except IsADirectoryError:
        raise JobError(
            f"{src}: is a folder, not a job file; give the path of the YAML file"
        ) from None
    except UnicodeDecodeError as exc:
        raise JobError(
            f"{src}: job file is not UTF-8 text ({exc.reason} at byte offset "
            f"{exc.start}); save it as UTF-8"
        ) from None
    except OSError as exc:
        raise JobError(
            f"{src}: cannot read the job file ({exc.strerror or exc}); check its permissions"
        ) from None
    try:
        # Composing first gives line numbers for problems safe_load would hide or lose.
        check_nodes(yaml.compose(text, Loader=yaml.SafeLoader), src)
        raw = yaml.safe_load(text)
    except yaml.YAMLError as exc:
        raise JobError(f"{src}: {_describe_yaml_error(exc)}; fix the YAML syntax") from None
    except (ValueError, TypeError, AttributeError) as exc:  # a value YAML cannot construct
        raise JobError(
            f"{src}: a value cannot be read ({exc}); check the dates and any value "
            "with an explicit YAML tag such as !!int"
        ) from None
    if raw is None:
        raise JobError(
            f"{src}: job file is empty; it needs at least 'benchmark' and 'constituents'"
        )
    if not isinstance(raw, dict):
        raise JobError(
            f"{src}: the top level must be a mapping of keys such as 'benchmark:' and "
            f"'constituents:'; got a {yaml_kind(raw)}"
        )
    return raw


def _describe_yaml_error(exc: yaml.YAMLError) -> str:
    mark = getattr(exc, "problem_mark", None)
    problem = getattr(exc, "problem", None) or str(exc)
    context = getattr(exc, "context", None)
    where = f"line {mark.line + 1}, column {mark.column + 1}: " if mark is not None else ""
    return f"YAML error at {where}" + (f"{context}, " if context else "") + problem


def check_nodes(root: yaml.Node | None, src: str) -> None:
    """Reject duplicate keys (YAML would silently keep the last) and impossible dates."""
    constructor = yaml.SafeLoader("")
    stack, seen = [root], set()
    while stack:
        node = stack.pop()
        if node is None or id(node) in seen:
            continue
        seen.add(id(node))
        if isinstance(node, yaml.MappingNode):
            first: dict[tuple[str, str], int] = {}
            for key, value in node.value:
                if isinstance(key, yaml.ScalarNode) and key.tag != "tag:yaml.org,2002:merge":
                    line = key.start_mark.line + 1
                    if (key.tag, key.value) in first:
                        raise JobError(
                            f"{src}: key '{key.value}' appears twice in one mapping "
                            f"(lines {first[key.tag, key.value]} and {line}); keep one"
                        )
                    first[key.tag, key.value] = line
                stack.extend((key, value))
        elif isinstance(node, yaml.SequenceNode):
            stack.extend(node.value)
        elif node.tag == "tag:yaml.org,2002:timestamp":
            try:
                constructor.construct_yaml_timestamp(node)
            except (ValueError, AttributeError) as exc:  # AttributeError: '!!timestamp' on text
                where = f"line {node.start_mark.line + 1}, column {node.start_mark.column + 1}"
                reason = f" ({exc})" if isinstance(exc, ValueError) else ""
                raise JobError(
                    f"{src}: {node.value!r} at {where} is not a real date{reason}; "
                    "write a calendar date as YYYY-MM-DD"
                ) from None
