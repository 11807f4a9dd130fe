"""A semester: its nights, the configuration on the array each night, the weather, and
the requests for time.  Loaded by :mod:`scheduler.inputs.semester_file`."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass


@dataclass(frozen=True)
class CalendarEntry:
    """``configuration`` is on the array from night ``first`` to night ``last``
    (inclusive, local evening dates)."""

    configuration: str
    first: dt.date
    last: dt.date


@dataclass(frozen=True)
class Semester:
    start: dt.date
    end: dt.date
    calendar: tuple[CalendarEntry, ...]
    usable_fraction: tuple[tuple[int, float], ...]  # (month number, fraction)
    source: str = ""

    def nights(self) -> list[dt.date]:
        days = (self.end - self.start).days + 1
        return [self.start + dt.timedelta(days=k) for k in range(days)]

    def configuration_on(self, night: dt.date) -> str | None:
        for e in self.calendar:
            if e.first <= night <= e.last:
                return e.configuration
        return None

    def usable(self, night: dt.date) -> float:
        return dict(self.usable_fraction)[night.month]


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
