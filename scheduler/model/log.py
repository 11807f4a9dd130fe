"""The records of the night log (JSON Lines, :mod:`scheduler.inputs.night_log`)."""

from __future__ import annotations

from dataclasses import dataclass
from enum import StrEnum


class Event(StrEnum):
    DONE = "done"
    ABORTED = "aborted"
    CLOSED = "closed"
    OUT = "out"
    BACK = "back"
    CARRIAGES = "carriages"
    CONDITIONS = "conditions"


@dataclass(frozen=True)
class LogRecord:
    """One record; ``line`` is its line number in the file.  Times are POSIX UTC
    seconds; ``opd_m`` maps delay lines to metres of optical path."""

    line: int
    event: Event
    at_s: float | None = None
    visit: str | None = None
    from_s: float | None = None
    to_s: float | None = None
    station: str | None = None
    delay_line: str | None = None
    opd_m: tuple[tuple[str, float], ...] = ()
    seeing_arcsec: float | None = None
    coherence_ms: float | None = None
    wind_speed_m_s: float | None = None
    wind_from_deg: float | None = None
    #: a done visit as the plan described it (for campaigns): target, configuration,
    #: night date (ISO) and visit length in seconds
    target: str | None = None
    configuration: str | None = None
    night: str | None = None
    duration_s: float | None = None
    planned_end_s: float | None = None

    @property
    def when_s(self) -> float | None:
        """When it happened: ``at_s``, or the start of a closure."""
        return self.at_s if self.at_s is not None else self.from_s
