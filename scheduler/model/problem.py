"""The night problem: everything the geometry needs for one night, configuration and
catalog, prepared once (by :mod:`scheduler.astro.problem`) and then only read."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.model.array import Beams, Limits, Overheads
from scheduler.model.night import Night
from scheduler.model.targets import Targets

ARCSEC_RAD = np.pi / (180.0 * 3600.0)


@dataclass(frozen=True)
class Margins:
    """Safety margins the planner keeps inside every limit, so that a plan stays valid
    under the verifier's independent geometry (which agrees with the fast path to well
    under an arcsecond and a millimetre)."""

    altitude_rad: float = 2.0 * ARCSEC_RAD
    delay_m: float = 0.002


@dataclass(frozen=True, eq=False)
class NightProblem:
    """One night, the delay lines in use, the catalog and the limits.

    ``ri_rad``/``di_rad`` are each target's geocentric CIRS place at
    ``night.frame.t_ref_s`` (precession, nutation, aberration and proper motion
    applied), from which the fast path turns the sky with the Earth.
    """

    night: Night
    beams: Beams
    targets: Targets
    limits: Limits
    overheads: Overheads
    ri_rad: np.ndarray
    di_rad: np.ndarray
    margins: Margins = Margins()
