"""One night at the site: its dark interval, Earth frame, Sun and Moon tracks.

A night is named by the local calendar date of its evening: night ``2027-04-18`` begins
on the evening of 18 April at the site.  Found by :mod:`scheduler.astro.night`.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, replace

import numpy as np

from scheduler.model.frames import ERA_RATE_RAD_S, BodyTrack, EarthFrame


@dataclass(frozen=True, eq=False)
class Night:
    """The dark interval ``[start_s, end_s]`` (POSIX UTC seconds) of one night, the Earth
    frame, the Sun and Moon tracks, and the local apparent sidereal time at
    ``frame.t_ref_s``."""

    date: dt.date
    start_s: float
    end_s: float
    frame: EarthFrame
    sun: BodyTrack
    moon: BodyTrack
    lst_ref_rad: float = 0.0

    def lst_rad(self, t_s: np.ndarray | float) -> np.ndarray:
        """Local apparent sidereal time (rad), advancing at the sidereal rate."""
        return np.mod(
            self.lst_ref_rad + ERA_RATE_RAD_S * (np.asarray(t_s, float) - self.frame.t_ref_s),
            2 * np.pi,
        )

    def trimmed(self) -> Night:
        """The same night with Sun and Moon tracks cut to its dark interval."""
        return replace(self, sun=self.sun.between(self.start_s, self.end_s),
                       moon=self.moon.between(self.start_s, self.end_s))  # fmt: skip

    @property
    def duration_s(self) -> float:
        return self.end_s - self.start_s

    def grid(self, step_s: float) -> np.ndarray:
        """Sample times from start to end inclusive, at most ``step_s`` apart."""
        count = max(2, int(np.ceil(self.duration_s / step_s)) + 1)
        return np.linspace(self.start_s, self.end_s, count)
