"""How far the bundled Earth-orientation tables reach, and what is lost beyond them.

Offline, astropy takes UT1 - UTC and polar motion from the ``astropy-iers-data``
package.  Past the end of its predictions they are held at their last values: UT1 - UTC
then drifts from the truth by up to about a second a year (common practice, from
memory: the Earth's rotation has lost 0.5-1 s a year against atomic time since 1972),
and each second turns the sky by 15 arcsec and changes a delay by 7.3 mm per 100 m of
baseline.
"""

from __future__ import annotations

import datetime as dt
from functools import cache

import numpy as np
from astropy.utils import iers

UT1_DRIFT_S_PER_YEAR = 1.0  # worst-case drift of UT1 - UTC held constant (from memory)
ARCSEC_PER_UT1_S = 15.0
MM_PER_100M_PER_UT1_S = 7.29


@cache
def table_end() -> dt.date:
    """The last date of the bundled Earth-orientation table (predictions included)."""
    table = iers.earth_orientation_table.get()
    mjd = float(np.max(table["MJD"].value))
    return dt.date(1858, 11, 17) + dt.timedelta(days=int(mjd))


def coverage_warning(first: dt.date, last: dt.date | None = None) -> str | None:
    """A one-line warning when nights from ``first`` to ``last`` pass the table's end,
    saying how much accuracy may be lost; None when they are covered."""
    end = table_end()
    last = last or first
    if last <= end:
        return None
    years = (last - end).days / 365.25
    dt_s = max(UT1_DRIFT_S_PER_YEAR * years, 0.1)
    return (
        f"night {last} is past the bundled Earth-orientation table (ends {end}): UT1-UTC "
        f"and polar motion are held at their last values, so times may be off by up to "
        f"about {dt_s:.1f} s ({dt_s * ARCSEC_PER_UT1_S:.0f} arcsec of hour angle, "
        f"{dt_s * MM_PER_100M_PER_UT1_S:.0f} mm of delay per 100 m of baseline); a newer "
        f"astropy-iers-data restores full accuracy"
    )
