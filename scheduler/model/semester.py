"""A semester: its nights, the configuration on the array each night, the site's weather
statistics month by month, and the requests for time.  Loaded by
:mod:`scheduler.inputs.semester_file`; drawn from by :mod:`scheduler.semester.weather`.

The weather model (README, *Will the proposals fit?*): nights are clear or lost whole in
a two-state Markov chain whose stationary clear fraction is ``clear_nights`` and whose
runs of lost nights last ``lost_spell_nights`` on average; a clear night loses a
contiguous part of its dark time with probability ``partial_nights`` (a fraction drawn
uniformly from :data:`PARTIAL_LOSS_RANGE`, so half the night on average); each night's
seeing and coherence time are log-normal around the month's medians.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

PARTIAL_LOSS_RANGE = (0.1, 0.9)  # fraction of a partial night's dark time lost
MEAN_PARTIAL_LOSS = 0.5 * (PARTIAL_LOSS_RANGE[0] + PARTIAL_LOSS_RANGE[1])


@dataclass(frozen=True)
class CalendarEntry:
    """``configuration`` is on the array from night ``first`` to night ``last``
    (inclusive, local evening dates)."""

    configuration: str
    first: dt.date
    last: dt.date


@dataclass(frozen=True)
class MonthWeather:
    """One month's weather statistics.

    ``clear_nights``: stationary fraction of nights not lost whole; ``lost_spell_nights``:
    mean length of a run of lost nights (>= 1; ``1 / clear_nights`` makes nights
    independent); ``partial_nights``: fraction of clear nights that lose part of their dark
    time; seeing (rad) and coherence time (s) medians (None: each mode's reference) with
    the standard deviation of their natural logarithms (``*_spread``, 0: always the
    median)."""

    month: int
    clear_nights: float
    lost_spell_nights: float
    partial_nights: float = 0.0
    seeing_rad: float | None = None
    seeing_spread: float = 0.0
    coherence_s: float | None = None
    coherence_spread: float = 0.0

    @property
    def lost_to_clear(self) -> float:
        """P(a lost night is followed by a clear one) = 1 / mean lost spell."""
        return 1.0 / self.lost_spell_nights

    @property
    def clear_to_lost(self) -> float:
        """P(a clear night is followed by a lost one), from the stationary balance
        ``clear x P(clear -> lost) = (1 - clear) x P(lost -> clear)``."""
        if self.clear_nights <= 0.0:
            return 1.0
        return (1.0 - self.clear_nights) * self.lost_to_clear / self.clear_nights

    @property
    def usable_fraction(self) -> float:
        """Long-run fraction of dark time usable: clear nights less partial losses."""
        return self.clear_nights * (1.0 - self.partial_nights * MEAN_PARTIAL_LOSS)


def independent(month: int, clear_nights: float) -> MonthWeather:
    """A month of independent nights, each clear with probability ``clear_nights``."""
    return MonthWeather(month, clear_nights, 1.0 / clear_nights if clear_nights > 0 else 1.0)


@dataclass(frozen=True)
class Semester:
    start: dt.date
    end: dt.date
    calendar: tuple[CalendarEntry, ...]
    weather: tuple[MonthWeather, ...]  # one per month the semester touches
    source: str = ""

    def nights(self) -> list[dt.date]:
        days = (self.end - self.start).days + 1
        return [self.start + dt.timedelta(days=k) for k in range(days)]

    def configuration_on(self, night: dt.date) -> str | None:
        for e in self.calendar:
            if e.first <= night <= e.last:
                return e.configuration
        return None

    def weather_in(self, month: int) -> MonthWeather:
        for w in self.weather:
            if w.month == month:
                return w
        raise KeyError(f"no weather statistics for month {month} in {self.source}")

    def usable_in(self, month: int) -> float:
        """Long-run usable fraction of the dark time in ``month``."""
        return self.weather_in(month).usable_fraction


@dataclass(frozen=True)
class Request:
    """One proposal row: ``hours`` on catalog target ``target`` with ``configuration``;
    ``row`` is its line in the proposals file."""

    program: str
    target: int
    configuration: str
    hours: float
    priority: float
    row: int
