"""One realisation of a semester's weather, night by night (pure numpy).

The model is that of :mod:`scheduler.model.semester`: a two-state Markov chain of clear
and lost nights with each month's transition probabilities (the first night drawn from
the first month's stationary split), partial losses of clear nights, and log-normal
seeing and coherence time.  Every realisation draws the same number of variates in the
same order from its own generator, so realisation ``k`` of seed ``s`` is the same
wherever it runs.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.model.conditions import Conditions
from scheduler.model.semester import PARTIAL_LOSS_RANGE, Semester


@dataclass(frozen=True, eq=False)
class SemesterWeather:
    """Per night of the semester (in order): ``clear`` (not lost whole); the lost part
    of its dark time as fractions ``lost_from``..``lost_to`` of the dark interval (0..1
    for a lost night, equal values for none); seeing and coherence time as factors of
    the month's medians (applied by :meth:`conditions`)."""

    clear: np.ndarray
    lost_from: np.ndarray
    lost_to: np.ndarray
    seeing_factor: np.ndarray
    coherence_factor: np.ndarray
    months: np.ndarray

    def conditions(self, semester: Semester, k: int) -> Conditions:
        """Night ``k``'s conditions: the month's medians (or the modes' references)
        times the drawn factors."""
        w = semester.weather_in(int(self.months[k]))
        return Conditions(seeing_rad=w.seeing_rad, coherence_s=w.coherence_s,
                          seeing_factor=float(self.seeing_factor[k]),
                          coherence_factor=float(self.coherence_factor[k]))  # fmt: skip

    def open_fraction(self, k: int) -> float:
        """Fraction of night ``k``'s dark time not lost."""
        return 1.0 - float(self.lost_to[k] - self.lost_from[k])


def _chain(u: np.ndarray, first_clear: float, to_lost: np.ndarray,
           to_clear: np.ndarray) -> np.ndarray:  # fmt: skip
    """Clear (True) or lost per night from uniform variates ``u``."""
    clear = np.empty(len(u), bool)
    state = bool(u[0] < first_clear)
    clear[0] = state
    for k in range(1, len(u)):
        state = bool(u[k] >= to_lost[k]) if state else bool(u[k] < to_clear[k])
        clear[k] = state
    return clear


def draw_weather(semester: Semester, rng: np.random.Generator) -> SemesterWeather:
    """One realisation of the semester's weather from ``rng``."""
    nights = semester.nights()
    n = len(nights)
    months = np.array([d.month for d in nights])
    stats = {w.month: w for w in semester.weather}
    u = rng.random((n, 4))
    z = rng.standard_normal((n, 2))
    to_lost = np.array([stats[m].clear_to_lost for m in months])
    to_clear = np.array([stats[m].lost_to_clear for m in months])
    clear = _chain(u[:, 0], stats[int(months[0])].clear_nights, to_lost, to_clear)
    partial = clear & (u[:, 1] < np.array([stats[m].partial_nights for m in months]))
    lo, hi = PARTIAL_LOSS_RANGE
    size = lo + (hi - lo) * u[:, 2]
    start = (1.0 - size) * u[:, 3]
    lost_from = np.where(clear, np.where(partial, start, 0.0), 0.0)
    lost_to = np.where(clear, np.where(partial, start + size, 0.0), 1.0)
    seeing = np.exp(z[:, 0] * np.array([stats[m].seeing_spread for m in months]))
    coherence = np.exp(z[:, 1] * np.array([stats[m].coherence_spread for m in months]))
    return SemesterWeather(clear, lost_from, lost_to, seeing, coherence, months)


def realisation_rng(seed: int, k: int) -> np.random.Generator:
    """The generator of realisation ``k`` of ``seed`` (independent streams)."""
    return np.random.default_rng([seed, k])
