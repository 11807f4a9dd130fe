"""Finding a night at the site: its dark interval, Earth frame, Sun and Moon tracks.

A night is named by the local calendar date of its evening: night ``2027-04-18``
begins on the evening of 18 April at the site.  The search runs from local mean noon of
that date to local mean noon of the next day (local mean time from the longitude), and
the night is the stretch in which the Sun's centre is below ``sun_altitude_max`` (for
example -12 deg, nautical twilight).  With no dark time at all (polar summer) a
:class:`NoDarkTime` error says so.
"""

from __future__ import annotations

import datetime as dt

import numpy as np

from scheduler.astro.ephemeris import earth_frame, local_sidereal_time, sun_and_moon
from scheduler.geometry.dark import DAY_S, dark_interval
from scheduler.model.array import ArrayModel, Site
from scheduler.model.errors import InputError, Problem
from scheduler.model.frames import BodyTrack
from scheduler.model.night import Night

SUN_NODE_S = 3 * 3600.0
MOON_NODE_S = 1200.0


class NoDarkTime(InputError):
    """The Sun never gets low enough on this night at this site."""


def local_noon_s(date: dt.date, site: Site) -> float:
    """POSIX time of local mean noon on ``date`` at the site's longitude."""
    midnight = dt.datetime(date.year, date.month, date.day, tzinfo=dt.UTC).timestamp()
    return midnight + 43200.0 - np.degrees(site.longitude_rad) / 15.0 * 3600.0


def _wrap_lon(site: Site) -> Site:
    lon = float(np.angle(np.exp(1j * site.longitude_rad)))
    return Site(site.name, site.latitude_rad, lon, site.height_m)


def body_tracks(array: ArrayModel, first: dt.date, last: dt.date) -> tuple[BodyTrack, BodyTrack]:
    """Sun and Moon tracks covering every night from ``first`` to ``last``, computed in
    one vectorised ERFA pass for the whole span (a semester needs thousands of nodes, not
    one call a night); see :func:`scheduler.astro.ephemeris.body_directions`."""
    site = _wrap_lon(array.site)
    a = local_noon_s(first, site) - 3600.0
    b = local_noon_s(last, site) + DAY_S + 3600.0
    return sun_and_moon(site, a, b, SUN_NODE_S, MOON_NODE_S)


def find_night(array: ArrayModel, date: dt.date,
               tracks: tuple[BodyTrack, BodyTrack] | None = None) -> Night:  # fmt: skip
    """The night of ``date`` at the array's site; :class:`NoDarkTime` if there is none.
    ``tracks`` = (sun, moon) from :func:`body_tracks` saves the ephemeris calls."""
    site = _wrap_lon(array.site)
    noon = local_noon_s(date, site)
    frame = earth_frame(site, noon + 0.5 * DAY_S)
    sun, moon = tracks if tracks is not None else body_tracks(array, date, date)
    limit = array.limits.sun_altitude_max_rad
    edges = dark_interval(sun, frame, noon, limit)
    if edges is None:
        raise NoDarkTime(Problem(
            "--night", str(date),
            f"no dark time: the Sun stays above {np.degrees(limit):.1f} deg all night at "
            f"latitude {np.degrees(site.latitude_rad):.2f} deg",
        ))  # fmt: skip
    lst = local_sidereal_time(site, frame.t_ref_s)
    return Night(date, edges[0], edges[1], frame, sun, moon, lst)
