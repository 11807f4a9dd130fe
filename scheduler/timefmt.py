"""Time formatting at the edges: ISO 8601 UTC strings and sidereal-time labels.

Inside opdplan times are POSIX UTC seconds (floats).  Outputs write ISO 8601 with a
trailing ``Z``, to the second.
"""

from __future__ import annotations

import datetime as dt

import numpy as np


def iso_utc(t_s: float) -> str:
    """``2027-04-19T02:00:00Z`` for POSIX seconds (rounded to the second)."""
    t = dt.datetime.fromtimestamp(round(float(t_s)), tz=dt.UTC)
    return t.strftime("%Y-%m-%dT%H:%M:%SZ")


def hhmm(t_s: float) -> str:
    """``HH:MM`` UTC."""
    return dt.datetime.fromtimestamp(round(float(t_s)), tz=dt.UTC).strftime("%H:%M")


def hours_label(angle_rad: float) -> str:
    """An angle as ``HH:MM`` of hours (for LST), wrapped to 0-24 h."""
    minutes = int(round(np.degrees(np.mod(angle_rad, 2 * np.pi)) / 15.0 * 60.0)) % (24 * 60)
    return f"{minutes // 60:02d}:{minutes % 60:02d}"
