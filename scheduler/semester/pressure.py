"""Pressure on the sky per configuration and hour of sidereal time.

Each request's hours are spread over the local sidereal times at which its target is
observable with its configuration (in proportion to its clear-sky observable hours in
each LST hour), divided by that configuration's efficiency measured on the simulated
nights (science hours over the hours charged to them: calibrators, acquisitions and
transitions), and set against the usable dark hours: the dark hours of the nights that
configuration is on the array, in that LST hour, times each month's long-run usable
fraction (:attr:`scheduler.model.semester.MonthWeather.usable_fraction`).  A request
whose target is never observable with its configuration cannot be placed; its hours
are counted apart.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.semester.availability import Availability
from scheduler.semester.pool import Scenario
from scheduler.semester.realise import Outcome

HOURS = 24


@dataclass(frozen=True)
class Pressure:
    """One configuration: requested telescope hours and usable dark hours per LST hour
    (arrays of 24), the efficiency used, and the hours that could not be placed."""

    configuration: str
    requested_hours: np.ndarray
    usable_dark_hours: np.ndarray
    efficiency: float
    unplaced_hours: float

    @property
    def ratio(self) -> np.ndarray:
        """Requested over usable hours (NaN where there is no usable dark time)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(self.usable_dark_hours > 0,
                            self.requested_hours / self.usable_dark_hours, np.nan)  # fmt: skip


def efficiency(out: Outcome | None, configuration: str) -> float:
    """Science hours over charged hours on the simulated nights (1 with no simulation
    or no visit made with that configuration)."""
    if out is None or configuration not in out.configurations:
        return 1.0
    c = out.configurations.index(configuration)
    science, charged = out.by_configuration[:, c].sum(axis=0)
    return float(science / charged) if charged > 0 else 1.0


def pressure(scn: Scenario, av: Availability, out: Outcome | None) -> list[Pressure]:
    """The pressure of every configuration of the semester's calendar."""
    result = []
    for cfg in sorted({e.configuration for e in scn.semester.calendar}):
        eff = efficiency(out, cfg)
        asked, unplaced = np.zeros(HOURS), 0.0
        for r in scn.requests:
            if r.configuration != cfg:
                continue
            spread = av.by_lst.get((r.target, cfg), np.zeros(HOURS))
            if spread.sum() <= 0:
                unplaced += r.hours / eff
                continue
            asked += r.hours / eff * spread / spread.sum()
        usable = np.zeros(HOURS)
        for (c, month), dark in av.dark_lst_by_month.items():
            if c == cfg:
                usable += dark * scn.semester.usable_in(month)
        result.append(Pressure(cfg, asked, usable, eff, unplaced))
    return result
