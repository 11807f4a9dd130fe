"""Why a target cannot be observed at an instant: reason codes and their words.

The geometry marks each (target, time) pair with one integer code: the first limit that
fails, in the order of :class:`Limit` (altitude below the limit, above it, a station's
horizon mask, the Sun, the Moon, the delay range, the target's own time window).  A code
packs the limit with its detail, the station of a horizon mask or the pair of delay lines
that bound the common constant, so numpy arrays of codes stay plain integers.  This
module is the one place that decodes and words them.
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import IntEnum
from typing import Any

import numpy as np

from scheduler.model.array import Beams, Limits

DETAIL = 16  # code = limit + DETAIL * detail


class Limit(IntEnum):
    """The limits in the order they are checked; OK where every one holds."""

    OK = 0
    LOW = 1
    HIGH = 2
    HORIZON = 3
    SUN = 4
    MOON = 5
    DELAY = 6
    TIME_WINDOW = 7
    WIND = 8
    RESOLVED = 9
    FAINT = 10


#: coarse families, for views and the semester's accounting
FAMILY = {
    Limit.OK: "open", Limit.LOW: "altitude", Limit.HIGH: "altitude",
    Limit.HORIZON: "horizon mask", Limit.SUN: "time", Limit.MOON: "Moon",
    Limit.DELAY: "delay range", Limit.TIME_WINDOW: "time", Limit.WIND: "wind",
    Limit.RESOLVED: "over-resolved", Limit.FAINT: "too faint",
}  # fmt: skip


def horizon_code(station: int) -> int:
    """Code of station ``station``'s horizon mask."""
    return int(Limit.HORIZON) + DETAIL * station


def delay_codes(high_line: np.ndarray, low_line: np.ndarray, n_lines: int) -> np.ndarray:
    """Codes of an empty delay span: ``high_line`` would need more than its maximum path
    while ``low_line`` sits at its minimum."""
    return int(Limit.DELAY) + DETAIL * (np.asarray(high_line) * n_lines + np.asarray(low_line))


def faint_code(which: int) -> int:
    """Code of a target too faint for fringe tracking (``which`` 0) or guiding (1)."""
    return int(Limit.FAINT) + DETAIL * which


def limit_of(code: int | np.ndarray) -> np.ndarray:
    """The :class:`Limit` values of codes (array of ints)."""
    return np.asarray(code) % DETAIL


@dataclass(frozen=True)
class Cause:
    """A decoded code: the limit, and the station or delay lines it involves."""

    limit: Limit
    station: str | None = None
    high_line: str | None = None
    low_line: str | None = None

    @property
    def family(self) -> str:
        return FAMILY[self.limit]


def decode(code: int, beams: Beams) -> Cause:
    """The :class:`Cause` of one code for the lines of ``beams``."""
    limit, detail = Limit(int(code) % DETAIL), int(code) // DETAIL
    if limit == Limit.HORIZON:
        return Cause(limit, station=beams.station_names[detail])
    if limit == Limit.DELAY:
        high, low = divmod(detail, len(beams))
        return Cause(limit, high_line=beams.line_names[high], low_line=beams.line_names[low])
    return Cause(limit)


