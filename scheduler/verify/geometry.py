"""The verifier's own arithmetic: directions, angles, horizon masks, delays, carriage
moves, projected baselines and disk visibilities, written again here so that the
verifier shares no code with the planner.

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

Visibilities (DOMAIN.md section 8; CHECKS.md, *Visibilities*): a star of angular
diameter theta on a projected baseline b at wavelength lambda, ``x = pi theta b /
lambda``, with ``b = sqrt(|B|^2 - w^2)`` and ``w = B.s`` (Thompson, Moran & Swenson
section 4.1):

- uniform disk ``V = 2 J1(x) / x`` (J1 from scipy, checked against Abramowitz & Stegun
  1964, table 9.1);
- linearly limb-darkened disk of coefficient u (Hanbury Brown, Davis, Lake & Thompson
  1974): ``V = [(1-u)/2 + u/3]^-1 [(1-u) J1(x)/x + u j1(x)/x]`` where
  ``j1(x)/x = (sin x / x - cos x) / x^2`` is the spherical Bessel function (the
  ``(pi/2)^1/2 J_3/2(x) / x^3/2`` of the paper); u = 0 is the uniform disk;
- its slope, analytic: ``d/dx [J1(x)/x] = -J2(x)/x`` and ``d/dx [j1(x)/x] = -j2(x)/x``
  (Abramowitz & Stegun 1964, 9.1.30 and 10.1.23; from memory), so
  ``dV^2/dtheta = 2 V dV/dx pi b / lambda``, and a diameter uncertainty sigma_theta
  brings ``sigma(V^2) = |dV^2/dtheta| sigma_theta`` (first-order propagation);
- the first null: the root of V between x = 3 and 5, where both terms fall steadily
  (3.8317 for the uniform disk, Abramowitz & Stegun table 9.5; 4.4934 for u = 1).
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import brentq
from scipy.special import j1, jv, spherical_jn

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


def _over_x(values: np.ndarray, x: np.ndarray, at_zero: float) -> np.ndarray:
    """``values / x``, and ``at_zero`` where x is 0."""
    safe = np.where(x == 0.0, 1.0, x)
    return np.where(x == 0.0, at_zero, values / safe)


def uniform_disk(x: np.ndarray | float) -> np.ndarray:
    """2 J1(x) / x, and 1 at x = 0."""
    xs = np.abs(np.asarray(x, float))
    return np.asarray(2.0 * _over_x(j1(xs), xs, 0.5))


def _weights(u: np.ndarray | float) -> tuple[np.ndarray, np.ndarray]:
    """(weight of J1(x)/x, weight of j1(x)/x) of coefficient u (NaN: 0), normalised so
    that V(0) = 1."""
    us = np.nan_to_num(np.asarray(u, float))
    norm = (1.0 - us) / 2.0 + us / 3.0
    return (1.0 - us) / norm, us / norm


def limb_darkened_disk(x: np.ndarray | float, u: np.ndarray | float = 0.0) -> np.ndarray:
    """V(x) of a linearly limb-darkened disk of coefficient ``u`` (NaN or 0: uniform)."""
    xs = np.abs(np.asarray(x, float))
    a, b = _weights(u)
    return np.asarray(a * _over_x(j1(xs), xs, 0.5)
                      + b * _over_x(spherical_jn(1, xs), xs, 1.0 / 3.0))  # fmt: skip


def limb_darkened_slope(x: np.ndarray | float, u: np.ndarray | float = 0.0) -> np.ndarray:
    """dV/dx of :func:`limb_darkened_disk` (x >= 0), analytic."""
    xs = np.abs(np.asarray(x, float))
    a, b = _weights(u)
    return np.asarray(-a * _over_x(jv(2, xs), xs, 0.0)
                      - b * _over_x(spherical_jn(2, xs), xs, 0.0))  # fmt: skip


def first_null_x(u: float = 0.0) -> float:
    """x of the first null of a disk of coefficient ``u`` in 0..1 (NaN: uniform)."""
    uu = 0.0 if math.isnan(u) else u
    return float(brentq(lambda x: float(limb_darkened_disk(x, uu)), 3.0, 5.0, xtol=1e-13))


def measures(x: np.ndarray, u: float, floor_v2: float) -> np.ndarray:
    """Where a baseline measures: inside the first null and V^2 at ``floor_v2`` or
    above."""
    x = np.asarray(x, float)
    return (x < first_null_x(u)) & (limb_darkened_disk(x, u) ** 2 >= floor_v2)


def disk_visibility(theta_rad: float, baseline_m: float, wavelength_m: float,
                    u: float = 0.0) -> float:  # fmt: skip
    """Visibility of a star of angular diameter ``theta_rad`` (limb darkening ``u``,
    NaN or 0: uniform) on a baseline of ``baseline_m`` at ``wavelength_m``."""
    return float(limb_darkened_disk(math.pi * theta_rad * baseline_m / wavelength_m, u))


def squared_visibility_slope(theta_rad: float, baseline_m: np.ndarray | float,
                             wavelength_m: float, u: float = 0.0) -> np.ndarray:  # fmt: skip
    """dV^2/dtheta (per radian) at projected lengths ``baseline_m``."""
    k = math.pi * np.asarray(baseline_m, float) / wavelength_m
    x = k * theta_rad
    return np.asarray(2.0 * limb_darkened_disk(x, u) * limb_darkened_slope(x, u) * k)


def calibration_error(theta_rad: float, sigma_rad: float, longest_m: float,
                      wavelength_m: float, u: float, samples: int) -> float:  # fmt: skip
    """The largest sigma(V^2) = |dV^2/dtheta| sigma_theta at ``samples`` projected
    lengths evenly from 0 to ``longest_m`` (both included)."""
    lengths = np.linspace(0.0, longest_m, samples)
    slope = squared_visibility_slope(theta_rad, lengths, wavelength_m, u)
    return float(np.max(np.abs(slope))) * sigma_rad


def baseline_pairs(names: tuple[str, ...], position_m: np.ndarray) -> tuple[tuple[str, ...],
                                                                            np.ndarray]:
    """Every baseline of the stations at ``position_m`` (L, 3): names "a-b" and the
    vectors (P, 3) from a to b."""
    pairs = [(i, j) for i in range(len(names)) for j in range(i + 1, len(names))]
    p = np.asarray(position_m, float).reshape(-1, 3)
    vectors = np.array([p[j] - p[i] for i, j in pairs], float).reshape(-1, 3)
    return tuple(f"{names[i]}-{names[j]}" for i, j in pairs), vectors


def projected_lengths(s_enu: np.ndarray, baselines_m: np.ndarray,
                      lean_rad: float = 0.0) -> np.ndarray:  # fmt: skip
    """sqrt(|B|^2 - w^2), w = B.s, (n, P) for unit vectors (n, 3) and baselines (P, 3).
    ``lean_rad`` takes each direction that much nearer its baseline (|w| grows by |B|
    lean_rad, at most to |B|): the shortest length the direction's uncertainty allows."""
    length = np.linalg.norm(np.asarray(baselines_m, float), axis=-1)
    w = np.abs(np.asarray(s_enu, float) @ np.asarray(baselines_m, float).T)
    w = np.minimum(w + length * lean_rad, length)
    return np.asarray(np.sqrt(np.maximum(length**2 - w**2, 0.0)))
