"""Parser for the ``screen`` section: what the data screen does with each finding, thresholds.

The screen itself runs in the data layer (:mod:`trackfit.data.screen`); a job without the
section is screened with the defaults of :class:`~trackfit.jobfile.specs.ScreenSpec`.
"""

from __future__ import annotations

import math
from typing import Any

from trackfit.jobfile.checks import Reader
from trackfit.jobfile.specs import SCREEN_ACTION_KEYS, ScreenSpec

#: What the screen may do with a finding.
ACTIONS = ("stop", "warn", "leave_out")
#: Values in the wrong units are wrong on every date; leaving dates out cannot mend them.
UNIT_ACTIONS = ("stop", "warn")
_THRESHOLDS = ("jump_mads", "benchmark_mads", "stale_periods")
_KEYS = (*SCREEN_ACTION_KEYS.values(), *_THRESHOLDS)


def parse_screen(r: Reader, value: Any) -> ScreenSpec:
    """The ``screen`` section; absent or null means every default."""
    s = r.section("screen", value, _KEYS)
    if s.get("units") == "leave_out":
        raise r.error(
            "'screen.units' cannot be 'leave_out': values in the wrong units are wrong on "
            "every date, so no date can be left out to mend them; use 'stop' or 'warn' and "
            "fix data.values / data.returns_unit or the files"
        )
    actions = {
        key: r.choice(
            f"screen.{key}",
            s.get(key),
            UNIT_ACTIONS if key == "units" else ACTIONS,
            getattr(ScreenSpec, key),
        )
        for key in SCREEN_ACTION_KEYS.values()
    }
    must = "a number of robust spreads > 0, such as {:g}"
    mads = {
        key: (
            getattr(ScreenSpec, key)
            if s.get(key) is None
            else _positive(r, f"screen.{key}", s[key], must.format(getattr(ScreenSpec, key)))
        )
        for key in ("jump_mads", "benchmark_mads")
    }
    stale = r.integer(
        "screen.stale_periods",
        s.get("stale_periods"),
        1,
        ScreenSpec.stale_periods,
        "an integer >= 1 (the longest run of unchanged prices that passes), such as 5",
    )
    return ScreenSpec(**actions, **mads, stale_periods=stale)


def _positive(r: Reader, key: str, value: Any, must: str) -> float:
    number = r.number(key, value, 0.0, math.inf, must)
    if number == 0.0:
        raise r.bad(key, must, value)
    return number
