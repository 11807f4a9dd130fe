"""Fringe visibility of a resolved star, projected baselines, and angular distances.

Pure numpy and scipy.  A star of angular diameter theta on a projected baseline B at
wavelength lambda, ``x = pi theta B / lambda`` (DOMAIN.md section 8):

- uniform disk: ``V = 2 J1(x) / x``;
- linearly limb-darkened disk of coefficient u (Hanbury Brown et al. 1974, MNRAS 167,
  475): ``V = [(1 - u)/2 + u/3]^-1 [(1 - u) J1(x)/x + u (pi/2)^(1/2) J_3/2(x)/x^(3/2)]``,
  with ``(pi/2)^(1/2) J_3/2(x)/x^(3/2) = (sin x / x - cos x) / x^2``; u = 0 is the uniform
  disk;
- the error a diameter uncertainty brings to V^2, to first order:
  ``sigma(V^2) = |dV^2/dtheta| sigma_theta``;
- a baseline measures nothing past the first null (V = 0, x = 3.8317 for the uniform
  disk) or where V^2 falls below a floor.
"""

from __future__ import annotations

from functools import cache

import numpy as np
from scipy.optimize import brentq
from scipy.special import j1

UD_FIRST_NULL_X = 3.8317059702075125  # first zero of J1 (Abramowitz & Stegun table 9.5)


def _j1_over_x(x: np.ndarray) -> np.ndarray:
    safe = np.where(x == 0.0, 1.0, x)
    return np.where(x == 0.0, 0.5, j1(safe) / safe)


def _j32_term(x: np.ndarray) -> np.ndarray:
    """(sin x / x - cos x) / x^2, with its limit 1/3 near 0 (series below 1e-3)."""
    small = np.abs(x) < 1e-3
    safe = np.where(small, 1.0, x)
    exact = (np.sin(safe) / safe - np.cos(safe)) / safe**2
    return np.where(small, 1.0 / 3.0 - x**2 / 30.0, exact)


def disk_visibility(x: np.ndarray | float, u: np.ndarray | float = 0.0) -> np.ndarray:
    """V of a linearly limb-darkened disk (u = 0: uniform) at ``x``; NaN u counts as 0."""
    xs = np.abs(np.asarray(x, float))
    us = np.nan_to_num(np.asarray(u, float))
    norm = (1.0 - us) / 2.0 + us / 3.0
    return ((1.0 - us) * _j1_over_x(xs) + us * _j32_term(xs)) / norm


def uniform_disk_visibility(diameter_rad: np.ndarray | float, baseline_m: np.ndarray | float,
                            wavelength_m: np.ndarray | float) -> np.ndarray:  # fmt: skip
    """``V = 2 J1(x) / x``, ``x = pi theta B / lambda`` (1 at x = 0)."""
    x = np.pi * np.asarray(diameter_rad, float) * np.asarray(baseline_m, float) / wavelength_m
    return 2.0 * _j1_over_x(x)


@cache
def _first_null(u: float) -> float:
    if u <= 0.0:
        return UD_FIRST_NULL_X
    return float(brentq(lambda x: float(disk_visibility(x, u)), 3.0, 6.0))


def first_null_x(u: np.ndarray | float) -> np.ndarray:
    """x of the first null of a disk of limb darkening ``u`` (NaN: uniform)."""
    arr = np.nan_to_num(np.asarray(u, float))
    values = {float(v): _first_null(round(float(v), 4)) for v in np.unique(arr)}
    return np.vectorize(lambda v: values[float(v)], otypes=[float])(arr)


def squared_visibility_error(diameter_rad: float, error_rad: float, baseline_m: np.ndarray,
                             wavelength_m: float, u: float = 0.0) -> np.ndarray:  # fmt: skip
    """sigma(V^2) from the diameter's uncertainty, first order (a central difference
    of V^2 in theta, step 1e-4 of theta)."""
    b = np.asarray(baseline_m, float)
    h = max(diameter_rad * 1e-4, 1e-15)

    def v2(theta: float) -> np.ndarray:
        return disk_visibility(np.pi * theta * b / wavelength_m, u) ** 2

    return np.abs(v2(diameter_rad + h) - v2(max(diameter_rad - h, 0.0))) / (2 * h) * error_rad


def usable(x: np.ndarray, u: np.ndarray, floor_v2: float) -> np.ndarray:
    """Where a baseline still measures: inside the first null and V^2 at the floor or
    above."""
    return (x < first_null_x(u)) & (disk_visibility(x, u) ** 2 >= floor_v2)


def angular_distance(ra1: np.ndarray, dec1: np.ndarray, ra2: np.ndarray,
                     dec2: np.ndarray) -> np.ndarray:  # fmt: skip
    """Great-circle distance (rad), Vincenty form (stable at all angles)."""
    dra = ra2 - ra1
    num = np.hypot(
        np.cos(dec2) * np.sin(dra),
        np.cos(dec1) * np.sin(dec2) - np.sin(dec1) * np.cos(dec2) * np.cos(dra),
    )
    den = np.sin(dec1) * np.sin(dec2) + np.cos(dec1) * np.cos(dec2) * np.cos(dra)
    return np.arctan2(num, den)
