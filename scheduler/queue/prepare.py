"""What every sequencer needs for one night, computed once: windows, calibrator
suitability, candidate visits and grid transitions (:class:`QueueInputs`)."""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from scheduler.geometry.windows import TargetWindows, observable_windows
from scheduler.model.plan import Candidate, PlanSettings
from scheduler.model.problem import NightProblem
from scheduler.queue.candidates import build_candidates, suitable_calibrators
from scheduler.queue.grid import GeometryGrid, GridTransitions
from scheduler.queue.value import ValueRule

GRID_PAD_S = 20.0  # added to grid transitions, covering nearest-sample rounding


@dataclass(frozen=True, eq=False)
class QueueInputs:
    """One night's queue problem: the night problem and settings, each target's
    windows, ``suits[i, j]`` when calibrator j suits science target i, the candidate
    visits, transition estimates from the one-minute grid, and the value rule."""

    problem: NightProblem
    settings: PlanSettings
    windows: tuple[TargetWindows, ...]
    suits: np.ndarray
    candidates: tuple[Candidate, ...]
    transitions: GridTransitions
    rule: ValueRule

    def with_candidates(self, candidates: list[Candidate] | tuple[Candidate, ...]) -> QueueInputs:
        return replace(self, candidates=tuple(candidates))


def prepare_queue(problem: NightProblem, settings: PlanSettings) -> QueueInputs:
    """The :class:`QueueInputs` of a night problem."""
    windows = observable_windows(problem)
    suits = suitable_calibrators(problem.targets, problem.beams.longest_baseline_m(), settings)
    rule = ValueRule.of(problem.targets, settings)
    cands = build_candidates(problem.targets, windows, suits, settings, rule.per_visit)
    grid = GeometryGrid.build(problem)
    tr = GridTransitions(grid, problem.beams, problem.overheads, GRID_PAD_S)
    return QueueInputs(problem, settings, tuple(windows), suits, tuple(cands), tr, rule)
