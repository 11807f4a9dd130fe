"""The verifier's own arithmetic: directions, angles, horizon masks, delays, carriage
moves and uniform-disk visibilities, written again here so that the verifier shares no
code with the planner.

Directions (Meeus, *Astronomical Algorithms*, 2nd ed. 1998, ch. 13; DOMAIN.md section 2),
unit vectors s in the local east-north-up frame:

- from altitude h and azimuth A (north through east): s = (cos h sin A, cos h cos A, sin h);
- from hour angle H (positive west), declination d and latitude phi:
  s_E = -cos d sin H, s_N = cos phi sin d - sin phi cos d cos H,
  s_U = sin phi sin d + cos phi cos d cos H.

Delays (DOMAIN.md section 3; Thompson, Moran & Swenson, *Interferometry and Synthesis in
Radio Astronomy*, 3rd ed. 2017, section 4.1): line i, fed by the station at p_i with
constant path a_i + f_i, adds the optical path ``x_i = K + p_i.s - a_i - f_i``, K common
to all lines.  So an instant is delay-feasible when
``max_i(min_i + a_i + f_i - p_i.s) <= min_i(max_i + a_i + f_i - p_i.s)``; stated paths
imply ``K_i = x_i - p_i.s + a_i + f_i`` for each line, one number when they agree with
the geometry; moving from paths x to y takes ``max_i |y_i - x_i| / rate_i``.

Visibility of a uniform disk of angular diameter theta on a baseline B at wavelength
lambda: ``V = 2 J1(x) / x``, ``x = pi theta B / lambda`` (J1 from scipy, checked against
Abramowitz & Stegun 1964, table 9.1).
"""

from __future__ import annotations

import math

import numpy as np
from scipy.special import j1

TWO_PI = 2.0 * np.pi


def enu_from_altaz(alt_rad: np.ndarray, az_rad: np.ndarray) -> np.ndarray:
    """Unit vectors (..., 3) east, north, up of altitudes and azimuths."""
    alt, az = np.asarray(alt_rad, float), np.asarray(az_rad, float)
    return np.stack([np.cos(alt) * np.sin(az), np.cos(alt) * np.cos(az), np.sin(alt)], axis=-1)


