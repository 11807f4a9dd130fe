"""The night problem: everything the geometry needs for one night, configuration and
catalog, prepared once (by :mod:`scheduler.astro.problem`) and then only read."""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from scheduler.model.array import Beams, Limits, Mode, Overheads
from scheduler.model.conditions import Conditions
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
    applied), from which the fast path turns the sky with the Earth.  ``modes`` are the
    array's observing modes and ``mode_index`` each target's; ``faint`` each target's
    FAINT reason code under ``conditions`` (0: bright enough or unknown).
    """

    night: Night
    beams: Beams
    targets: Targets
    limits: Limits
    overheads: Overheads
    ri_rad: np.ndarray
    di_rad: np.ndarray
    margins: Margins = Margins()
    modes: tuple[Mode, ...] = (Mode("default"),)
    mode_index: np.ndarray = field(default_factory=lambda: np.zeros(0, int))
    faint: np.ndarray = field(default_factory=lambda: np.zeros(0, int))
    conditions: Conditions = Conditions()
    #: per target, mid-visit hour angles (rad) of its visits on earlier nights with this
    #: configuration (a campaign's; empty: none known)
    past_hour_angles: tuple[tuple[float, ...], ...] = ()

    def __post_init__(self) -> None:
        n = len(self.targets)
        for name in ("mode_index", "faint"):
            if len(getattr(self, name)) != n:
                object.__setattr__(self, name, np.zeros(n, int))
        if len(self.past_hour_angles) != n:
            object.__setattr__(self, "past_hour_angles", ((),) * n)

    @property
    def wavelength_m(self) -> np.ndarray:
        """Each target's effective wavelength (its mode's), metres."""
        return np.array([m.wavelength_m for m in self.modes])[self.mode_index]

    def hour_angle_rad(self, i: int, t_s: np.ndarray | float) -> np.ndarray:
        """Target ``i``'s hour angle at ``t_s`` (rad in (-pi, pi], positive west): the
        local Earth rotation angle less its CIRS right ascension (both counted from the
        CIO; the sidereal time would need the equinox-based right ascension)."""
        return np.angle(np.exp(1j * (self.night.frame.local_era(t_s) - self.ri_rad[i])))

    def mode_of(self, i: int) -> Mode:
        return self.modes[int(self.mode_index[i])]

    def subset(self, idx: np.ndarray) -> NightProblem:
        """The same night for the targets at positions ``idx`` only, in that order."""
        i = np.asarray(idx, int)
        return replace(self, targets=self.targets.subset(i), ri_rad=self.ri_rad[i],
                       di_rad=self.di_rad[i], mode_index=self.mode_index[i],
                       faint=self.faint[i],
                       past_hour_angles=tuple(self.past_hour_angles[k] for k in i))  # fmt: skip

    def ignoring_brightness(self) -> NightProblem:
        """The same night with every target taken as bright enough (the brightness is
        then judged elsewhere, e.g. under conditions drawn night by night)."""
        return replace(self, faint=np.zeros(len(self.targets), int))
