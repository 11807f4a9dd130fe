"""The value rule: what a night's science is worth (README.md, *Value rule*).

Each science visit earns its target's weight: its priority by default, or priority x
hours on target with ``value_per_hour``.  With ``strict_priority`` the priorities act as
grades: the weight of a grade exceeds everything all lower grades could earn together
(every visit of every lower-grade target of the pool), so a higher grade always wins.
A target earns only once it has ``min_visits`` visits (done ones included in a replan):
a partial imaging sequence earns nothing unless the catalog says it may.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets


def grade_weights(priority: np.ndarray, visits: np.ndarray, science: np.ndarray) -> np.ndarray:
    """Weights of each target's grade so that one visit of a grade outweighs every visit
    of all lower grades together: w(g1) = 1, w(g_k) = 1 + sum over lower grades of
    (visits wanted x w)."""
    weight = np.zeros(len(priority))
    total_below = 0.0
    for grade in np.unique(priority[science]):
        here = science & (priority == grade)
        weight[here] = 1.0 + total_below
        total_below += float(np.sum(visits[here])) * (1.0 + total_below)
    return weight


@dataclass(frozen=True, eq=False)
class ValueRule:
    """``per_visit[i]`` is what one visit of target i earns (0 for calibrators) once
    ``min_visits[i]`` visits of it are made."""

    per_visit: np.ndarray
    min_visits: np.ndarray

    @classmethod
    def of(cls, targets: Targets, settings: PlanSettings) -> ValueRule:
        science = np.asarray(targets.is_science, bool)
        weight = (grade_weights(targets.priority, targets.visits, science)
                  if settings.strict_priority else targets.priority.astype(float))  # fmt: skip
        if settings.value_per_hour:
            weight = weight * targets.duration_s / 3600.0
        weight = weight * targets.value_weight
        return cls(np.where(science, weight, 0.0), targets.min_visits.astype(int))

    def earned(self, counts: dict[int, int]) -> float:
        """Value of ``counts`` visits per target (targets short of their minimum earn 0)."""
        return float(sum(n * self.per_visit[i] for i, n in counts.items()
                         if n >= self.min_visits[i]))  # fmt: skip

    def of_targets(self, targets_of_visits: Iterable[int],
                   done: dict[int, int] | None = None) -> float:  # fmt: skip
        """Value of visits given by their target indices, with ``done`` visits (which
        count towards the minimum but were earned before) left out of the sum."""
        counts = dict(done or {})
        for i in targets_of_visits:
            counts[i] = counts.get(i, 0) + 1
        before = dict(done or {})
        return self.earned(counts) - self.earned(before)
