"""The reference sky for the verifier: astropy's full transform, and nothing else.

Used only by :mod:`scheduler.verify`; it shares no code with the planner's fast path
(:mod:`scheduler.astro.ephemeris` and :mod:`scheduler.geometry`).  Directions come from
astropy's complete ICRS -> AltAz chain (precession, nutation, aberration, polar motion,
no refraction) at every requested instant; proper motion from astropy's own space
motion; the Sun and Moon from astropy's ephemerides, as horizontal coordinates or as
topocentric apparent hour angle and declination (the verifier samples them sparsely in
that frame and turns them with the Earth itself).
"""

from __future__ import annotations

import warnings

import astropy.units as u
import numpy as np
from astropy.coordinates import AltAz, EarthLocation, HADec, SkyCoord, get_body
from astropy.time import Time
from erfa import ErfaWarning

J2000 = Time("J2000", scale="tt")


def _frame(lat_deg: float, lon_deg: float, height_m: float, t_unix: np.ndarray) -> AltAz:
    site = EarthLocation.from_geodetic(lon=lon_deg * u.deg, lat=lat_deg * u.deg,
                                       height=height_m * u.m)  # fmt: skip
    when = Time(np.asarray(t_unix, float), format="unix", scale="utc")
    return AltAz(obstime=when, location=site, pressure=0 * u.hPa)


def star_altaz(lat_deg: float, lon_deg: float, height_m: float, ra_deg: np.ndarray,
               dec_deg: np.ndarray, pm_ra_cosdec_mas_yr: np.ndarray,
               pm_dec_mas_yr: np.ndarray, t_unix: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Unrefracted (altitude, azimuth north through east) in radians of ICRS J2000.0
    positions with proper motion, one per instant ``t_unix`` (arrays of equal length)."""
    frame = _frame(lat_deg, lon_deg, height_m, t_unix)
    star = SkyCoord(ra=np.asarray(ra_deg) * u.deg, dec=np.asarray(dec_deg) * u.deg,
                    pm_ra_cosdec=np.asarray(pm_ra_cosdec_mas_yr) * u.mas / u.yr,
                    pm_dec=np.asarray(pm_dec_mas_yr) * u.mas / u.yr, obstime=J2000,
                    frame="icrs")  # fmt: skip
    with warnings.catch_warnings():  # no parallax: erfa says it assumes a large distance
        warnings.filterwarnings("ignore", category=ErfaWarning, message=".*distance overridden")
        moved = star.apply_space_motion(new_obstime=frame.obstime)
    aa = SkyCoord(ra=moved.ra, dec=moved.dec, frame="icrs").transform_to(frame)
    return aa.alt.rad, aa.az.rad


def body_altaz(name: str, lat_deg: float, lon_deg: float, height_m: float,
               t_unix: np.ndarray) -> tuple[np.ndarray, np.ndarray]:  # fmt: skip
    """Unrefracted (altitude, azimuth) in radians of the Sun or Moon at ``t_unix``."""
    frame = _frame(lat_deg, lon_deg, height_m, t_unix)
    aa = get_body(name, frame.obstime, location=frame.location).transform_to(frame)
    return aa.alt.rad, aa.az.rad


def body_hadec(name: str, lat_deg: float, lon_deg: float, height_m: float,
               t_unix: np.ndarray) -> tuple[np.ndarray, np.ndarray]:  # fmt: skip
    """Topocentric apparent (hour angle, declination) in radians of the Sun or Moon at
    ``t_unix``, unrefracted; the hour angle is positive west."""
    frame = _frame(lat_deg, lon_deg, height_m, t_unix)
    hadec = HADec(obstime=frame.obstime, location=frame.location, pressure=0 * u.hPa)
    hd = get_body(name, frame.obstime, location=frame.location).transform_to(hadec)
    return hd.ha.rad, hd.dec.rad


def star_hour_angle(lat_deg: float, lon_deg: float, height_m: float, ra_deg: np.ndarray,
                    dec_deg: np.ndarray, pm_ra_cosdec_mas_yr: np.ndarray,
                    pm_dec_mas_yr: np.ndarray, t_unix: np.ndarray) -> np.ndarray:
    """Topocentric apparent hour angle (rad, positive west, unrefracted) of ICRS J2000.0
    positions with proper motion, one per instant ``t_unix``."""
    frame = _frame(lat_deg, lon_deg, height_m, t_unix)
    star = SkyCoord(ra=np.asarray(ra_deg) * u.deg, dec=np.asarray(dec_deg) * u.deg,
                    pm_ra_cosdec=np.asarray(pm_ra_cosdec_mas_yr) * u.mas / u.yr,
                    pm_dec=np.asarray(pm_dec_mas_yr) * u.mas / u.yr, obstime=J2000,
                    frame="icrs")  # fmt: skip
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", category=ErfaWarning, message=".*distance overridden")
        moved = star.apply_space_motion(new_obstime=frame.obstime)
    hadec = HADec(obstime=frame.obstime, location=frame.location, pressure=0 * u.hPa)
    hd = SkyCoord(ra=moved.ra, dec=moved.dec, frame="icrs").transform_to(hadec)
    return np.asarray(hd.ha.wrap_at(180 * u.deg).rad)
