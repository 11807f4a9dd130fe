"""A route: the night as an ordered list of targets, timed as early as possible.

The search moves targets in and out of a route; this module times a route (each visit
at the earliest start its windows, its target's visit separation and the transition
from the previous visit allow, transitions from the :class:`~scheduler.queue.oracle.Oracle`),
checks the calibrator brackets and says what it earns.  Visits of one target are
interchangeable here (same length, same windows): the ids are given in time order when
the route becomes a sequence of candidates.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field

import numpy as np

from scheduler.model.plan import Candidate, Start
from scheduler.queue.oracle import Oracle
from scheduler.queue.prepare import QueueInputs

FIT_TRIES = 4  # fixed-point steps between a start and the transition it needs
ERROR_STEP = 0.005  # calibration errors closer than this rank as equal
ESTIMATE_STEP_S = 60.0  # transition estimates closer than this rank as equal


@dataclass(frozen=True, eq=False)
class Night:
    """What routes are timed against: per target its start windows, length, visit
    separation, how many visits it may have, and the calibrator rules."""

    q: QueueInputs
    oracle: Oracle
    t0_s: float
    end_s: float
    starts: dict[int, tuple[tuple[float, float], ...]]
    duration_s: dict[int, float]
    separation_s: dict[int, float]
    science: dict[int, bool]
    needs_cal: dict[int, bool]
    allowed: dict[int, int]  # target -> most visits (science) or copies (calibrators)
    done: dict[int, int]  # target -> science visits done before a restart
    last_end: dict[int, float]  # target -> end of its last done visit
    fixed_cals: tuple[tuple[int, float, float], ...]  # done calibrators (target, start, end)
    gap_s: float
    cal_rank: np.ndarray  # (N, R) per target, suitable calibrator targets nearest first, -1 pad
    previous: dict[int, int] = field(default_factory=dict)  # target -> visits planned before
    keep: frozenset[int] = frozenset()  # time-critical targets planned before: kept if possible
    stability: float = 0.0  # value units per previously planned visit kept

    @classmethod
    def of(cls, q: QueueInputs, oracle: Oracle, origin: Start | None) -> Night:
        t = q.problem.targets
        starts: dict[int, tuple[tuple[float, float], ...]] = {}
        allowed: dict[int, int] = {}
        for c in q.candidates:
            starts.setdefault(c.target, c.starts)
            allowed[c.target] = allowed.get(c.target, 0) + 1
        idx = list(starts)
        fixed = tuple((c.target, st, st + c.duration_s) for c, st in origin.fixed) if origin else ()
        night = q.problem.night
        return cls(q, oracle, origin.t_s if origin else night.start_s, night.end_s, starts,
                   {i: float(t.duration_s[i]) for i in idx},
                   {i: float(t.min_separation_s[i]) for i in idx},
                   {i: bool(t.is_science[i]) for i in idx},
                   {i: bool(t.needs_calibrator[i]) for i in idx}, allowed,
                   dict(origin.done_count) if origin else {},
                   dict(origin.last_end) if origin else {}, fixed,
                   q.settings.calibrator_gap_s, _cal_rank(q, oracle, allowed),
                   *_previous(q, origin))  # fmt: skip

    def earliest(self, target: int, t_s: float) -> float | None:
        """The first allowed start of ``target`` at or after ``t_s``."""
        for a, b in self.starts[target]:
            if t_s <= b:
                return max(a, t_s)
        return None

    def window_end(self, target: int, start_s: float) -> float:
        """The last allowed start in the window that holds ``start_s``."""
        for a, b in self.starts[target]:
            if a <= start_s <= b:
                return b
        return start_s


def _previous(q: QueueInputs, origin: Start | None
              ) -> tuple[dict[int, int], frozenset[int], float]:  # fmt: skip
    """A replan's previous plan: visits per target still planned, the time-critical
    targets among them, and the stability weight."""
    if origin is None:
        return {}, frozenset(), 0.0
    by_id = {c.id: c.target for c in q.candidates}
    counts: dict[int, int] = {}
    for vid, _ in origin.previous:
        if vid in by_id:
            counts[by_id[vid]] = counts.get(by_id[vid], 0) + 1
    t = q.problem.targets
    keep = frozenset(i for i in counts if t.is_science[i] and t.is_time_critical(i))
    return counts, keep, origin.stability_weight


def _cal_rank(q: QueueInputs, oracle: Oracle, allowed: dict[int, int]) -> np.ndarray:
    """Per catalog target, the calibrator targets of the pool that suit it, best first
    (calibration error, then transition time, then airmass match), padded with -1."""
    t = q.problem.targets
    pool = np.array(sorted(j for j in allowed if not t.is_science[j]), int)
    n = len(t)
    # airmass on the meridian, 1 / cos(dec - latitude): at equal hour angles the airmass
    # of two targets differs mostly through their declinations
    transit = 1.0 / np.maximum(np.cos(t.dec_rad - q.problem.night.frame.latitude_rad), 0.05)
    rows = []
    for i in range(n):
        fit = pool[q.suits[i, pool]] if len(pool) else pool
        # smaller calibration error first (in steps of 0.005 in V^2), then nearer (in
        # steps of a minute of transition), then the closer airmass
        rank = np.lexsort((np.abs(transit[fit] - transit[i]),
                           np.round(oracle.estimate[fit, i] / ESTIMATE_STEP_S),
                           np.round(q.cal_error[fit] / ERROR_STEP)))  # fmt: skip
        rows.append(fit[rank])
    width = max([len(r) for r in rows] + [1])
    out = np.full((n, width), -1)
    for i, r in enumerate(rows):
        out[i, :len(r)] = r
    return out


@dataclass
class Route:
    """Targets in order with their start times (POSIX s); ``starts[k]`` is None only
    while a route is being built and has not fitted."""

    targets: list[int]
    starts: list[float] = field(default_factory=list)

    def ends(self, night: Night) -> list[float]:
        return [s + night.duration_s[i] for i, s in zip(self.targets, self.starts, strict=True)]

    def copy(self) -> Route:
        return Route(list(self.targets), list(self.starts))


def _fit(night: Night, prev: tuple[int, float] | None, target: int, ready: float) -> float | None:
    """Earliest start of ``target`` after ``prev`` = (target, end) or the route's start."""
    o = night.oracle
    if prev is None:
        s = night.earliest(target, max(ready, night.t0_s))
        for _ in range(FIT_TRIES):
            if s is None:
                return None
            need = night.t0_s + o.first(target, s)
            if need <= s:
                return s
            s = night.earliest(target, need)
        return None
    ia, ta = prev
    s = night.earliest(target, max(ready, ta + night.q.problem.overheads.acquisition_s))
    for _ in range(FIT_TRIES):
        if s is None:
            return None
        need = ta + o.total(ia, ta, target, s)
        if need <= s:
            return s
        s = night.earliest(target, need)
    return None