def altaz_from_enu(s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(altitude, azimuth in [0, 2 pi)) of unit vectors (..., 3)."""
    s = np.asarray(s, float)
    alt = np.arcsin(np.clip(s[..., 2], -1.0, 1.0))
    return alt, np.mod(np.arctan2(s[..., 0], s[..., 1]), TWO_PI)


def enu_from_hadec(ha_rad: np.ndarray, dec_rad: np.ndarray, lat_rad: float) -> np.ndarray:
    """Unit vectors (..., 3) east, north, up of hour angles and declinations at latitude
    ``lat_rad``."""
    h, d = np.asarray(ha_rad, float), np.asarray(dec_rad, float)
    sp, cp = np.sin(lat_rad), np.cos(lat_rad)
    east = -np.cos(d) * np.sin(h)
    north = cp * np.sin(d) - sp * np.cos(d) * np.cos(h)
    up = sp * np.sin(d) + cp * np.cos(d) * np.cos(h)
    return np.stack([east, north, up], axis=-1)


def unit_from_radec(ra_rad: np.ndarray, dec_rad: np.ndarray) -> np.ndarray:
    """Unit vectors (..., 3) of right ascensions and declinations (any equatorial frame)."""
    a, d = np.asarray(ra_rad, float), np.asarray(dec_rad, float)
    return np.stack([np.cos(d) * np.cos(a), np.cos(d) * np.sin(a), np.sin(d)], axis=-1)


def angle_between(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    """The angle (rad) between unit vectors, accurate at every size (atan2 of the cross
    and dot products, not the arccosine alone)."""
    u, v = np.asarray(u, float), np.asarray(v, float)
    cross = np.linalg.norm(np.cross(u, v), axis=-1)
    return np.arctan2(cross, np.sum(u * v, axis=-1))


def angular_distance(ra1: np.ndarray | float, dec1: np.ndarray | float,
                     ra2: np.ndarray | float, dec2: np.ndarray | float) -> np.ndarray:  # fmt: skip
    """The angle (rad) between two equatorial positions."""
    return angle_between(unit_from_radec(np.asarray(ra1), np.asarray(dec1)),
                         unit_from_radec(np.asarray(ra2), np.asarray(dec2)))  # fmt: skip


def azimuth_step(az_from: np.ndarray | float, az_to: np.ndarray | float) -> np.ndarray:
    """The azimuth move (rad, 0..pi) from one azimuth to another, the shortest way round."""
    step = np.mod(np.asarray(az_to, float) - np.asarray(az_from, float), TWO_PI)
    return np.minimum(step, TWO_PI - step)


def mask_altitude(mask: tuple[tuple[float, float], ...], az_rad: np.ndarray) -> np.ndarray:
    """The lowest altitude (rad) a station's horizon mask allows at ``az_rad``.

    ``mask`` holds (azimuth_rad in 0..2 pi, min_altitude_rad) points; between
    neighbouring points the limit is linear in azimuth, and from the last point it runs
    on linearly to the first one a turn later (wrapping at 2 pi).  One point is a
    constant limit; no points is no limit (-inf)."""
    az = np.mod(np.asarray(az_rad, float), TWO_PI)
    if not mask:
        return np.full(az.shape, -np.inf)
    pts = np.array(sorted(mask), float)
    xs = np.concatenate([[pts[-1, 0] - TWO_PI], pts[:, 0], [pts[0, 0] + TWO_PI]])
    ys = np.concatenate([[pts[-1, 1]], pts[:, 1], [pts[0, 1]]])
    return np.asarray(np.interp(az, xs, ys))


def projected_paths(s_enu: np.ndarray, position_m: np.ndarray) -> np.ndarray:
    """p_i.s: (..., L) for unit vectors (..., 3) and station positions (L, 3)."""
    return np.asarray(s_enu, float) @ np.asarray(position_m, float).T


def k_span(pds_m: np.ndarray, path_m: np.ndarray, opd_min_m: np.ndarray,
           opd_max_m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:  # fmt: skip
    """The (low, high) bounds of K that keep every line in its range, per instant
    (``pds_m`` is (..., L)); the instant is feasible when low <= high."""
    low = np.max(opd_min_m + path_m - pds_m, axis=-1)
    high = np.min(opd_max_m + path_m - pds_m, axis=-1)
    return low, high


def implied_k(x_m: np.ndarray, pds_m: np.ndarray, path_m: np.ndarray) -> np.ndarray:
    """K_i = x_i - p_i.s + a_i + f_i of stated paths x (L,) at one instant."""
    return np.asarray(x_m, float) - np.asarray(pds_m, float) + np.asarray(path_m, float)


def move_s(x_from_m: np.ndarray, x_to_m: np.ndarray, rate_m_s: np.ndarray) -> float:
    """Seconds the slowest line needs to move from paths x to paths y (no settling)."""
    step = np.abs(np.asarray(x_to_m, float) - np.asarray(x_from_m, float))
    return float(np.max(step / np.asarray(rate_m_s, float), initial=0.0))


def uniform_disk(x: np.ndarray | float) -> np.ndarray:
    """2 J1(x) / x, and 1 at x = 0."""
    x = np.asarray(x, float)
    safe = np.where(x == 0.0, 1.0, x)
    return np.asarray(np.where(x == 0.0, 1.0, 2.0 * j1(safe) / safe))


def disk_visibility(theta_rad: float, baseline_m: float, wavelength_m: float) -> float:
    """Uniform-disk visibility of a star of angular diameter ``theta_rad`` on a baseline
    of ``baseline_m`` at ``wavelength_m``: 2 J1(x) / x with x = pi theta B / lambda."""
    return float(uniform_disk(math.pi * theta_rad * baseline_m / wavelength_m))
