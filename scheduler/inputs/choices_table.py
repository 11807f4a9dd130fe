"""The set-up choices of an array file: fixed delays that can be inserted and routing.

```toml
[[fixed_delays]]
line = "rail-2"
options_m = [0.0, 30.0, 60.0, 90.0]   # optical path, metres

[routing]
free = true   # any delay line may be fed by any station of a configuration
```

Both are optional.  A line has at most one ``[[fixed_delays]]`` table; its options are
distinct finite numbers (at most :data:`MAX_OPTIONS`).  A configuration's own
``fixed_offsets_m`` stays what it is tonight: ``opdplan advise`` compares every choice
with it.
"""

from __future__ import annotations

import math
from typing import Any

from scheduler.model.array import DelayLine, FixedDelayOptions
from scheduler.model.errors import ProblemList

MAX_OPTIONS = 32
MAX_FIXED_DELAY_M = 10_000.0


def read_fixed_delays(raw: Any, lines: list[DelayLine],
                      problems: ProblemList) -> tuple[FixedDelayOptions, ...]:  # fmt: skip
    """The ``[[fixed_delays]]`` tables, with every problem recorded in ``problems``."""
    if raw is None:
        return ()
    if not isinstance(raw, list):
        problems.add("fixed_delays", "must be an array of tables ([[fixed_delays]])")
        return ()
    names = {d.name for d in lines}
    out: list[FixedDelayOptions] = []
    seen: set[str] = set()
    for i, t in enumerate(raw):
        where = f"fixed_delays[{i}]"
        if not isinstance(t, dict):
            problems.add(where, f"must be a table, got {type(t).__name__}")
            continue
        for key in sorted(t.keys() - {"line", "options_m"}):
            problems.add(f"{where}.{key}", "unknown key (allowed: ['line', 'options_m'])")
        line = t.get("line")
        if not isinstance(line, str) or line not in names:
            problems.add(f"{where}.line", f"delay line {line!r} does not exist")
            line = None
        elif line in seen:
            problems.add(f"{where}.line", f"delay line {line!r} already has fixed delays")
        options = _options(t.get("options_m"), f"{where}.options_m", problems)
        if line is not None and options:
            seen.add(line)
            out.append(FixedDelayOptions(line, options))
    return tuple(out)


def _options(raw: Any, where: str, problems: ProblemList) -> tuple[float, ...]:
    ok = isinstance(raw, list) and 0 < len(raw) <= MAX_OPTIONS and all(
        isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)
        and abs(v) <= MAX_FIXED_DELAY_M for v in raw)  # fmt: skip
    if not ok:
        problems.add(where, f"must list 1-{MAX_OPTIONS} finite numbers of metres "
                     f"(|x| <= {MAX_FIXED_DELAY_M:g}), got {raw!r}")  # fmt: skip
        return ()
    if len(set(raw)) != len(raw):
        problems.add(where, f"options must differ, got {raw!r}")
        return ()
    return tuple(float(v) for v in raw)


def read_routing(raw: Any, problems: ProblemList) -> bool:
    """``[routing] free``: whether any delay line may be fed by any station."""
    if raw is None:
        return False
    if not isinstance(raw, dict):
        problems.add("routing", f"must be a table, got {type(raw).__name__}")
        return False
    for key in sorted(raw.keys() - {"free"}):
        problems.add(f"routing.{key}", "unknown key (allowed: ['free'])")
    free = raw.get("free", False)
    if not isinstance(free, bool):
        problems.add("routing.free", f"must be true or false, got {free!r}")
        return False
    return free
