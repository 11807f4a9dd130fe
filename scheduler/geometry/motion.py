"""Proper motion: catalog positions (ICRS, epoch J2000.0) carried to another date.

Pure numpy; linear in right ascension and declination, ample for the arcsecond-level
needs of scheduling over decades.
"""

from __future__ import annotations

import numpy as np

from scheduler.model.targets import Targets

J2000_UNIX_S = 946727935.816  # 2000-01-01T12:00:00 TT as a POSIX UTC timestamp
JULIAN_YEAR_S = 365.25 * 86400.0


def positions_at(targets: Targets, t_s: float) -> tuple[np.ndarray, np.ndarray]:
    """ICRS (ra, dec) in radians at POSIX time ``t_s``, proper motion applied linearly
    from epoch J2000.0 (``pm_ra_rad_yr`` includes the cos(dec) factor)."""
    years = (t_s - J2000_UNIX_S) / JULIAN_YEAR_S
    dec = targets.dec_rad + targets.pm_dec_rad_yr * years
    ra = targets.ra_rad + targets.pm_ra_rad_yr * years / np.cos(targets.dec_rad)
    return np.mod(ra, 2 * np.pi), dec
