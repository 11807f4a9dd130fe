"""Directions on the sky: the fast path from apparent places to east-north-up vectors.

Pure numpy.  Conventions (DOMAIN.md section 2): ENU unit vector ``s`` with
``s_E = -cos(dec) sin(H)``, ``s_N = cos(lat) sin(dec) - sin(lat) cos(dec) cos(H)``,
``s_U = sin(lat) sin(dec) + cos(lat) cos(dec) cos(H)``; hour angle ``H`` positive west;
azimuth from north through east.  All angles in radians, times in POSIX UTC seconds.

The fast path takes a target's geocentric CIRS place, computed once per night by
:mod:`scheduler.astro.ephemeris`, and lets only the Earth rotate: the local Earth rotation
angle grows linearly with time, then polar motion and diurnal aberration are applied
as in the ERFA routine ``atioq`` (IAU SOFA/ERFA, CIRS to observed).  Refraction is not
applied: the delay needs the unrefracted direction.
"""

from __future__ import annotations

import numpy as np

from scheduler.model.frames import OMEGA_EARTH_RAD_S, EarthFrame


def enu_from_hadec(ha_rad, dec_rad, lat_rad):
    """ENU unit vector components of hour angle / declination at latitude (no
    refraction, aberration or polar motion).  Returns ``(e, n, u)``."""
    ch, sh = np.cos(ha_rad), np.sin(ha_rad)
    cd, sd = np.cos(dec_rad), np.sin(dec_rad)
    cl, sl = np.cos(lat_rad), np.sin(lat_rad)
    return -cd * sh, cl * sd - sl * cd * ch, sl * sd + cl * cd * ch


def enu_from_cirs(ri_rad, di_rad, frame: EarthFrame, t_s):
    """ENU unit vector of a CIRS place at times ``t_s`` (arrays broadcast together).

    Follows ERFA ``atioq``: CIRS -> (-HA, Dec) Cartesian, polar motion, diurnal
    aberration, then to the local horizon.  Returns ``(e, n, u)``.
    """
    w = np.asarray(ri_rad) - frame.local_era(t_s)  # = -hour angle
    cd = np.cos(di_rad)
    x, y, z = cd * np.cos(w), cd * np.sin(w), np.sin(di_rad) * np.ones_like(w)
    xp, yp, ab = frame.xpl_rad, frame.ypl_rad, frame.diurab_rad
    xhd, yhd, zhd = x + xp * z, y - yp * z, z - xp * x + yp * y
    f = 1.0 - ab * yhd
    xh, yh, zh = f * xhd, f * (yhd + ab), f * zhd
    sphi, cphi = np.sin(frame.latitude_rad), np.cos(frame.latitude_rad)
    south, east, up = sphi * xh - cphi * zh, yh, cphi * xh + sphi * zh
    norm = np.sqrt(south * south + east * east + up * up)
    return east / norm, -south / norm, up / norm


def enu_from_vectors(xyz_cirs: np.ndarray, frame: EarthFrame, t_s):
    """ENU unit vectors of CIRS Cartesian directions ``(..., 3)`` at ``t_s``."""
    ri = np.arctan2(xyz_cirs[..., 1], xyz_cirs[..., 0])
    di = np.arctan2(xyz_cirs[..., 2], np.hypot(xyz_cirs[..., 0], xyz_cirs[..., 1]))
    return enu_from_cirs(ri, di, frame, t_s)


def hour_angle(ri_rad, frame: EarthFrame, t_s) -> np.ndarray:
    """Hour angle in (-pi, pi], positive west (polar motion neglected, < 1 arcsec)."""
    h = frame.local_era(t_s) - np.asarray(ri_rad)
    return np.angle(np.exp(1j * h))


def altaz(e, n, u):
    """Altitude and azimuth (north through east, in [0, 2 pi)) of ENU vectors."""
    alt = np.arcsin(np.clip(u, -1.0, 1.0))
    az = np.mod(np.arctan2(e, n), 2.0 * np.pi)
    return alt, az


