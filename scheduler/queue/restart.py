"""Restarting a queue mid-night: candidates restricted to what is still possible.

Pure functions over candidates and a :class:`~scheduler.model.plan.Start`: done visits
are removed, no visit may start before the start time or overlap a closure, and a
target's next visit keeps its separation from the last one done.
"""

from __future__ import annotations

import numpy as np

from scheduler.model.plan import Candidate, Start


def allowed_starts(starts: tuple[tuple[float, float], ...], earliest_s: float,
                   closures: tuple[tuple[float, float], ...],
                   duration_s: float) -> tuple[tuple[float, float], ...]:  # fmt: skip
    """Start windows from ``earliest_s`` on, with no visit of ``duration_s`` overlapping
    any closure ``(a, b)`` (a start in ``(a - duration, b)`` would)."""
    out = []
    for lo, hi in starts:
        pieces = [(max(lo, earliest_s), hi)]
        for a, b in closures:
            cut = []
            for x, y in pieces:
                if y <= a - duration_s or x >= b:
                    cut.append((x, y))
                    continue
                if x <= a - duration_s:
                    cut.append((x, a - duration_s))
                if y >= b:
                    cut.append((b, y))
            pieces = cut
        out += [(x, y) for x, y in pieces if x <= y]
    return tuple(sorted(out))


def restrict(cands: list[Candidate] | tuple[Candidate, ...], start: Start,
             min_separation_s: np.ndarray) -> list[Candidate]:  # fmt: skip
    """Candidates still possible after ``start``: done ones removed, windows cut."""
    last_end = dict(start.last_end)
    out: list[Candidate] = []
    for c in cands:
        if c.id in start.done:
            continue
        earliest = start.t_s
        if c.target in last_end and c.is_science:
            earliest = max(earliest, last_end[c.target] + float(min_separation_s[c.target]))
        starts = allowed_starts(c.starts, earliest, start.closures, c.duration_s)
        if starts:
            out.append(c.with_starts(starts))
    return out
