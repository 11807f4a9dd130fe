"""Fourier-plane (u, v, w) tracks of the baselines and figures of their coverage.

Pure numpy and scipy.  For a baseline ``B`` (ENU metres, from the first station of the
pair to the second) and the unit vector ``s`` to the star (ENU), ``w = B . s`` (the
geometric delay of :mod:`scheduler.geometry.delay`), ``u = B . e_u`` and ``v = B . e_v``
with ``e_u`` pointing to celestial east at the star (perpendicular to the pole ``p`` and
``s``: ``e_u = p x s / |p x s|``) and ``e_v = s x e_u`` to celestial north: the (u, v, w)
of Thompson, Moran & Swenson chapter 4 (their equations with the hour angle and
declination give the same numbers; see the tests).  Each baseline samples (u, v) and,
the sky being real, (-u, -v) too.

Coverage figures of a set of (u, v) points (both signs taken), within the disk whose
radius is the longest baseline's full length ``r_max``:

- *radial gap*: the longest stretch of projected length with no sample, between 0 and
  ``r_max``;
- *position-angle gap*: the largest empty sector of position angle (modulo 180 deg,
  since (u, v) and (-u, -v) are the same measurement);
- *longest* and *shortest* projected baselines;
- *fill*: the fraction of the disk's area whose nearest sample lies within ``radius_m``
  (a grid of :data:`FILL_GRID` points across the diameter).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

FILL_GRID = 201  # grid points across the disk's diameter for the fill fraction


def uv_axes(lat_rad: float, e: np.ndarray, n: np.ndarray,
            u: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:  # fmt: skip
    """(e_u, e_v, s), each (..., 3) in ENU, for star directions (e, n, u)."""
    s = np.stack(np.broadcast_arrays(e, n, u), axis=-1)
    pole = np.array([0.0, np.cos(lat_rad), np.sin(lat_rad)])
    east = np.cross(pole, s)
    east /= np.linalg.norm(east, axis=-1, keepdims=True)
    north = np.cross(s, east)
    return east, north, s


def uvw_tracks(baselines_enu_m: np.ndarray, lat_rad: float, e: np.ndarray, n: np.ndarray,
               u: np.ndarray) -> np.ndarray:  # fmt: skip
    """(P, T, 3) metres: (u, v, w) of each of P baselines (P, 3) at each of T directions."""
    east, north, s = uv_axes(lat_rad, np.atleast_1d(e), np.atleast_1d(n), np.atleast_1d(u))
    b = np.asarray(baselines_enu_m, float)
    return np.stack([b @ east.T, b @ north.T, b @ s.T], axis=-1)


@dataclass(frozen=True)
class Coverage:
    """Figures of a (u, v) sampling (metres and radians; see the module docstring)."""

    points: int
    radial_gap_m: float
    position_angle_gap_rad: float
    longest_m: float
    shortest_m: float
    fill: float
    fill_radius_m: float
    disk_radius_m: float


def coverage(u_m: np.ndarray, v_m: np.ndarray, disk_radius_m: float,
             fill_radius_m: float) -> Coverage:  # fmt: skip
    """The coverage figures of samples (u, v) in metres (their mirrors are added)."""
    u, v = np.ravel(u_m), np.ravel(v_m)
    if u.size == 0 or disk_radius_m <= 0:
        return Coverage(0, disk_radius_m, np.pi, 0.0, 0.0, 0.0, fill_radius_m, disk_radius_m)
    r = np.hypot(u, v)
    edges = np.concatenate([[0.0], np.sort(np.clip(r, 0.0, disk_radius_m)), [disk_radius_m]])
    pa = np.sort(np.mod(np.arctan2(u, v), np.pi))  # east of north, folded to [0, pi)
    gaps = np.diff(np.concatenate([pa, [pa[0] + np.pi]]))
    return Coverage(int(u.size), float(np.max(np.diff(edges))), float(np.max(gaps)),
                    float(r.max()), float(r.min()), fill_fraction(u, v, disk_radius_m,
                                                                  fill_radius_m),
                    fill_radius_m, disk_radius_m)  # fmt: skip


def fill_grid(disk_radius_m: float) -> np.ndarray:
    """The points (M, 2) of a square grid of :data:`FILL_GRID` across the disk's
    diameter that lie inside the disk."""
    axis = np.linspace(-disk_radius_m, disk_radius_m, FILL_GRID)
    gx, gy = np.meshgrid(axis, axis)
    inside = np.hypot(gx, gy) <= disk_radius_m
    return np.stack([gx[inside], gy[inside]], -1)


def near_samples(grid: np.ndarray, u_m: np.ndarray, v_m: np.ndarray,
                 fill_radius_m: float) -> np.ndarray:  # fmt: skip
    """Which grid points lie within ``fill_radius_m`` of a sample or of its mirror."""
    if np.size(u_m) == 0:
        return np.zeros(len(grid), bool)
    pts = np.concatenate([np.stack([u_m, v_m], -1), -np.stack([u_m, v_m], -1)])
    dist, _ = cKDTree(pts).query(grid, k=1, distance_upper_bound=fill_radius_m * (1 + 1e-12))
    return dist <= fill_radius_m


def fill_fraction(u_m: np.ndarray, v_m: np.ndarray, disk_radius_m: float,
                  fill_radius_m: float) -> float:
    """Fraction of the disk of ``disk_radius_m`` within ``fill_radius_m`` of a sample
    or of its mirror."""
    grid = fill_grid(disk_radius_m)
    return float(np.mean(near_samples(grid, np.ravel(u_m), np.ravel(v_m), fill_radius_m)))
