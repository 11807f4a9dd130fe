"""The night queue's data: settings, candidate visits, scheduled visits, the plan.

Frozen dataclasses; times in POSIX UTC seconds, paths in metres of optical path.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True)
class PlanSettings:
    """Rules of the queue (defaults documented in README.md).

    ``carriage_weight`` is the objective's price of one second of carriage
    repositioning, in priority x seconds of science: 1.0 means a second of carriage
    travel weighs as much as one second of priority-1 science (small: a night's moves
    add up to minutes, its science to hours).
    """

    calibrator_gap_s: float = 3600.0
    calibrator_max_sep_rad: float = float(np.radians(10.0))
    calibrator_max_dmag: float = 1.5
    calibrator_min_visibility: float = 0.8
    wavelength_m: float = 1.65e-6
    calibrator_copies: int = 3
    carriage_weight: float = 1.0
    time_limit_s: float = 20.0
    seed: int = 0
    deterministic: bool = False


@dataclass(frozen=True)
class Candidate:
    """A visit that may be scheduled: ``target`` indexes the catalog; ``number`` is the
    visit number of a science target or the copy number of a calibrator."""

    id: str
    target: int
    number: int
    duration_s: float
    value: float  # priority x hours of science; 0 for calibrators
    starts: tuple[tuple[float, float], ...]  # start windows

    def earliest_start(self, t_s: float) -> float | None:
        """The first allowed start at or after ``t_s``, None if there is none."""
        for a, b in self.starts:
            if t_s <= b:
                return max(a, t_s)
        return None


@dataclass(frozen=True)
class Visit:
    """A scheduled visit with its exact times, transition before it and carriage paths."""

    id: str
    target: int
    start_s: float
    end_s: float
    slew_s: float
    carriage_s: float
    acquisition_s: float
    transition_s: float
    opd_start_m: tuple[float, ...]
    opd_end_m: tuple[float, ...]
    alt_range_rad: tuple[float, float]
    calibrates: tuple[str, ...] = ()


@dataclass(frozen=True)
class Plan:
    visits: tuple[Visit, ...]
    unscheduled: tuple[tuple[str, str], ...]  # (target, reason)
    summary: dict = field(default_factory=dict)


@dataclass(frozen=True)
class Start:
    """Where a queue starts when it is not the start of the night (a replan).

    ``t_s``: nothing starts before it; ``target``: where the telescopes point then
    (catalog index, None when unknown: the worst slew is assumed); ``opd_m``: carriage
    paths then, one per line in use (None: free); ``fixed``: done calibrator visits as
    (candidate, start_s), usable in brackets; ``done``: ids of done visits;
    ``last_end``: per target, the end of its last done visit (for visit separation);
    ``closures``: (from_s, to_s) when nothing may be observed; ``previous``: the old
    plan's remaining visits as (id, start_s), the warm start and what stability keeps.
    """

    t_s: float
    target: int | None = None
    opd_m: tuple[float, ...] | None = None
    fixed: tuple = ()
    done: frozenset[str] = frozenset()
    last_end: tuple[tuple[int, float], ...] = ()
    closures: tuple[tuple[float, float], ...] = ()
    previous: tuple[tuple[str, float], ...] = ()
    stability_weight: float = 120.0  # priority x seconds per previously planned visit kept
