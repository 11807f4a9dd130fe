"""One night at the site: its dark interval, Earth orientation, Sun and Moon.

A night is named by the local calendar date of its evening: night ``2027-04-18``
begins on the evening of 18 April at the site.  The search runs from local mean noon of
that date to local mean noon of the next day (local mean time from the longitude), and
the night is the stretch in which the Sun's centre is below ``sun_altitude_max`` (for
example -12 deg, nautical twilight).  With no dark time at all (polar summer) a
:class:`NoDarkTime` error says so.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np

from scheduler.bodies import BodyTrack, illuminated_fraction
from scheduler.ephemeris import body_track, earth_frame, local_sidereal_time
from scheduler.errors import InputError, Problem
from scheduler.model import ArrayModel, Site
from scheduler.sky import ERA_RATE_RAD_S, EarthFrame, altaz

DAY_S = 86400.0
SEARCH_STEP_S = 120.0
EDGE_TOLERANCE_S = 1.0


class NoDarkTime(InputError):
    """The Sun never gets low enough on this night at this site."""


@dataclass(frozen=True, eq=False)
class Night:
    """The dark interval ``[start_s, end_s]`` (POSIX UTC seconds) of one night, with
    what the fast path needs: the Earth frame and the Sun and Moon tracks."""

    date: dt.date
    start_s: float
    end_s: float
    frame: EarthFrame
    sun: BodyTrack
    moon: BodyTrack
    lst_ref_rad: float = 0.0  # local apparent sidereal time at frame.t_ref_s

    def lst_rad(self, t_s) -> np.ndarray:
        """Local apparent sidereal time (rad), advancing at the sidereal rate."""
        return np.mod(
            self.lst_ref_rad + ERA_RATE_RAD_S * (np.asarray(t_s, float) - self.frame.t_ref_s),
            2 * np.pi,
        )

    @property
    def duration_s(self) -> float:
        return self.end_s - self.start_s

    def grid(self, step_s: float) -> np.ndarray:
        """Sample times from start to end inclusive, at most ``step_s`` apart."""
        count = max(2, int(np.ceil(self.duration_s / step_s)) + 1)
        return np.linspace(self.start_s, self.end_s, count)

    def sun_altitude(self, t_s) -> np.ndarray:
        return altaz(*self.sun.enu_at(self.frame, t_s))[0]

    def moon_enu(self, t_s):
        return self.moon.enu_at(self.frame, t_s)

    def moon_illumination(self, t_s) -> np.ndarray:
        return illuminated_fraction(self.sun, self.moon, t_s)


def parse_night(text: str, source: str = "--night") -> dt.date:
    """A night's date from ``YYYY-MM-DD``; a clear error otherwise."""
    try:
        return dt.date.fromisoformat(str(text).strip())
    except ValueError:
        raise InputError(Problem(source, "", f"{text!r} is not a date (YYYY-MM-DD)")) from None


def local_noon_s(date: dt.date, site: Site) -> float:
    """POSIX time of local mean noon on ``date`` at the site's longitude."""
    midnight = dt.datetime(date.year, date.month, date.day, tzinfo=dt.UTC).timestamp()
    return midnight + 43200.0 - np.degrees(site.longitude_rad) / 15.0 * 3600.0


def _wrap_lon(site: Site) -> Site:
    lon = np.angle(np.exp(1j * site.longitude_rad))
    return Site(site.name, site.latitude_rad, float(lon), site.height_m)


def body_tracks(array: ArrayModel, first: dt.date, last: dt.date) -> tuple[BodyTrack, BodyTrack]:
    """Sun and Moon tracks covering every night from ``first`` to ``last``, computed in
    one astropy call each (a semester needs thousands of nodes, not one call a night)."""
    site = _wrap_lon(array.site)
    a = local_noon_s(first, site) - 3600.0
    b = local_noon_s(last, site) + DAY_S + 3600.0
    return body_track("sun", site, a, b, 3 * 3600.0), body_track("moon", site, a, b, 1200.0)


def find_night(array: ArrayModel, date: dt.date, tracks=None) -> Night:
    """The night of ``date`` at the array's site; :class:`NoDarkTime` if there is none.
    ``tracks`` = (sun, moon) from :func:`body_tracks` saves the ephemeris calls."""
    site = _wrap_lon(array.site)
    noon = local_noon_s(date, site)
    frame = earth_frame(site, noon + 0.5 * DAY_S)
    if tracks is None:
        tracks = body_tracks(array, date, date)
    sun, moon = tracks
    limit = array.limits.sun_altitude_max_rad

    def dark(t):
        return altaz(*sun.enu_at(frame, t))[0] < limit

    t = np.arange(noon, noon + DAY_S + 1.0, SEARCH_STEP_S)
    is_dark = dark(t)
    if not is_dark.any():
        raise NoDarkTime(Problem(
            "--night", str(date),
            f"no dark time: the Sun stays above {np.degrees(limit):.1f} deg all night at "
            f"latitude {np.degrees(site.latitude_rad):.2f} deg",
        ))  # fmt: skip
    # the dark run that contains local midnight, else the longest
    edges = np.flatnonzero(np.diff(np.concatenate([[0], is_dark.astype(int), [0]])))
    runs = list(zip(edges[::2], edges[1::2] - 1, strict=True))
    mid = np.searchsorted(t, noon + 0.5 * DAY_S)
    run = next(((a, b) for a, b in runs if a <= mid <= b), max(runs, key=lambda r: r[1] - r[0]))
    start = t[run[0]] if run[0] == 0 else _edge(dark, t[run[0] - 1], t[run[0]])
    end = t[run[1]] if run[1] == len(t) - 1 else _edge(dark, t[run[1] + 1], t[run[1]])
    lst = local_sidereal_time(site, frame.t_ref_s)
    return Night(date, float(start), float(end), frame, sun, moon, lst)


def _edge(dark, t_light: float, t_dark: float) -> float:
    """Bisect for the first dark instant between a light and a dark sample."""
    while abs(t_dark - t_light) > EDGE_TOLERANCE_S:
        mid = 0.5 * (t_light + t_dark)
        if dark(np.array([mid]))[0]:
            t_dark = mid
        else:
            t_light = mid
    return t_dark
