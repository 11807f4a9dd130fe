"""Rules on each visit as written, before any sky: ``catalog``, ``ids``, ``times`` and
``duration`` (README.md, *The night queue* and *Inputs*; common practice, no source).

- ``catalog``: the target is in the catalog, and the visit's kind, ICRS position,
  priority and program are the catalog's (done visits included);
- ``ids``: no id twice among the planned and done visits (a done id planned again also
  breaks rule ``done``); visit numbers start at 1;
- ``times``: a visit ends after it starts, and its UTC strings say the same instants as
  its seconds (to :data:`UTC_TOL_S`);
- ``duration``: a planned visit lasts its target's ``duration_min``.
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Iterable

import numpy as np

from scheduler.model.targets import Targets
from scheduler.verify.document import Entry
from scheduler.verify.report import Violation
from scheduler.verify.tolerances import (
    COORD_TOL_DEG,
    REL_TOL,
    TIME_TOL_S,
    UTC_TOL_S,
    ZERO_TOL,
)


def _label(v: Entry, done: bool) -> str:
    return f"done {v.id}" if done else v.id


def _catalog_entry(v: Entry, targets: Targets, where: str) -> list[Violation]:
    if v.target not in targets.names:
        return [Violation("catalog", where, f"target {v.target!r} is not in the catalog")]
    i = targets.index(v.target)
    found = []
    kind = "science" if targets.is_science[i] else "calibrator"
    if v.kind != kind:
        found.append(f"kind {v.kind!r}, the catalog says {kind!r}")
    ra, dec = math.degrees(targets.ra_rad[i]), math.degrees(targets.dec_rad[i])
    d_ra = abs((v.ra_deg - ra + 180.0) % 360.0 - 180.0)
    if d_ra > COORD_TOL_DEG or abs(v.dec_deg - dec) > COORD_TOL_DEG:
        found.append(f"position ({v.ra_deg:.6f}, {v.dec_deg:.6f}) deg, the catalog says "
                     f"({ra:.6f}, {dec:.6f})")  # fmt: skip
    if not math.isclose(v.priority, float(targets.priority[i]), rel_tol=REL_TOL, abs_tol=ZERO_TOL):
        found.append(f"priority {v.priority:g}, the catalog says {targets.priority[i]:g}")
    if v.program != targets.program[i]:
        found.append(f"program {v.program!r}, the catalog says {targets.program[i]!r}")
    return [Violation("catalog", where, f"{v.target}: {text}") for text in found]


def catalog_violations(visits: Iterable[Entry], done: Iterable[Entry],
                       targets: Targets) -> list[Violation]:  # fmt: skip
    """Each visit against its catalog row."""
    return [p for flag, group in ((False, visits), (True, done)) for v in group
            for p in _catalog_entry(v, targets, _label(v, flag))]  # fmt: skip


def id_violations(visits: tuple[Entry, ...], done: tuple[Entry, ...]) -> list[Violation]:
    """Ids used twice among the planned and done visits, and visit numbers below 1."""
    counts = Counter(v.id for v in (*visits, *done))
    found = [Violation("ids", vid, f"the id is used {n} times among the planned and done visits")
             for vid, n in sorted(counts.items()) if n > 1]  # fmt: skip
    for flag, group in ((False, visits), (True, done)):
        found += [Violation("ids", _label(v, flag), f"visit number {v.number} is below 1")
                  for v in group if v.number < 1]  # fmt: skip
    return found


def time_violations(visits: Iterable[Entry], done: Iterable[Entry]) -> list[Violation]:
    """Visits that do not end after they start, and UTC strings that disagree."""
    found = []
    for flag, group in ((False, visits), (True, done)):
        for v in group:
            where = _label(v, flag)
            if not v.end_s > v.start_s:
                found.append(Violation("times", where, f"ends at {v.end_s:.3f} s, not after "
                                       f"its start at {v.start_s:.3f} s"))  # fmt: skip
            for key, text_s, value_s in (("start", v.start_utc_s, v.start_s),
                                         ("end", v.end_utc_s, v.end_s)):  # fmt: skip
                if abs(text_s - value_s) > UTC_TOL_S:
                    found.append(Violation("times", where, f"{key}_utc is {text_s - value_s:+.3f}"
                                           f" s from {key}_s"))  # fmt: skip
    return found


def duration_violations(visits: Iterable[Entry], targets: Targets) -> list[Violation]:
    """Planned visits whose length is not their target's duration."""
    found = []
    for v in visits:
        if v.target not in targets.names:
            continue
        want = float(targets.duration_s[targets.index(v.target)])
        got = v.end_s - v.start_s
        if not np.isfinite(got) or abs(got - want) > TIME_TOL_S:
            found.append(Violation("duration", v.id, f"lasts {got / 60.0:.2f} min, the catalog "
                                   f"asks for {want / 60.0:.2f} min"))  # fmt: skip
    return found
