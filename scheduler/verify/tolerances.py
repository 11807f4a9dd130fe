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
WIND_TOL_RAD = 60.0 * ARCSEC_RAD
"""A sample's azimuth against the wind's forbidden sector: the planner's directions agree
with astropy's to about an arcsecond, which near the 87 deg altitude limit moves the
azimuth by up to 1/cos(87 deg), about 19 times as much."""
VIS_DIR_TOL_RAD = 15.0 * ARCSEC_RAD
"""Projected baselines are taken as if each direction stood this much nearer the
baseline (the shortest length it allows, so the most usable): the planner's directions
agree with astropy's to about an arcsecond, and 15 arcsec is one second of the Earth's
turn."""
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
"""A calibrator's disk visibility against the minimum."""
CAL_ERROR_TOL = 1e-4
"""A calibrator's sigma(V^2) against ``calibrator_error_max`` (0.5 % of 0.02): the
planner samples fewer projected lengths and takes a finite difference for the slope."""
CAL_ERROR_SAMPLES = 513
"""Projected lengths, evenly from 0 to the longest baseline, at which a calibrator's
sigma(V^2) is evaluated."""
MAG_TOL = 1e-6
"""A target's magnitude against its mode's limit under the conditions (the same
arithmetic on the same inputs: only rounding)."""
MODE_TOL_UM = 1e-5
"""A visit's wavelength_um and bandwidth_um against its mode's (plans round them to
1e-6 um)."""
CONDITIONS_TOL = 1e-3
"""The plan's conditions block against the conditions given, in the block's units
(arcsec, ms, m/s, deg; plans round them to 1e-4)."""
DMAG_TOL = 1e-9
"""A calibrator's magnitude difference against the maximum."""
#: hour angles of visits against a spread: astropy's apparent hour angle and the
#: planner's sidereal time agree to well under an arcsecond; 2 s of time leans towards
#: the plan
HOUR_ANGLE_TOL_RAD = 2.0 * 2 * 3.141592653589793 / 86400.0
