"""Station horizon masks: the lowest usable altitude as a function of azimuth.

A mask is a sorted tuple of (azimuth_rad, min_altitude_rad) points; between points the
limit is interpolated linearly in azimuth, wrapping around north.  A station without a
mask has no limit of its own (the array's altitude limit still applies).
"""

from __future__ import annotations

import numpy as np

TWO_PI = 2.0 * np.pi


def mask_altitude(mask: tuple[tuple[float, float], ...], az_rad) -> np.ndarray:
    """Minimum altitude (rad) a station's mask allows at azimuths ``az_rad``; -inf
    where the station has no mask."""
    az = np.mod(np.asarray(az_rad, float), TWO_PI)
    if not mask:
        return np.full(az.shape, -np.inf)
    pts = np.asarray(mask, float)
    if len(pts) == 1:
        return np.full(az.shape, pts[0, 1])
    xs = np.concatenate([pts[:, 0], [pts[0, 0] + TWO_PI]])
    ys = np.concatenate([pts[:, 1], [pts[0, 1]]])
    shifted = np.where(az < xs[0], az + TWO_PI, az)
    return np.interp(shifted, xs, ys)
