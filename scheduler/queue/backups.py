"""Backups: what to observe instead if the conditions get one step worse.

For every full hour of the night, the science targets the plan leaves out (or with
visits left) that stay observable for a whole visit starting in that hour when the
seeing is 1.25 times and the coherence time 0.8 times what the plan assumed
(:meth:`~scheduler.model.conditions.Conditions.worse`), with a suitable calibrator also
observable within the bracket gap when they need one; best value first, a few an hour.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from scheduler.geometry.windows import TargetWindows, observable_windows
from scheduler.model.brightness import faint_codes_of
from scheduler.model.plan import Visit
from scheduler.queue.prepare import QueueInputs

PER_HOUR = 3
HOUR_S = 3600.0


def _fits(w: TargetWindows, duration_s: float, lo: float, hi: float) -> bool:
    """A start in [lo, hi) keeps the whole visit inside one window."""
    return any(max(a, lo) < min(b, hi) for a, b in w.start_windows(duration_s))


def backups(q: QueueInputs, visits: list[Visit]) -> tuple[tuple[float, tuple[str, ...]], ...]:
    """(full hour POSIX s, target names best first) for each hour of the night."""
    p = q.problem
    worse = p.conditions.worse()
    harder = replace(p, conditions=worse,
                     faint=faint_codes_of(p.targets, p.modes, p.mode_index, worse))  # fmt: skip
    windows = observable_windows(harder)
    t, gap = p.targets, q.settings.calibrator_gap_s
    planned: dict[int, int] = {}
    for v in visits:
        planned[v.target] = planned.get(v.target, 0) + 1
    left = [i for i in np.flatnonzero(t.is_science) if planned.get(int(i), 0) < t.visits[i]]
    left.sort(key=lambda i: -float(q.rule.per_visit[i]))
    out = []
    first = np.ceil(p.night.start_s / HOUR_S) * HOUR_S
    for hour in np.arange(first - HOUR_S, p.night.end_s, HOUR_S):
        lo, hi = max(hour, p.night.start_s), min(hour + HOUR_S, p.night.end_s)
        names = []
        for i in left:
            d = float(t.duration_s[i])
            if not _fits(windows[i], d, lo, hi):
                continue
            if t.needs_calibrator[i] and not any(
                    _fits(windows[j], float(t.duration_s[j]), lo - gap, hi + d + gap)
                    for j in np.flatnonzero(q.suits[i])):  # fmt: skip
                continue
            names.append(t.names[i])
            if len(names) == PER_HOUR:
                break
        if names:
            out.append((float(max(hour, first - HOUR_S)), tuple(names)))
    return tuple(out)
