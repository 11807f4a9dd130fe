"""The astropy edge of the sky computation: Earth orientation, apparent places, Sun
and Moon.  Everything astronomical that needs time scales, IERS tables or ephemerides
happens here, once per night; the numerical core then works on plain arrays.

The Sun and Moon are computed with ERFA's routines directly (the chain astropy's
``get_body`` and transform to CIRS run, without their per-call frame machinery): a
semester's thousands of nodes in about a tenth of a second, within a few hundredths of
an arcsecond of astropy (checked in ``tests/test_availability_fast.py``).

astropy runs offline (see :mod:`scheduler.astro.offline`).
"""

from __future__ import annotations

from dataclasses import dataclass

import astropy.units as u
import erfa
import numpy as np
from astropy.coordinates import CIRS, EarthLocation, SkyCoord
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


#: Spacing (s) of the nodes at which the Earth's orbit (ERFA ``epv00``) and the GCRS to
#: CIRS matrix (ERFA ``c2i06a``, IAU 2006/2000A) are evaluated; both are interpolated
#: linearly in between (the Sun's own nodes fall on these).  Measured over a semester:
#: the matrix within 4e-10 rad of ``c2i06a`` (the 13.7-day nutation term bows least),
#: the barycentric velocity within 7e-7 of itself (an aberration error of 7e-11 rad);
#: the heliocentric position's chord error (under 100 km) points at the Sun and leaves
#: its direction within 1e-8 rad.
EARTH_NODE_S = 3 * 3600.0
AU_M = erfa.DAU
LIGHT_DAY_AU = erfa.CMPS * erfa.DAYSEC / erfa.DAU  # au light travels in a day


@dataclass(frozen=True, eq=False)
class EarthOrbit:
    """The Earth's heliocentric and barycentric position (au) and velocity (au/day),
    BCRS axes, and the GCRS to CIRS rotation matrix, at nodes ``t_s`` (POSIX UTC s)."""

    t_s: np.ndarray
    helio_p_au: np.ndarray
    helio_v_au_d: np.ndarray
    bary_p_au: np.ndarray
    bary_v_au_d: np.ndarray
    c2i: np.ndarray

    def at(self, t_s: np.ndarray) -> tuple[np.ndarray, ...]:
        """(helio_p, helio_v, bary_p, bary_v, c2i) interpolated linearly to ``t_s``."""
        return tuple(_interp(t_s, self.t_s, a) for a in
                     (self.helio_p_au, self.helio_v_au_d, self.bary_p_au, self.bary_v_au_d,
                      self.c2i))  # fmt: skip


def _interp(t_s: np.ndarray, t_nodes_s: np.ndarray, values: np.ndarray) -> np.ndarray:
    flat = values.reshape(len(t_nodes_s), -1)
    cols = [np.interp(t_s, t_nodes_s, flat[:, k]) for k in range(flat.shape[1])]
    return np.stack(cols, axis=-1).reshape((len(t_s),) + values.shape[1:])


def node_times(t_start_s: float, t_end_s: float, step_s: float) -> np.ndarray:
    """Equally spaced POSIX times from ``t_start_s`` to ``t_end_s`` (both included), at
    most ``step_s`` apart."""
    count = max(2, int(np.ceil((t_end_s - t_start_s) / step_s)) + 1)
    return np.linspace(t_start_s, t_end_s, count)


def earth_orbit(t_start_s: float, t_end_s: float) -> EarthOrbit:
    """:class:`EarthOrbit` at nodes every :data:`EARTH_NODE_S` covering the interval.
    TT stands for TDB (they differ by under 2 ms: the Earth moves under 60 m)."""
    t = node_times(t_start_s, t_end_s, EARTH_NODE_S)
    tt = to_time(t).tt
    helio, bary = erfa.epv00(tt.jd1, tt.jd2)
    return EarthOrbit(t, helio["p"], helio["v"], bary["p"], bary["v"],
                      erfa.c2i06a(tt.jd1, tt.jd2))  # fmt: skip


def _pv(p: np.ndarray, v: np.ndarray) -> np.ndarray:
    """An ERFA position-velocity array from positions and velocities (..., 3)."""
    pv = np.empty(np.broadcast_shapes(p.shape, v.shape)[:-1], erfa.dt_pv)
    pv["p"], pv["v"] = p, v
    return pv


