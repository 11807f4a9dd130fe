"""The dark interval of a night from the Sun's track: pure numpy.

The search runs over one day from local mean noon on a two-minute grid; the night is
the run of samples with the Sun's centre below the limit that contains local midnight
(else the longest run), its ends located by bisection to a second.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from scheduler.geometry.bodies import enu_at
from scheduler.geometry.sky import altaz
from scheduler.model.frames import BodyTrack, EarthFrame

DAY_S = 86400.0
SEARCH_STEP_S = 120.0
EDGE_TOLERANCE_S = 1.0


def dark_interval(sun: BodyTrack, frame: EarthFrame, noon_s: float,
                  limit_rad: float) -> tuple[float, float] | None:  # fmt: skip
    """(start, end) POSIX seconds of the dark run from ``noon_s`` to the next noon, or
    None when the Sun's centre never goes below ``limit_rad``."""

    def dark(t: np.ndarray) -> np.ndarray:
        return altaz(*enu_at(sun, frame, t))[0] < limit_rad

    t = np.arange(noon_s, noon_s + DAY_S + 1.0, SEARCH_STEP_S)
    is_dark = dark(t)
    if not is_dark.any():
        return None
    edges = np.flatnonzero(np.diff(np.concatenate([[0], is_dark.astype(int), [0]])))
    runs = list(zip(edges[::2], edges[1::2] - 1, strict=True))
    mid = np.searchsorted(t, noon_s + 0.5 * DAY_S)
    run = next(((a, b) for a, b in runs if a <= mid <= b), max(runs, key=lambda r: r[1] - r[0]))
    start = t[run[0]] if run[0] == 0 else _edge(dark, t[run[0] - 1], t[run[0]])
    end = t[run[1]] if run[1] == len(t) - 1 else _edge(dark, t[run[1] + 1], t[run[1]])
    return float(start), float(end)


def _edge(dark: Callable[[np.ndarray], np.ndarray], t_light: float, t_dark: float) -> float:
    """Bisect for the first dark instant between a light and a dark sample."""
    while abs(t_dark - t_light) > EDGE_TOLERANCE_S:
        mid = 0.5 * (t_light + t_dark)
        if dark(np.array([mid]))[0]:
            t_dark = mid
        else:
            t_light = mid
    return t_dark
