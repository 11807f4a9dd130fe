"""What every sequencer needs for one night, computed once: windows, calibrator
suitability, candidate visits and grid transitions (:class:`QueueInputs`)."""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from scheduler.geometry.windows import TargetWindows, observable_windows
from scheduler.model.plan import Candidate, PlanSettings
from scheduler.model.problem import NightProblem
from scheduler.queue.campaign import cut_for_spread
from scheduler.queue.candidates import build_candidates, calibrator_errors, suitable_calibrators
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
    cal_error: np.ndarray  # per target, sigma(V^2) its diameter brings (calibrators)

    def with_candidates(self, candidates: list[Candidate] | tuple[Candidate, ...]) -> QueueInputs:
        return replace(self, candidates=tuple(candidates))


def setup_matrix(problem: NightProblem) -> np.ndarray:
    """(N, N): set-up seconds of target b's mode after a visit of target a (0 in the
    same mode)."""
    setup = np.array([m.setup_s for m in problem.modes])[problem.mode_index]
    same = problem.mode_index[:, None] == problem.mode_index[None, :]
    return np.where(same, 0.0, setup[None, :])


def prepare_queue(problem: NightProblem, settings: PlanSettings) -> QueueInputs:
    """The :class:`QueueInputs` of a night problem."""
    windows = observable_windows(problem)
    errors = calibrator_errors(problem)
    suits = suitable_calibrators(problem, settings, errors)
    rule = ValueRule.of(problem.targets, settings)
    cands = build_candidates(problem.targets, windows, suits, settings, rule.per_visit)
    cands = cut_for_spread(problem, cands)
    grid = GeometryGrid.build(problem)
    tr = GridTransitions(grid, problem.beams, problem.overheads, GRID_PAD_S,
                         setup_matrix(problem))  # fmt: skip
    return QueueInputs(problem, settings, tuple(windows), suits, tuple(cands), tr, rule, errors)
