"""The search: a large-neighbourhood search over the route with the real transitions.

Start from a route (the greedy night), fill it (insertion until nothing more fits),
then repeat: destroy part of the best route (a stretch of consecutive visits, random
visits, the visits least worth their time, or targets near a random one on the sky),
drop the calibrators left serving nobody, repair by insertion, keep the result when it
is better.  The destroyed stretch grows while nothing improves and shrinks back when
something does.  Large-neighbourhood search (Shaw 1998) with several destroy operators
(Ropke & Pisinger 2006); references from memory.

Every route is timed with the oracle's transitions, so every route the search keeps can
be flown; the planner then times the best one exactly.  The search never returns
anything worse than the route it started from.
"""

from __future__ import annotations

import time
from collections import Counter
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from scheduler.queue.insertion import apply_best, candidate_moves
from scheduler.queue.route import Night, Route, bracket_faults, kept, route_value, time_route

MAX_FILL = 200  # insertions per repair, a safety stop
PENALTY_PER_S = 1e-7  # tie-break: of two routes worth the same, the shorter transitions
NOISE = 0.3  # relative noise of a randomised repair
DEVIATION = 0.03  # record-to-record travel: trials within 3 % of the best become current


@dataclass
class Budget:
    """When to stop: a wall-clock deadline (``time.perf_counter``), or, for
    reproducible runs, a number of timed routes (``evaluations``)."""

    deadline: float | None = None
    evaluations: int | None = None
    used: int = 0

    def spent(self) -> bool:
        if self.evaluations is not None:
            return self.used >= self.evaluations
        return self.deadline is not None and time.perf_counter() >= self.deadline


def score(night: Night, route: Route) -> float:
    """Value, less a tiny price for the time spent between visits; in a replan, plus
    the stability weight per previously planned visit kept, and first of all the
    time-critical visits planned before (each outweighs every other value)."""
    ends = route.ends(night)
    busy = sum(s - e for s, e in zip(route.starts[1:], ends[:-1], strict=False))
    critical, stable = kept(night, route)
    return (route_value(night, route) - PENALTY_PER_S * busy + night.stability * stable
            + keep_weight(night) * critical)  # fmt: skip


def keep_weight(night: Night) -> float:
    """More than everything the pool could earn: a kept time-critical visit wins."""
    return 1.0 + float(np.sum(night.q.rule.per_visit)) * max(night.allowed.values(), default=1)


def drop_idle_calibrators(night: Night, route: Route) -> Route:
    """Remove calibrators that bracket nobody, and science whose brackets broke, until
    the route is clean; re-timed (earlier where it can)."""
    for _ in range(len(route.targets) + 1):
        broken, idle = bracket_faults(night, route)
        gone = set(broken) | set(idle)
        if not gone:
            return route
        targets = [i for k, i in enumerate(route.targets) if k not in gone]
        starts = time_route(night, targets)
        if starts is None:  # removing visits changed a restart's first transition
            return Route([], [])
        route = Route(targets, starts)
    return route


Weight = Callable[[np.ndarray, np.ndarray], np.ndarray]


def repair_weight(rng: np.random.Generator) -> Weight | None:
    """How a repair ranks insertions, drawn at random: value per second (None), value
    first, or value per second with noise (a randomised construction)."""
    how = int(rng.integers(3))
    if how == 0:
        return None
    if how == 1:
        return lambda gain, extra: gain * 1e6 + gain / extra
    noise_seed = int(rng.integers(2**31))

    def noisy(gain: np.ndarray, extra: np.ndarray) -> np.ndarray:
        jitter = np.random.default_rng(noise_seed).uniform(1 - NOISE, 1 + NOISE, extra.shape)
        return gain / extra * jitter

    return noisy


def fill(night: Night, route: Route, budget: Budget, weight: Weight | None = None) -> Route:
    """Insert the best moves until none fits."""
    for _ in range(MAX_FILL):
        if budget.spent():
            break
        counts = Counter(route.targets)
        moves = candidate_moves(night, route, counts, weight)
        budget.used += 1
        new = apply_best(night, route, counts, moves)
        if new is None:
            break
        route = new
    return route


