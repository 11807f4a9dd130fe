"""The astropy edge of the sky computation: Earth orientation, apparent places, Sun
and Moon.  Everything astronomical that needs time scales, IERS tables or ephemerides
happens here, once per night; the numerical core then works on plain arrays.

astropy runs offline (see :mod:`scheduler.astro.offline`).
"""

from __future__ import annotations

import astropy.units as u
import erfa
import numpy as np
from astropy.coordinates import CIRS, EarthLocation, SkyCoord, get_body
from astropy.time import Time
from astropy.utils import iers

from scheduler.astro import offline  # noqa: F401  (before any transform)
from scheduler.geometry.motion import positions_at
from scheduler.model.array import Site
from scheduler.model.frames import BodyTrack, EarthFrame
from scheduler.model.targets import Targets


def to_time(t_s) -> Time:
    """astropy Time (UTC) of POSIX seconds."""
    return Time(np.asarray(t_s, float), format="unix", scale="utc")


def location(site: Site) -> EarthLocation:
    return EarthLocation.from_geodetic(
        lon=site.longitude_rad * u.rad, lat=site.latitude_rad * u.rad, height=site.height_m * u.m
    )


def earth_orientation(t_s: float) -> tuple[float, float, float]:
    """UT1 - UTC (s) and polar motion x, y (rad) from the bundled IERS tables."""
    t = to_time(t_s)
    table = iers.earth_orientation_table.get()
    dut1 = float(table.ut1_utc(t).to_value(u.s))
    xp, yp = (float(q.to_value(u.rad)) for q in table.pm_xy(t))
    return dut1, xp, yp


def earth_frame(site: Site, t_ref_s: float) -> EarthFrame:
    """Earth orientation at ``t_ref_s`` for the fast path (ERFA ``apio13``, no
    refraction)."""
    t = to_time(t_ref_s)
    dut1, xp, yp = earth_orientation(t_ref_s)
    astrom = erfa.apio13(
        t.jd1, t.jd2, dut1, site.longitude_rad, site.latitude_rad, site.height_m,
        xp, yp, 0.0, 0.0, 0.0, 0.0,
    )  # fmt: skip
    return EarthFrame(
        t_ref_s=float(t_ref_s),
        local_era_rad=float(astrom["eral"]),
        xpl_rad=float(astrom["xpl"]),
        ypl_rad=float(astrom["ypl"]),
        diurab_rad=float(astrom["diurab"]),
        latitude_rad=site.latitude_rad,
    )


def apparent_places(targets: Targets, t_ref_s: float) -> tuple[np.ndarray, np.ndarray]:
    """Geocentric CIRS (ri, di) in radians of every target at ``t_ref_s``: precession,
    nutation, annual aberration and light deflection by astropy."""
    ra, dec = positions_at(targets, t_ref_s)
    return radec_places(ra, dec, t_ref_s)


def radec_places(ra_rad, dec_rad, t_ref_s: float) -> tuple[np.ndarray, np.ndarray]:
    """Geocentric CIRS place of ICRS positions (radians) at ``t_ref_s``."""
    c = SkyCoord(ra=np.atleast_1d(ra_rad) * u.rad, dec=np.atleast_1d(dec_rad) * u.rad, frame="icrs")
    cirs = c.transform_to(CIRS(obstime=to_time(t_ref_s)))
    return cirs.ra.to_value(u.rad), cirs.dec.to_value(u.rad)


def body_track(name: str, site: Site, t_start_s: float, t_end_s: float, step_s: float) -> BodyTrack:
    """CIRS directions of the Sun or Moon seen from the site, sampled every ``step_s``
    from ``t_start_s`` to ``t_end_s`` (both included)."""
    count = max(2, int(np.ceil((t_end_s - t_start_s) / step_s)) + 1)
    t_nodes = np.linspace(t_start_s, t_end_s, count)
    times = to_time(t_nodes)
    loc = location(site)
    body = get_body(name, times, location=loc)
    cirs = body.transform_to(CIRS(obstime=times, location=loc))
    xyz = cirs.cartesian.xyz.to_value(u.one if cirs.cartesian.xyz.unit == u.one else u.m).T
    xyz = xyz / np.linalg.norm(xyz, axis=-1, keepdims=True)
    return BodyTrack(name, t_nodes, xyz)


def local_sidereal_time(site: Site, t_s: float) -> float:
    """Local apparent sidereal time (rad) at ``t_s`` (astropy, IAU 2006 model)."""
    lst = to_time(t_s).sidereal_time("apparent", longitude=site.longitude_rad * u.rad)
    return float(lst.to_value(u.rad))
