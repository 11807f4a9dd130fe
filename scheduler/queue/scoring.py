"""What a plan is worth: its science value (the value rule of :mod:`scheduler.queue.value`),
carriage time, objective, and an upper bound by time alone."""

from __future__ import annotations

from scheduler.model.array import Overheads
from scheduler.model.plan import Candidate, PlanSettings, Visit
from scheduler.queue.value import ValueRule


def science_value(visits: list[Visit], rule: ValueRule,
                  done: dict[int, int] | None = None) -> float:  # fmt: skip
    """What the scheduled science visits earn under the value rule (``done``: visits per
    target made before a replan, counted towards each target's minimum)."""
    return rule.of_targets((v.target for v in visits if v.is_science), done)


def science_hours(visits: list[Visit]) -> float:
    return float(sum((v.end_s - v.start_s) / 3600.0 for v in visits if v.is_science))


def idle_carriage_s(visits: list[Visit]) -> float:
    """Carriage repositioning time between visits (moves and settling), seconds."""
    return float(sum(v.carriage_s for v in visits))


def carriage_wait_s(visits: list[Visit]) -> float:
    """Seconds the array waits for carriages: over all transitions, how much longer the
    carriage move takes than the telescope slew."""
    return float(sum(max(0.0, v.carriage_s - v.slew_s) for v in visits))


def objective(visits: list[Visit], rule: ValueRule, settings: PlanSettings,
              done: dict[int, int] | None = None) -> float:  # fmt: skip
    """A timed plan's objective: science value minus the carriage weight times the
    hours of carriage repositioning."""
    return (science_value(visits, rule, done)
            - settings.carriage_weight * idle_carriage_s(visits) / 3600.0)  # fmt: skip


def energy_bound(cands: list[Candidate] | tuple[Candidate, ...], over: Overheads,
                 start_s: float, end_s: float) -> float:  # fmt: skip
    """An upper bound of any plan's science value by time alone: every visit needs its
    length plus at least one acquisition and settling, and the night (from ``start_s``)
    has only so many seconds; the best value per second fills them first (a fractional
    knapsack, ignoring windows, so never below the true optimum)."""
    room = max(0.0, end_s - start_s)
    cost = over.acquisition_s + over.settle_s
    items = sorted(((c.value / (c.duration_s + cost), c.duration_s + cost)
                    for c in cands if c.is_science), reverse=True)  # fmt: skip
    total = 0.0
    for density, size in items:
        take = min(size, room)
        total += density * take
        room -= take
        if room <= 0:
            break
    return total