def time_route(night: Night, targets: list[int], keep: Route | None = None,
               from_k: int = 0) -> list[float] | None:  # fmt: skip
    """Start of every visit of ``targets`` in order, or None when one cannot be placed
    (no window left, or past the night).  With ``keep`` the first ``from_k`` starts are
    taken from it unchanged (the prefix a change did not touch)."""
    starts: list[float] = list(keep.starts[:from_k]) if keep is not None else []
    last_end = dict(night.last_end)
    prev: tuple[int, float] | None = None
    for i, s in zip(targets[:from_k], starts, strict=False):
        end = s + night.duration_s[i]
        last_end[i], prev = end, (i, end)
    for i in targets[len(starts):]:
        ready = last_end.get(i, -np.inf) + night.separation_s[i]
        fit = _fit(night, prev, i, ready)
        if fit is None or fit + night.duration_s[i] > night.end_s:
            return None
        starts.append(fit)
        end = fit + night.duration_s[i]
        last_end[i], prev = end, (i, end)
    return starts


def bracket_faults(night: Night, route: Route) -> tuple[list[int], list[int]]:
    """(science positions lacking a bracket, calibrator positions serving nobody)."""
    suits, gap = night.q.suits, night.gap_s
    ends = route.ends(night)
    cals = [(k, i, route.starts[k], ends[k]) for k, i in enumerate(route.targets)
            if not night.science[i]]  # fmt: skip
    done = [(-1, i, s, e) for i, s, e in night.fixed_cals]
    used: set[int] = set()
    broken = []
    for k, i in enumerate(route.targets):
        if not night.science[i] or not night.needs_cal[i]:
            continue
        s, e = route.starts[k], ends[k]
        before = [c for c in cals + done if suits[i, c[1]] and 0 <= s - c[3] <= gap]
        after = [c for c in cals if suits[i, c[1]] and 0 <= c[2] - e <= gap]
        if not before or not after:
            broken.append(k)
            continue
        used.add(max(before, key=lambda c: c[3])[0])  # the nearest ones serve; others may go
        used.add(min(after, key=lambda c: c[2])[0])
    idle = [k for k, _, _, _ in cals if k not in used]
    return broken, idle


def route_value(night: Night, route: Route) -> float:
    """What the route's science earns under the value rule (done visits counted)."""
    return night.q.rule.of_targets((i for i in route.targets if night.science[i]), night.done)


def kept(night: Night, route: Route) -> tuple[int, int]:
    """(time-critical visits kept, all visits kept) of a replan's previous plan."""
    counts = Counter(route.targets)
    critical = sum(min(counts[i], night.previous[i]) for i in night.keep)
    return critical, sum(min(counts[i], n) for i, n in night.previous.items())


def to_sequence(night: Night, route: Route) -> list[tuple[Candidate, float]]:
    """The route as (candidate, start) pairs, visit numbers given in time order."""
    pool: dict[int, list[Candidate]] = {}
    for c in night.q.candidates:
        pool.setdefault(c.target, []).append(c)
    for cs in pool.values():
        cs.sort(key=lambda c: c.number)
    taken: dict[int, int] = {}
    out = []
    for i, s in zip(route.targets, route.starts, strict=True):
        k = taken.get(i, 0)
        out.append((pool[i][k], s))
        taken[i] = k + 1
    return out


def from_sequence(seq: list[tuple[Candidate, float]]) -> Route:
    return Route([c.target for c, _ in seq], [s for _, s in seq])