def body_directions(name: str, site: Site, t_s: np.ndarray, orbit: EarthOrbit) -> np.ndarray:
    """Unit vectors (T, 3), CIRS axes, toward the Sun or Moon seen from the site at
    POSIX times ``t_s``: the site's geocentric position and velocity (ERFA ``pvtob``
    with UT1 and polar motion from the IERS table, rotated to the GCRS), the body's
    geometric direction from the site, light time (the body's position at t - tau), the
    observer's aberration (ERFA ``apcs`` and ``ab``), then GCRS to CIRS.  The Moon from
    ERFA ``moon98`` (geocentric), the Sun from ``epv00``; light deflection by the Sun is
    left out (it does not bend the Sun's own direction, and the Moon is too near)."""
    times = to_time(t_s)
    tt = times.tt
    helio_p, helio_v, bary_p, bary_v, c2i = orbit.at(np.asarray(t_s, float))
    table = iers.earth_orientation_table.get()
    dut1_s = table.ut1_utc(times).to_value(u.s)
    xp, yp = (q.to_value(u.rad) for q in table.pm_xy(times))
    era = erfa.era00(times.jd1, times.jd2 + dut1_s / erfa.DAYSEC)
    site_pv = erfa.pvtob(site.longitude_rad, site.latitude_rad, site.height_m, xp, yp,
                         erfa.sp00(tt.jd1, tt.jd2), era)  # CIRS, m and m/s  # fmt: skip
    obs_p_m = np.einsum("tji,tj->ti", c2i, site_pv["p"])  # to the GCRS: transposed c2i
    obs_v_m_s = np.einsum("tji,tj->ti", c2i, site_pv["v"])
    astrom = erfa.apcs(tt.jd1, tt.jd2, _pv(obs_p_m, obs_v_m_s), _pv(bary_p, bary_v), helio_p)
    if name == "sun":  # from the site; the Sun's barycentric velocity for light time
        q0_au, body_v_au_d = -helio_p - obs_p_m / AU_M, bary_v - helio_v
    elif name == "moon":  # the Earth moves under the light too: Moon + Earth velocity
        moon = erfa.moon98(tt.jd1, tt.jd2)
        q0_au, body_v_au_d = moon["p"] - obs_p_m / AU_M, moon["v"] + bary_v
    else:
        raise ValueError(f"body {name!r} is not one of ['moon', 'sun']")
    q_au = q0_au
    for _ in range(2):  # tau = |q| / c, twice: a residual far below a metre
        q_au = q0_au - np.linalg.norm(q_au, axis=-1, keepdims=True) / LIGHT_DAY_AU * body_v_au_d
    natural = q_au / np.linalg.norm(q_au, axis=-1, keepdims=True)
    proper = erfa.ab(natural, astrom["v"], astrom["em"], astrom["bm1"])
    xyz = np.einsum("tij,tj->ti", c2i, proper)
    return xyz / np.linalg.norm(xyz, axis=-1, keepdims=True)


def body_track(name: str, site: Site, t_start_s: float, t_end_s: float, step_s: float) -> BodyTrack:
    """CIRS directions of the Sun or Moon seen from the site, sampled every ``step_s``
    from ``t_start_s`` to ``t_end_s`` (both included), by :func:`body_directions`."""
    t_nodes = node_times(t_start_s, t_end_s, step_s)
    return BodyTrack(name, t_nodes, body_directions(name, site, t_nodes,
                                                    earth_orbit(t_start_s, t_end_s)))


def sun_and_moon(site: Site, t_start_s: float, t_end_s: float, sun_step_s: float,
                 moon_step_s: float) -> tuple[BodyTrack, BodyTrack]:  # fmt: skip
    """The Sun's and the Moon's :func:`body_track` over one interval, sharing the
    Earth's orbit."""
    orbit = earth_orbit(t_start_s, t_end_s)
    sun_t = node_times(t_start_s, t_end_s, sun_step_s)
    moon_t = node_times(t_start_s, t_end_s, moon_step_s)
    return (BodyTrack("sun", sun_t, body_directions("sun", site, sun_t, orbit)),
            BodyTrack("moon", moon_t, body_directions("moon", site, moon_t, orbit)))


def local_sidereal_time(site: Site, t_s: float) -> float:
    """Local apparent sidereal time (rad) at ``t_s`` (astropy, IAU 2006 model)."""
    lst = to_time(t_s).sidereal_time("apparent", longitude=site.longitude_rad * u.rad)
    return float(lst.to_value(u.rad))
