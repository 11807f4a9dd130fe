"""The night queue's data: settings, candidate visits, scheduled visits, the plan.

Frozen dataclasses; times in POSIX UTC seconds, paths in metres of optical path.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field

import numpy as np

from scheduler.model.targets import Kind


@dataclass(frozen=True)
class PlanSettings:
    """Rules of the queue (defaults documented in README.md).

    Value rule: each science visit earns its target's priority (``value_per_hour``:
    priority x hours on target instead), and only once its target has ``min_visits``
    visits; with ``strict_priority`` a higher priority wins over any amount of lower
    ones (priorities become lexicographic weights, see :mod:`scheduler.queue.value`).
    ``carriage_weight`` is the objective's price of one hour of carriage repositioning,
    in value units (small: it decides only between otherwise equal nights).
    """

    calibrator_gap_s: float = 3600.0
    calibrator_max_sep_rad: float = float(np.radians(10.0))
    calibrator_max_dmag: float = 1.5
    calibrator_min_visibility: float = 0.8
    calibrator_copies: int = 3
    carriage_weight: float = 1.0
    value_per_hour: bool = False
    strict_priority: bool = False
    time_limit_s: float = 20.0
    seed: int = 0
    deterministic: bool = False


def visit_id(name: str, kind: Kind, number: int) -> str:
    """The id shown to people and written to files: ``Tide-05#1`` for the first visit of
    a science target, ``Cal-02@2`` for the second copy of a calibrator.  Never parsed
    back: visits carry their target, kind and number."""
    return f"{name}{'#' if kind is Kind.SCIENCE else '@'}{number}"


@dataclass(frozen=True)
class Candidate:
    """A visit that may be scheduled: ``target`` indexes the catalog; ``number`` is the
    visit number of a science target or the copy number of a calibrator; ``value`` the
    value one visit earns under the value rule (0 for calibrators); ``starts`` its start
    windows."""

    id: str
    target: int
    kind: Kind
    number: int
    duration_s: float
    value: float
    starts: tuple[tuple[float, float], ...]

    @property
    def is_science(self) -> bool:
        return self.kind is Kind.SCIENCE

    def earliest_start(self, t_s: float) -> float | None:
        """The first allowed start at or after ``t_s``, None if there is none."""
        for a, b in self.starts:
            if t_s <= b:
                return max(a, t_s)
        return None

    def with_starts(self, starts: tuple[tuple[float, float], ...]) -> Candidate:
        return Candidate(self.id, self.target, self.kind, self.number, self.duration_s,
                         self.value, starts)  # fmt: skip


@dataclass(frozen=True)
class Visit:
    """A scheduled visit with its exact times, the transition before it (its parts in
    seconds, ``transition_s`` the whole gap since the previous visit ended) and the
    optical path of each line in use at its start and end."""

    id: str
    target: int
    kind: Kind
    number: int
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
    setup_s: float = 0.0
    weak_baselines: tuple[tuple[str, float], ...] = ()  # (baseline, least V^2) below the floor

    @property
    def is_science(self) -> bool:
        return self.kind is Kind.SCIENCE


@dataclass(frozen=True)
class SolverReport:
    """What the optimiser said: its bounds of the night's value (the linear
    programme's and the CP-SAT bounding model's, None when it had none), the bounding
    model's status (OPTIMAL: proven; FEASIBLE: stopped at the limit) and seconds, and
    how many routes the search timed."""

    lp_bound: float | None = None
    model_bound: float | None = None
    bound_status: str | None = None
    bound_s: float | None = None
    evaluations: int | None = None


@dataclass(frozen=True)
class PlanSummary:
    """The figures of a plan (README.md, *The night queue*, defines each).

    ``weighted_value`` is what the plan earns under the value rule; ``objective`` that
    less the carriage weight times the hours of carriage repositioning
    (``idle_carriage_s``); ``bound`` a proven upper bound of any plan's value and
    ``gap`` = (bound - value) / bound, with ``bound_status`` "proven" when the bounding
    model finished (or the plan reaches the bound) or "at limit" when it stopped at the
    time limit (the bound holds but may be loose); ``carriage_wait_s``
    the time the array waits for carriages beyond the telescope slews."""

    solver: str
    science_hours: float
    weighted_value: float
    objective: float
    greedy_value: float
    idle_carriage_s: float
    greedy_idle_carriage_s: float
    carriage_wait_s: float
    seed: int
    wall_s: float
    bound: float | None = None
    gap: float | None = None
    bound_status: str | None = None
    previous_value: float | None = None
    report: SolverReport = field(default_factory=SolverReport)
    verified: bool = False

    def as_dict(self) -> dict[str, object]:
        return asdict(self)


@dataclass(frozen=True)
class LeftOut:
    """A science target the plan leaves out (or with visits left): ``reason`` is shared
    by every target left out for the same cause, ``detail`` is this target's own
    figures (``H 8.3``, ``1 of 3 visits scheduled``; empty when none)."""

    target: str
    reason: str
    detail: str = ""

    @property
    def text(self) -> str:
        """One line: ``reason: detail``."""
        return f"{self.reason}: {self.detail}" if self.detail else self.reason


@dataclass(frozen=True)
class Plan:
    """The visits, every science target left out with why, the summary, and per hour
    of the night (POSIX s of the full hour) the backups: targets not planned that stay
    possible if the conditions get one step worse, best first."""

    visits: tuple[Visit, ...]
    unscheduled: tuple[LeftOut, ...]
    summary: PlanSummary
    backups: tuple[tuple[float, tuple[str, ...]], ...] = ()


@dataclass(frozen=True)
class Start:
    """Where a queue starts when it is not the start of the night (a replan).

    ``t_s``: nothing starts before it; ``target``: where the telescopes point then
    (catalog index, None when unknown: the worst slew is assumed); ``opd_m``: carriage
    paths then, one per line in use (None: free); ``fixed``: done calibrator visits as
    (candidate, start_s), usable in brackets; ``done``: ids of done visits;
    ``done_count``: per target, how many of its visits are done; ``last_end``: per
    target, the end of its last done visit (for visit separation); ``closures``:
    (from_s, to_s) when nothing may be observed; ``previous``: the old plan's remaining
    visits as (id, start_s), the warm start and what stability keeps.
    """

    t_s: float
    target: int | None = None
    opd_m: tuple[float, ...] | None = None
    fixed: tuple[tuple[Candidate, float], ...] = ()
    done: frozenset[str] = frozenset()
    done_count: tuple[tuple[int, int], ...] = ()
    last_end: tuple[tuple[int, float], ...] = ()
    closures: tuple[tuple[float, float], ...] = ()
    previous: tuple[tuple[str, float], ...] = ()
    stability_weight: float = 0.05  # value units per previously planned visit kept