def airmass(alt_rad):
    """Kasten & Young (1989, Applied Optics 28, 4735) airmass of an altitude.

    ``X = 1 / (cos z + 0.50572 (96.07995 - z)^-1.6364)``, z the zenith angle in degrees.
    Below the horizon the value is NaN.
    """
    z = 90.0 - np.degrees(alt_rad)
    with np.errstate(invalid="ignore"):
        x = 1.0 / (np.cos(np.radians(z)) + 0.50572 * (96.07995 - z) ** -1.6364)
    return np.where(z <= 90.0, x, np.nan)


def separation(e1, n1, u1, e2, n2, u2):
    """Angle between two sets of unit vectors (radians), stable at small angles."""
    cross = np.sqrt((n1 * u2 - u1 * n2) ** 2 + (u1 * e2 - e1 * u2) ** 2 + (e1 * n2 - n1 * e2) ** 2)
    return np.arctan2(cross, e1 * e2 + n1 * n2 + u1 * u2)


def enu_rate(e, n, u, lat_rad):
    """Time derivative of an ENU direction (1/s) as the Earth turns: ds/dt = -w P x s,
    with P = (0, cos lat, sin lat) the pole in ENU."""
    cl, sl = np.cos(lat_rad), np.sin(lat_rad)
    w = OMEGA_EARTH_RAD_S
    return -w * (cl * u - sl * n), -w * (sl * e), w * (cl * e)


def horizon_matrices(frame: EarthFrame, t_s) -> np.ndarray:
    """3 x 3 matrices (T, 3, 3) taking CIRS Cartesian directions to ENU at times
    ``t_s``, before diurnal aberration: the same steps as :func:`enu_from_cirs`
    (rotation by the local Earth rotation angle, polar motion to first order, then the
    local horizon), written as one linear map per instant."""
    theta = frame.local_era(np.atleast_1d(t_s))
    c, s = np.cos(theta), np.sin(theta)
    zero, one = np.zeros_like(c), np.ones_like(c)
    rz = np.stack([np.stack([c, s, zero], -1), np.stack([-s, c, zero], -1),
                   np.stack([zero, zero, one], -1)], -2)  # fmt: skip
    xp, yp = frame.xpl_rad, frame.ypl_rad
    pm = np.array([[1.0, 0.0, xp], [0.0, 1.0, -yp], [-xp, yp, 1.0]])
    sphi, cphi = np.sin(frame.latitude_rad), np.cos(frame.latitude_rad)
    to_enu = np.array([[0.0, 1.0, 0.0], [-sphi, 0.0, cphi], [cphi, 0.0, sphi]])
    return to_enu @ pm @ rz


def grid_enu(ri_rad, di_rad, frame: EarthFrame, t_s):
    """ENU unit vectors on a targets x times grid, shape (N, T) each: the fast path in
    matrix form (one matrix product per component instead of trigonometry per point).
    Agrees with :func:`enu_from_cirs` to about 1e-12 rad."""
    cd = np.cos(di_rad)
    v = np.stack([cd * np.cos(ri_rad), cd * np.sin(ri_rad), np.sin(di_rad)], -1)  # (N, 3)
    a = horizon_matrices(frame, t_s)  # (T, 3, 3)
    theta = frame.local_era(np.atleast_1d(t_s))
    # y of the (-HA, Dec) frame is row 1 of rz (polar motion changes it only at 1e-6 * z)
    y_row = np.stack([-np.sin(theta), np.cos(theta), -frame.ypl_rad * np.ones_like(theta)], -1)
    ab = frame.diurab_rad
    f = 1.0 - ab * (v @ y_row.T)  # (N, T)
    shift = ab * np.array([1.0, 0.0, 0.0])  # the ab * y-hat step lands on east
    e = f * (v @ a[:, 0, :].T + shift[0])
    n = f * (v @ a[:, 1, :].T + shift[1])
    u = f * (v @ a[:, 2, :].T + shift[2])
    return e, n, u