def _remove(night: Night, route: Route, gone: set[int]) -> Route:
    targets = [i for k, i in enumerate(route.targets) if k not in gone]
    starts = time_route(night, targets)
    if starts is None:  # a restart's first transition can grow: leave the route as it was
        return route
    return drop_idle_calibrators(night, Route(targets, starts))


def destroy(night: Night, route: Route, rng: np.random.Generator, size: int) -> Route:
    """One of four destroy operators, chosen at random, removing about ``size`` science
    visits (their idle calibrators follow)."""
    science = [k for k, i in enumerate(route.targets) if night.science[i]]
    if not science:
        return route
    size = max(1, min(size, len(science)))
    how = int(rng.integers(4))
    if how == 0:  # a stretch of consecutive visits
        first = int(rng.integers(len(science)))
        gone = set(science[first:first + size])
    elif how == 1:  # random visits
        gone = {int(k) for k in rng.choice(science, size=size, replace=False)}
    elif how == 2:  # least worth their time
        worth = [(night.q.rule.per_visit[route.targets[k]] / night.duration_s[route.targets[k]], k)
                 for k in science]  # fmt: skip
        gone = {k for _, k in sorted(worth)[:size]}
    else:  # near one on the sky
        est = night.oracle.estimate
        pivot = route.targets[int(rng.choice(science))]
        near = sorted(science, key=lambda k: est[pivot, route.targets[k]])
        gone = set(near[:size])
    return _remove(night, route, gone)


def from_relaxed(night: Night, targets: list[int], budget: Budget) -> Route:
    """A flyable route from a relaxed plan's order (the bounding model's, whose
    transitions are the shortest possible): visits that no longer fit are skipped,
    broken brackets dropped, then the route is filled."""
    route = Route([], [])
    for i in targets:
        trial = route.targets + [i]
        starts = time_route(night, trial, route, len(route.targets))
        budget.used += 1
        if starts is not None and Counter(trial)[i] <= night.allowed[i]:
            route = Route(trial, starts)
    return fill(night, drop_idle_calibrators(night, route), budget)


def search(night: Night, start: Route, budget: Budget, seed: int,
           progress: Callable[[float], None] | None = None,
           seeds: Callable[[], list[list[int]]] | None = None,
           ceiling: Callable[[], float] | None = None) -> Route:  # fmt: skip
    """The best route found from ``start`` within ``budget`` (never worse than it).

    Record-to-record travel: each trial destroys and repairs the current route and
    becomes current when it is within ``DEVIATION`` of the best (the best is kept
    apart).  ``seeds()`` may hand over relaxed plans (target orders) found meanwhile;
    each is made flyable (:func:`from_relaxed`) and becomes current when it comes close
    to the best.  The search stops early when the best reaches ``ceiling()``, a
    proven bound: nothing better exists."""
    rng = np.random.default_rng(seed)
    first = Budget()  # the first repair always runs to its end (MAX_FILL bounds it), so a
    best = fill(night, drop_idle_calibrators(night, start), first)  # busy machine still
    budget.used += first.used  # gets the kept time-critical visits back
    if score(night, best) < score(night, start):
        best = start
    current, size = best, 1
    if progress:
        progress(route_value(night, best))
    while not budget.spent():
        if ceiling is not None and route_value(night, best) >= ceiling() - 1e-9:
            break
        trials = [from_relaxed(night, order, budget) for order in (seeds() if seeds else [])]
        trials.append(fill(night, destroy(night, current, rng, size), budget,
                           repair_weight(rng)))
        for trial in trials:
            gain = score(night, trial) - score(night, best)
            if gain > 1e-9:
                best, current, size = trial, trial, 1
                if progress:
                    progress(route_value(night, best))
            elif score(night, trial) >= (1.0 - DEVIATION) * score(night, best):
                current = trial
                science = sum(1 for i in current.targets if night.science[i])
                size = size + 1 if size < max(2, science // 2) else 1
            else:
                size = 1
    return best
