"""Fringe visibility of a resolved star, and angular distances on the sky.

Pure numpy and scipy's Bessel function.  Uniform disk of angular diameter theta on a
projected baseline B at wavelength lambda: ``V = 2 J1(x) / x`` with
``x = pi theta B / lambda`` (DOMAIN.md section 8).
"""

from __future__ import annotations

import numpy as np
from scipy.special import j1


def uniform_disk_visibility(diameter_rad: np.ndarray | float, baseline_m: np.ndarray | float,
                            wavelength_m: float) -> np.ndarray:  # fmt: skip
    """``V = 2 J1(x) / x``, ``x = pi theta B / lambda`` (1 at x = 0)."""
    x = np.pi * np.asarray(diameter_rad, float) * np.asarray(baseline_m, float) / wavelength_m
    safe = np.where(x == 0.0, 1.0, x)
    return np.where(x == 0.0, 1.0, 2.0 * j1(safe) / safe)


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
