"""Typed, path-aware accessors for job file values; each problem is a JobError with one wording.

Every message names the job file and the key path and follows one template:
``'<key>' must be <what is allowed>; got <value>.``, with a hint when YAML probably read the
value differently than the user meant (``2020`` as a number, ``1e-3`` as text).
"""

from __future__ import annotations

import difflib
import math
import re
from datetime import date, datetime
from pathlib import Path
from typing import Any

from trackfit.errors import JobError

_ISO_DATE = re.compile(r"\d{4}-\d{2}-\d{2}")


def yaml_kind(value: Any) -> str:
    """What YAML made of a value, in the words of a job file's author."""
    if isinstance(value, bool):
        return "boolean"
    if isinstance(value, (datetime, date)):
        return "date"
    return {int: "number", float: "number", str: "string", list: "list", dict: "mapping"}.get(
        type(value), type(value).__name__
    )


def got(value: Any, want: str = "") -> str:
    """``repr(value)``, shortened, with a hint when YAML probably read it differently than meant."""
    text = repr(value)
    if len(text) > 80:
        text = text[:77] + "..."
    if want == "text" and isinstance(value, (bool, int, float, date)):
        return f"{text} (YAML read this as a {yaml_kind(value)}; put it in quotes)"
    if want == "number" and isinstance(value, str):
        try:
            float(value)
        except ValueError:
            return text
        if re.fullmatch(r"[-+]?[0-9.]+[eE][-+]?[0-9]+", value.strip()):
            return f"{text} (YAML reads this exponent form as text; write it as 0.001 or 1.0e-3)"
        return f"{text} (text, not a number; remove the quotes)"
    return text


def closest(value: Any, allowed: tuple[str, ...]) -> str | None:
    """The allowed word nearest to ``value`` (ignoring case), if any is near enough."""
    if not isinstance(value, str):
        return None
    lowered = {a.lower(): a for a in allowed}
    close = difflib.get_close_matches(value.lower(), list(lowered), n=1)
    return lowered[close[0]] if close else None


class Reader:
    """Typed, path-aware accessors that raise JobError naming the job file and the key path.

    Parameters
    ----------
    src : str
        How messages name the job file.
    base : Path
        Folder relative paths start from (the job file's).
    """

    def __init__(self, src: str, base: Path) -> None:
        self.src = src
        self.base = base

    def error(self, message: str) -> JobError:
        return JobError(f"{self.src}: {message}")

    def bad(
        self, key: str, must: str, value: Any, want: str = "", suggest: str | None = None
    ) -> JobError:
        """The one template: "'<key>' must be <must>; got <value>." (plus a suggestion)."""
        end = f"; did you mean '{suggest}'?" if suggest else "."
        return self.error(f"'{key}' must be {must}; got {got(value, want)}{end}")

    def section(self, key: str, value: Any, allowed: tuple[str, ...]) -> dict:
        """A mapping (null = empty) whose keys are all in ``allowed``."""
        if value is None:
            return {}
        if not isinstance(value, dict):
            names = ", ".join(f"'{k}'" for k in allowed)
            raise self.bad(key, f"a mapping with keys among {names}", value)
        for name in value:
            if name not in allowed:
                raise self.unknown(key, name, allowed)
        return value

    def labelled(self, key: str, value: Any, what: str) -> dict[str, Any]:
        """A mapping (null = empty) whose keys are free labels, each a non-empty string."""
        if value is None:
            return {}
        if not isinstance(value, dict):
            raise self.bad(key, f"a mapping from {what} to {{min, max}} bounds", value)
        for label in value:
            if not isinstance(label, str) or not label.strip():
                raise self.error(
                    f"every {what} under '{key}' must be a non-empty string; "
                    f"got {got(label, 'text')}."
                )
        return value

    def unknown(
        self, prefix: str, name: Any, allowed: tuple[str, ...], what: str = "key"
    ) -> JobError:
        full = f"{prefix}.{name}" if prefix else str(name)
        message = f"unknown {what} '{full}'"
        if not isinstance(name, str):
            return self.error(
                f"{message} (YAML read it as a {yaml_kind(name)}); allowed: {', '.join(allowed)}"
            )
        close = closest(name, allowed)
        return self.error(
            f"{message}; did you mean '{close}'?"
            if close
            else f"{message}; allowed: {', '.join(allowed)}"
        )

    def text(self, key: str, value: Any, default: str | None = None) -> str | None:
        if value is None:
            return default
        if not isinstance(value, str) or not value.strip():
            raise self.bad(key, "a non-empty string", value, "text")
        return value

    def choice(self, key: str, value: Any, allowed: tuple[str, ...], default: str) -> str:
        if value is None:
            return default
        if not isinstance(value, str) or value not in allowed:
            raise self.bad(
                key,
                "one of " + ", ".join(f"'{a}'" for a in allowed),
                value,
                suggest=closest(value, allowed),
            )
        return value

    def boolean(self, key: str, value: Any, default: bool) -> bool:
        if value is None:
            return default
        if not isinstance(value, bool):
            raise self.bad(key, "true or false", value)
        return value

    def integer(
        self, key: str, value: Any, minimum: int, default: int | None, must: str | None = None
    ) -> int | None:
        """An int >= ``minimum``; bools, floats such as 5.0 and strings such as '5' are rejected."""
        if value is None:
            return default
        if type(value) is not int or value < minimum:
            raise self.bad(key, must or f"an integer >= {minimum}", value, "number")
        return value

    def number(
        self,
        key: str,
        value: Any,
        minimum: float = -math.inf,
        maximum: float = math.inf,
        must: str | None = None,
    ) -> float:
        """A finite number in ``[minimum, maximum]`` (bools and strings rejected)."""
        if must is None:
            if math.isinf(minimum) and math.isinf(maximum):
                must = "a finite number"
            elif math.isinf(maximum):
                must = f"a number >= {minimum:g}"
            else:
                must = f"a number from {minimum:g} to {maximum:g}"
        if (
            isinstance(value, bool)
            or not isinstance(value, (int, float))
            or not math.isfinite(value)
            or not minimum <= value <= maximum
        ):
            raise self.bad(key, must, value, "number")
        return float(value)

    def fraction(self, key: str, value: Any) -> float:
        """A number strictly between 0 and 1 (bools and strings rejected)."""
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0 < value < 1:
            raise self.bad(key, "a number strictly between 0 and 1", value, "number")
        return float(value)

    def path(self, key: str, value: Any, default: str | None = None) -> Path:
        value = self.text(key, value, default)
        if value is None:
            raise self.error(
                f"'{key}' is required: the path of a file, relative to the job file's folder"
            )
        given = Path(value).expanduser()
        return (given if given.is_absolute() else self.base / given).resolve()

    def day(self, key: str, value: Any) -> date | None:
        if value is None:
            return None
        if isinstance(value, datetime):
            raise self.bad(key, "a date without a time of day (YYYY-MM-DD)", value)
        if isinstance(value, date):
            return value
        if isinstance(value, str) and _ISO_DATE.fullmatch(value.strip()):
            try:
                return date.fromisoformat(value.strip())
            except ValueError:
                pass
        raise self.bad(key, "a calendar date written YYYY-MM-DD", value)

    def required(self, key: str, value: Any, what: str) -> None:
        if value is None:
            raise self.error(f"'{key}' is required: {what}")
