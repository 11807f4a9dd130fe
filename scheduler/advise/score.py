"""Observable hours of the pool for many set-up choices of one configuration at once.

Everything but the delay lines' reach (altitude, horizon masks, Sun, Moon, wind,
brightness, over-resolution on the configuration's baselines, time windows) is the
same for every choice of a configuration: it is judged once, on the night's grid, with
the lines' ranges set aside.  Only the samples it leaves open are then judged for every
choice, by the max/min of :mod:`scheduler.geometry.reach`.

Hours are counted by the midpoint rule on a grid of ``step_s``: each open sample
stands for one step, so a target open all night gets the whole dark time.  A science
target *opens* with a choice when its hours reach one visit's duration.  A target's
*best headroom* is the most room its carriages have at any open sample.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np

from scheduler.geometry.constraints import evaluate
from scheduler.geometry.reach import headroom_chunks, station_terms
from scheduler.model.problem import NightProblem

UNBOUNDED_M = 1e9  # a delay-line range that constrains nothing


@dataclass(frozen=True, eq=False)
class PoolSky:
    """One configuration's pool on the night's grid.  ``science`` (T,) indexes the
    scored targets in the catalog, ``weight`` (T,) their priority; ``sample_of`` (N,)
    the scored target of each open sample (sorted), ``d_m`` (S, N) the station terms
    there; ``step_s`` the time each sample stands for."""

    problem: NightProblem
    science: np.ndarray
    weight: np.ndarray
    sample_of: np.ndarray
    d_m: np.ndarray
    step_s: float

    @property
    def duration_s(self) -> np.ndarray:
        return self.problem.targets.duration_s[self.science]


def midpoints(problem: NightProblem, step_s: float) -> tuple[np.ndarray, float]:
    """Times at the middle of equal steps of at most ``step_s`` over the dark night."""
    n = max(1, int(np.ceil(problem.night.duration_s / step_s)))
    step = problem.night.duration_s / n
    return problem.night.start_s + step * (np.arange(n) + 0.5), step


def pool_sky(problem: NightProblem, step_s: float) -> PoolSky:
    """The pool's science targets judged on everything but the delay lines' reach."""
    b = problem.beams
    free = replace(b, opd_min_m=np.full(len(b), -UNBOUNDED_M),
                   opd_max_m=np.full(len(b), UNBOUNDED_M))  # fmt: skip
    loose = replace(problem, beams=free)
    times, step = midpoints(problem, step_s)
    science = np.flatnonzero(problem.targets.is_science)
    ev = evaluate(loose, science[:, None], times[None, :])
    rows, cols = np.nonzero(ev.ok)  # row-major: sorted by target
    d = station_terms(b, ev.pds_m[:, rows, cols])
    return PoolSky(problem, science, problem.targets.priority[science].astype(float),
                   rows, d, step)  # fmt: skip


@dataclass(frozen=True, eq=False)
class Scores:
    """Per choice (C) and scored target (T): observable ``hours``, ``best_headroom_m``
    (NaN where never open), and ``weighted_hours`` (C,), the priority-weighted sum."""

    hours: np.ndarray
    best_headroom_m: np.ndarray
    weighted_hours: np.ndarray

    def opens(self, duration_s: np.ndarray) -> np.ndarray:
        """(C, T): where a target is open long enough for one visit."""
        return self.hours * 3600.0 >= duration_s[None, :] - 1e-6


def score_choices(sky: PoolSky, lo_m: np.ndarray, hi_m: np.ndarray,
                  tick: Callable[[int], None] | None = None) -> Scores:  # fmt: skip
    """:class:`Scores` of choices with line constants ``lo_m``, ``hi_m`` (C, S);
    ``tick(done)`` after each chunk of choices."""
    count, n_t = lo_m.shape[0], len(sky.science)
    hours = np.zeros((count, n_t))
    best = np.full((count, n_t), np.nan)
    present, starts = np.unique(sky.sample_of, return_index=True)
    margin = sky.problem.margins.delay_m
    for a, b, room in headroom_chunks(lo_m, hi_m, sky.d_m):
        if present.size:
            ok = room >= margin
            hours[a:b, present] = np.add.reduceat(ok, starts, axis=1) * (sky.step_s / 3600.0)
            np.copyto(room, -np.inf, where=~ok)
            peak = np.maximum.reduceat(room, starts, axis=1)
            best[a:b, present] = np.where(np.isfinite(peak), peak, np.nan)
        if tick is not None:
            tick(b)
    return Scores(hours, best, hours @ sky.weight)
