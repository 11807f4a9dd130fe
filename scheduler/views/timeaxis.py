"""A shared time axis: cells across the night with UTC and LST labels."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from rich.text import Text


@dataclass(frozen=True)
class TimeAxis:
    """``cells`` equal cells from ``start_s`` to ``end_s``; ``ticks`` are (cell, UTC
    label, LST label) triples, prepared by the caller."""

    start_s: float
    end_s: float
    cells: int
    ticks: tuple[tuple[int, str, str], ...]

    def cell_of(self, t_s: float) -> int:
        frac = (t_s - self.start_s) / max(self.end_s - self.start_s, 1.0)
        return int(np.clip(np.floor(frac * self.cells), 0, self.cells - 1))

    def label_rows(self) -> tuple[Text, Text]:
        """Two text rows: UTC hours and LST at the same ticks."""
        utc = [" "] * (self.cells + 6)
        lst = [" "] * (self.cells + 6)
        for cell, u, s in self.ticks:
            for k, ch in enumerate(u):
                utc[cell + k] = ch
            for k, ch in enumerate(s):
                lst[cell + k] = ch
        return (
            Text("".join(utc[: self.cells]).rstrip(), style="bold"),
            Text("".join(lst[: self.cells]).rstrip(), style="dim"),
        )


def make_axis(start_s: float, end_s: float, cells: int, lst_of) -> TimeAxis:
    """Ticks on full UTC hours, labelled with the hour and the LST then (``lst_of`` maps
    POSIX seconds to an ``HH:MM`` string).  Labels never overlap."""
    from scheduler.model.times import hhmm

    per_hour = cells * 3600.0 / max(end_s - start_s, 1.0)
    step_h = max(1, int(np.ceil(6.0 / per_hour)))  # labels are 5 characters wide
    first = np.ceil(start_s / (3600.0 * step_h)) * 3600.0 * step_h
    ticks = []
    for t in np.arange(first, end_s, 3600.0 * step_h):
        cell = int((t - start_s) / (end_s - start_s) * cells)
        if cell <= cells - 5:
            ticks.append((cell, hhmm(t), lst_of(t)))
    return TimeAxis(start_s, end_s, cells, tuple(ticks))
