"""The Earth's orientation over one night, and the tracks of the Sun and Moon.

Plain data prepared by the astropy edge (:mod:`scheduler.astro`) and used by the pure
numpy geometry (:mod:`scheduler.geometry`).  Angles in radians, times in POSIX UTC
seconds.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Earth rotation angle rate, rad per UT1 second (IERS Conventions 2010:
#: 1.00273781191135448 revolutions per UT1 day).
ERA_RATE_RAD_S = 2.0 * np.pi * 1.00273781191135448 / 86400.0
#: Earth's rotation rate used for delay rates, rad/s (IERS Conventions 2010).
OMEGA_EARTH_RAD_S = 7.292115146706979e-5


@dataclass(frozen=True)
class EarthFrame:
    """Earth orientation for one night at one site.

    ``local_era_rad`` is the local Earth rotation angle (ERA + s' + east longitude,
    adjusted for polar motion) at ``t_ref_s``; ``xpl_rad``/``ypl_rad`` the polar motion
    rotated onto the local meridian; ``diurab_rad`` the diurnal aberration constant
    (site speed over c); ``latitude_rad`` geodetic.
    """

    t_ref_s: float
    local_era_rad: float
    xpl_rad: float
    ypl_rad: float
    diurab_rad: float
    latitude_rad: float

    def local_era(self, t_s: np.ndarray | float) -> np.ndarray:
        """Local Earth rotation angle at ``t_s`` (UT1 - UTC is constant over a night)."""
        return self.local_era_rad + ERA_RATE_RAD_S * (np.asarray(t_s, float) - self.t_ref_s)


@dataclass(frozen=True, eq=False)
class BodyTrack:
    """Geocentric-CIRS unit vectors ``xyz`` (T, 3) of the Sun or Moon as seen from the
    site, at POSIX times ``t_nodes_s`` (T,); interpolated by
    :mod:`scheduler.geometry.bodies`."""

    name: str
    t_nodes_s: np.ndarray
    xyz: np.ndarray

    def between(self, t_start_s: float, t_end_s: float) -> BodyTrack:
        """The nodes covering ``[t_start_s, t_end_s]``, with two more on each side for
        the interpolation (a smaller object to keep or send)."""
        lo = max(int(np.searchsorted(self.t_nodes_s, t_start_s)) - 2, 0)
        hi = min(int(np.searchsorted(self.t_nodes_s, t_end_s)) + 2, len(self.t_nodes_s))
        return BodyTrack(self.name, self.t_nodes_s[lo:hi].copy(), self.xyz[lo:hi].copy())
