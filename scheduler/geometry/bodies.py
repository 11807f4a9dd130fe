"""Sun and Moon over a night: directions sampled at nodes and interpolated.

Pure numpy.  :mod:`scheduler.astro.ephemeris` samples each body's CIRS direction with
ERFA routines at nodes (every 20 minutes for the Moon, 3 hours for the Sun); between nodes the
unit vector is interpolated linearly and renormalised (the topocentric Moon's parallax
turns with the Earth, so the chord error is some tens of arcseconds at hourly nodes and
a few at 20 minutes, far inside any Moon-distance limit) and rotated to the horizon by
the same fast path as the targets.
"""

from __future__ import annotations

import numpy as np

from scheduler.geometry.sky import altaz, enu_from_vectors
from scheduler.model.frames import BodyTrack, EarthFrame
from scheduler.model.night import Night

Vec3 = tuple[np.ndarray, np.ndarray, np.ndarray]


def cirs_at(track: BodyTrack, t_s: np.ndarray | float) -> np.ndarray:
    """Interpolated CIRS unit vectors of a body, shape ``t_s.shape + (3,)``."""
    t = np.asarray(t_s, float)
    v = np.stack([np.interp(t, track.t_nodes_s, track.xyz[:, k]) for k in range(3)], axis=-1)
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


def enu_at(track: BodyTrack, frame: EarthFrame, t_s: np.ndarray | float) -> Vec3:
    """ENU unit vector ``(e, n, u)`` of the body at ``t_s``."""
    return enu_from_vectors(cirs_at(track, t_s), frame, t_s)


def sun_altitude(night: Night, t_s: np.ndarray | float) -> np.ndarray:
    """The Sun's unrefracted altitude (rad) at ``t_s``."""
    return altaz(*enu_at(night.sun, night.frame, t_s))[0]


def moon_enu(night: Night, t_s: np.ndarray | float) -> Vec3:
    return enu_at(night.moon, night.frame, t_s)


def sun_enu(night: Night, t_s: np.ndarray | float) -> Vec3:
    return enu_at(night.sun, night.frame, t_s)


def illuminated_fraction(sun: BodyTrack, moon: BodyTrack, t_s: np.ndarray | float) -> np.ndarray:
    """Moon's illuminated fraction k = (1 - cos psi) / 2, psi the Sun-Moon elongation
    (Meeus, Astronomical Algorithms, 2nd ed. 1998, ch. 48, with the phase angle taken
    as 180 deg - psi)."""
    cos_psi = np.sum(cirs_at(sun, t_s) * cirs_at(moon, t_s), axis=-1)
    return 0.5 * (1.0 - cos_psi)


def moon_illumination(night: Night, t_s: np.ndarray | float) -> np.ndarray:
    return illuminated_fraction(night.sun, night.moon, t_s)
