"""Tonight's set-up advice: rank every choice, then plan the best ones with the queue.

The ranking (:mod:`scheduler.advise.rank`) is cheap and counts observable hours; the
queue (greedy, or the optimiser with a short limit) then plans the night for each
ranked choice and for tonight's set-up of each configuration, so the advice ends with
the value a night would really earn: science visits with their calibrators,
transitions and carriage moves included.  Each planned choice becomes a configuration
of its own (``<configuration>~<n>``; tonight's keeps its name) so that the plan, its
document and the verifier work on it like on any other.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, replace

from scheduler.advise.rank import Option, Ranking
from scheduler.model.array import ArrayModel, Configuration
from scheduler.model.plan import Plan, PlanSettings
from scheduler.model.problem import NightProblem


@dataclass(frozen=True, eq=False)
class PlannedOption:
    """A ranked choice with its configuration, night problem and plan."""

    option: Option
    configuration: Configuration
    array: ArrayModel
    problem: NightProblem
    plan: Plan

    @property
    def value(self) -> float:
        return float(self.plan.summary.weighted_value)

    @property
    def science_h(self) -> float:
        return float(self.plan.summary.science_hours)


@dataclass(frozen=True)
class Advice:
    """The ranking, the planned choices (best planned value first), how they were
    planned, and the seconds spent ranking and planning."""

    ranking: Ranking
    planned: tuple[PlannedOption, ...]
    solver: str
    rank_s: float
    plan_s: float


def plan_options(array: ArrayModel, base: NightProblem, ranking: Ranking,
                 settings: PlanSettings, solver: str,
                 tick: Callable[[int, int], None] | None = None,
                 ) -> list[PlannedOption]:  # fmt: skip
    """Plan the night for every option of ``ranking``; best planned value first (ties:
    fewer changes, then the ranking's order)."""
    from scheduler.queue.planner import plan_night

    out = []
    for k, option in enumerate(ranking.options):
        name = option.choice.configuration if option.is_current else (
            f"{option.choice.configuration}~{k + 1}")  # fmt: skip
        config = option.choice.as_configuration(name)
        arr = array.with_configuration(config)
        problem = replace(base, beams=arr.beams(name))
        plan = plan_night(problem, settings, solver, started_s=time.perf_counter())
        out.append(PlannedOption(option, config, arr, problem, plan))
        if tick is not None:
            tick(k + 1, len(ranking.options))
    order = sorted(range(len(out)), key=lambda k: (-out[k].value, len(out[k].option.changes), k))
    return [out[k] for k in order]