def words(code: int, beams: Beams, limits: Limits) -> str:
    """A sentence for a code: ``below 30 deg altitude``, ``horizon mask of station
    jasper``, ``delay range: rail-5 at its maximum while rail-6 at its minimum``."""
    c = decode(code, beams)
    deg = np.degrees
    text = {
        Limit.OK: "observable",
        Limit.LOW: f"below {deg(limits.min_altitude_rad):.0f} deg altitude",
        Limit.HIGH: f"above {deg(limits.max_altitude_rad):.0f} deg altitude",
        Limit.HORIZON: f"horizon mask of station {c.station}",
        Limit.SUN: f"within {deg(limits.sun_separation_min_rad):.0f} deg of the Sun",
        Limit.MOON: f"within {deg(limits.moon_separation_min_rad):.0f} deg of the Moon",
        Limit.DELAY: f"delay range: {c.high_line} at its maximum while {c.low_line} at its "
        "minimum",
        Limit.TIME_WINDOW: "outside its time-critical window",
        Limit.WIND: "pointing into the wind",
        Limit.RESOLVED: f"over-resolved: V^2 below {limits.min_squared_visibility:g} or past the "
        "first null on every baseline",
        Limit.FAINT: "too faint for "
        + ("fringe tracking" if int(code) // DETAIL == 0 else "guiding") + " tonight",
    }
    return text[c.limit]


def short_words(code: int, beams: Beams) -> str:
    """A few words for tables: ``delay rail-5/rail-6``, ``horizon jasper``, ``-``."""
    c = decode(code, beams)
    if c.limit == Limit.DELAY:
        return f"delay {c.high_line}/{c.low_line}"
    if c.limit == Limit.HORIZON:
        return f"horizon {c.station}"
    if c.limit == Limit.FAINT:
        return "faint (tracking)" if int(code) // DETAIL == 0 else "faint (guiding)"
    return {Limit.OK: "-", Limit.LOW: "altitude", Limit.HIGH: "zenith limit", Limit.SUN: "Sun",
            Limit.MOON: "Moon", Limit.TIME_WINDOW: "time window", Limit.WIND: "wind",
            Limit.RESOLVED: "over-resolved"}[c.limit]  # fmt: skip


def family(code: int) -> str:
    """The coarse family of a code (``open``, ``altitude``, ``horizon mask``, ...)."""
    return FAMILY[Limit(int(code) % DETAIL)]


def most_limiting(lost: dict[Any, float], order: list[Any] | tuple[Any, ...]) -> Any:
    """What limits a target most, the one rule every command uses: the limit that takes
    the most of its time (``lost``: limit -> time, any unit), the altitude limit
    included; a tie goes to the limit earlier in ``order``.  None when nothing is lost."""
    taken = {k: v for k, v in lost.items() if v > 0}
    if not taken:
        return None
    rank = {k: i for i, k in enumerate(order)}
    return max(taken, key=lambda k: (taken[k], -rank.get(k, len(rank))))


def edge_words(code: int, beams: Beams, limits: Limits, opening: bool,
               short: bool = False) -> str:  # fmt: skip
    """What happens at a window's edge when the limit ``code`` stops (``opening``) or
    starts holding the target back: ``rises above 30 deg``, ``rail-5 reaches its far
    end``, ``leaves the Moon's 15 deg``.  ``short``: a few words for narrow tables."""
    c = decode(code, beams)
    deg = np.degrees
    lo, hi = f"{deg(limits.min_altitude_rad):.0f}", f"{deg(limits.max_altitude_rad):.0f}"
    moon = f"{deg(limits.moon_separation_min_rad):.0f}"
    pairs = {
        Limit.LOW: (f"rises above {lo} deg", f"sets below {lo} deg", f"rises {lo}°",
                    f"sets {lo}°"),
        Limit.HIGH: (f"comes down from {hi} deg", f"climbs past {hi} deg", f"below {hi}°",
                     f"above {hi}°"),
        Limit.HORIZON: (f"clears {c.station}'s horizon", f"goes behind {c.station}'s horizon",
                        f"clears {c.station}", f"behind {c.station}"),
        Limit.SUN: ("leaves the Sun's guard", "nears the Sun", "Sun clear", "Sun near"),
        Limit.MOON: (f"leaves the Moon's {moon} deg", f"comes within {moon} deg of the Moon",
                     f"Moon >{moon}°", f"Moon <{moon}°"),
        Limit.DELAY: (f"{c.high_line} back from its far end", f"{c.high_line} reaches its far "
                      "end", f"{c.high_line} in", f"{c.high_line} far end"),
        Limit.TIME_WINDOW: ("its own time window opens", "its own time window closes",
                            "window opens", "window shuts"),
        Limit.WIND: ("out of the wind", "turns into the wind", "wind clear", "into wind"),
        Limit.RESOLVED: ("a baseline measures it again", "over-resolved on every baseline",
                         "measurable", "resolved"),
        Limit.FAINT: ("bright enough", "too faint", "bright", "faint"),
    }  # fmt: skip
    if c.limit == Limit.OK:
        return ("dark begins", "dark ends", "dusk", "dawn")[(not opening) + 2 * short]
    return pairs[c.limit][(not opening) + 2 * short]
