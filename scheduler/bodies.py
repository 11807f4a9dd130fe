"""Sun and Moon over a night: directions sampled at nodes and interpolated.

Pure numpy.  :mod:`scheduler.ephemeris` samples each body's CIRS direction with astropy
at nodes (every 20 minutes for the Moon, 3 hours for the Sun); between nodes the unit
vector is interpolated linearly and renormalised (the topocentric Moon's parallax
turns with the Earth, so the chord error is some tens of arcseconds at hourly nodes and
a few at 20 minutes, far inside any Moon-distance limit) and rotated to the horizon by
the same fast path as the targets.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.sky import EarthFrame, enu_from_vectors


@dataclass(frozen=True, eq=False)
class BodyTrack:
    """CIRS unit vectors ``xyz`` (T, 3) of a body at POSIX times ``t_nodes_s`` (T,)."""

    name: str
    t_nodes_s: np.ndarray
    xyz: np.ndarray

    def cirs_at(self, t_s) -> np.ndarray:
        """Interpolated CIRS unit vectors, shape ``t_s.shape + (3,)``."""
        t = np.asarray(t_s, float)
        v = np.stack([np.interp(t, self.t_nodes_s, self.xyz[:, k]) for k in range(3)], axis=-1)
        return v / np.linalg.norm(v, axis=-1, keepdims=True)

    def enu_at(self, frame: EarthFrame, t_s):
        """ENU unit vector ``(e, n, u)`` of the body at ``t_s``."""
        return enu_from_vectors(self.cirs_at(t_s), frame, t_s)


def illuminated_fraction(sun: BodyTrack, moon: BodyTrack, t_s) -> np.ndarray:
    """Moon's illuminated fraction k = (1 - cos psi) / 2, psi the Sun-Moon elongation
    (Meeus, Astronomical Algorithms, 2nd ed. 1998, ch. 48, with the phase angle taken
    as 180 deg - psi)."""
    cos_psi = np.sum(sun.cirs_at(t_s) * moon.cirs_at(t_s), axis=-1)
    return 0.5 * (1.0 - cos_psi)
