"""Every tolerance and sampling step of the verifier, named in one place.

A tolerance always leans towards the plan: a rule is broken only when the plan misses it
by more than the tolerance.  Each says what it covers and why it is that size.  The
planner keeps margins of its own inside every limit (2 arcsec of altitude, 2 mm of
optical path, 1 s per transition; README.md, *How accurate*), so a sound plan passes
with room to spare, while the mutation tests break rules by far more.
"""

from __future__ import annotations

import math

ARCSEC_RAD = math.pi / (180.0 * 3600.0)

# sampling
SAMPLE_S = 60.0
"""Sky samples: every minute of every visit, and both ends."""
BODY_NODE_S = 600.0
"""Sun and Moon from astropy every 10 minutes, interpolated between (within about an
arcsecond of astropy's direct transform; tested)."""

# angles
ALT_TOL_RAD = 1.0 * ARCSEC_RAD
"""Altitude limits and horizon masks (the planner keeps 2 arcsec inside them)."""
SUN_ALT_TOL_RAD = 20.0 * ARCSEC_RAD
"""The Sun's altitude limit of the night: the planner finds the night's edges to about
0.5 s, while the Sun's altitude changes by up to 15 arcsec per second."""
BODY_SEP_TOL_RAD = 30.0 * ARCSEC_RAD
"""Distances from the Sun and the Moon, and the Moon being above the horizon (the planner
interpolates both bodies between sparse nodes)."""
CAL_SEP_TOL_RAD = 1e-9
"""Calibrator-to-target distance: both positions come exactly from the catalog."""
COORD_TOL_DEG = 1e-6
"""A visit's ra_deg/dec_deg against the catalog (3.6 mas: written as full floats)."""

# optical path
OPD_TOL_M = 1e-3
"""Delay feasibility (the K span may be empty by at most this) and the stated carriage
paths against the geometry (the implied K of the lines may spread by at most this)."""
RANGE_TOL_M = 1e-6
"""A stated carriage path outside its line's range (plans round paths to 1 micrometre)."""
ARRAY_TOL_M = 1e-6
"""The plan's copy of station positions, internal paths, ranges and offsets."""
SITE_TOL = 1e-9
"""The plan's copy of the site: latitude and longitude (deg), height (m)."""

# time
TIME_TOL_S = 1.0
"""Times against the night, windows, closures, transitions, gaps, separations and
durations."""
UTC_TOL_S = 1e-3 + 1e-6
"""A visit's start_utc/end_utc against its start_s/end_s: 1 ms (both are written to the
millisecond, each rounded its own way), and a microsecond for float arithmetic."""

# numbers
REL_TOL = 1e-6
"""Relative tolerance of the plan's rules, rates and priorities against the inputs."""
ZERO_TOL = 1e-12
"""Absolute tolerance beside REL_TOL, for values that are zero."""
VIS_TOL = 1e-9
"""A calibrator's uniform-disk visibility against the minimum."""
DMAG_TOL = 1e-9
"""A calibrator's magnitude difference against the maximum."""
