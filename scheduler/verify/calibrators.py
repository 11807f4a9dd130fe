"""Which calibrator suits which science target, for rule ``bracket`` (DOMAIN.md sections
5 and 8; README.md, *The night queue*; common practice, no source; CHECKS.md,
*Visibilities*, for the formulas).

A calibrator suits a science target when

- both use the same observing mode (catalog modes; empty: the array's first);
- it is within ``calibrator_max_sep`` of it (the angle between the catalog positions);
- within ``calibrator_max_dmag`` when both magnitudes in the mode's tracking band are
  known (``mag_<band>``, else the plain ``mag``);
- and, when its diameter is known, it stays nearly unresolved and well known on the
  longest baseline of the lines in use (which bounds every projected length): its disk
  visibility (limb-darkened when the catalog gives a coefficient) at the wavelength of
  its mode is at least ``calibrator_min_visibility`` there, and the error its diameter
  uncertainty brings to V^2, ``sigma(V^2) = |dV^2/dtheta| sigma_theta`` (analytic slope),
  is at most the array's ``calibrator_error_max`` at every projected length from 0 to
  that baseline.  sigma_theta is the catalog's ``diameter_err_mas``, else the array's
  ``diameter_error_fraction`` of the diameter.
"""

from __future__ import annotations

import math

from scheduler.model.array import ArrayModel
from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets
from scheduler.verify.geometry import angular_distance, calibration_error, disk_visibility
from scheduler.verify.observing import band_magnitude, catalog_mode
from scheduler.verify.tolerances import (
    CAL_ERROR_SAMPLES,
    CAL_ERROR_TOL,
    CAL_SEP_TOL_RAD,
    DMAG_TOL,
    VIS_TOL,
)


class Suitability:
    """Why calibrator ``cal`` does not suit science target ``sci`` (catalog indices),
    or None when it does; each calibrator's own quality is worked out once."""

    def __init__(self, targets: Targets, array: ArrayModel, settings: PlanSettings,
                 longest_m: float) -> None:  # fmt: skip
        self.targets, self.array, self.settings = targets, array, settings
        self.longest_m = longest_m
        self._quality: dict[int, str | None] = {}

    def _mode_name(self, i: int) -> str:
        mode = catalog_mode(self.array, self.targets, i)
        return mode.name if mode is not None else self.targets.mode[i]

    def _tracking_mag(self, i: int) -> float:
        mode = catalog_mode(self.array, self.targets, i)
        if mode is None:
            return float(self.targets.mag[i])
        return band_magnitude(self.targets, i, mode.tracking_band, mode)

    def quality(self, cal: int) -> str | None:
        """Why the calibrator is too resolved or too poorly known, or None."""
        if cal not in self._quality:
            self._quality[cal] = self._judge(cal)
        return self._quality[cal]

    def _judge(self, cal: int) -> str | None:
        t, lim = self.targets, self.array.limits
        theta = float(t.diameter_rad[cal])
        mode = catalog_mode(self.array, t, cal)
        if math.isnan(theta) or mode is None:
            return None
        u = float(t.limb_darkening[cal])
        u = 0.0 if math.isnan(u) else u
        vis = disk_visibility(theta, self.longest_m, mode.wavelength_m, u)
        if vis < self.settings.calibrator_min_visibility - VIS_TOL:
            return (f"V = {vis:.3f} on {self.longest_m:.1f} m, below "
                    f"{self.settings.calibrator_min_visibility:g}")  # fmt: skip
        sigma = float(t.diameter_err_rad[cal])
        if math.isnan(sigma):
            sigma = lim.diameter_error_fraction * theta
        error = calibration_error(theta, sigma, self.longest_m, mode.wavelength_m, u,
                                  CAL_ERROR_SAMPLES)  # fmt: skip
        if error > lim.calibrator_error_max + CAL_ERROR_TOL:
            return f"sigma(V^2) = {error:.4f}, above {lim.calibrator_error_max:g}"
        return None

    def __call__(self, sci: int, cal: int) -> str | None:
        t, s = self.targets, self.settings
        if self._mode_name(sci) != self._mode_name(cal):
            return f"mode {self._mode_name(cal)!r}, not {self._mode_name(sci)!r}"
        sep = float(angular_distance(t.ra_rad[sci], t.dec_rad[sci], t.ra_rad[cal],
                                     t.dec_rad[cal]))  # fmt: skip
        if sep > s.calibrator_max_sep_rad + CAL_SEP_TOL_RAD:
            return f"{math.degrees(sep):.2f} deg away"
        m_sci, m_cal = self._tracking_mag(sci), self._tracking_mag(cal)
        if not (math.isnan(m_sci) or math.isnan(m_cal)):
            if abs(m_sci - m_cal) > s.calibrator_max_dmag + DMAG_TOL:
                return f"{abs(m_sci - m_cal):.2f} mag apart"
        return self.quality(cal)
