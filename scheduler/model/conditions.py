"""The night's conditions and how they move the modes' brightness limits.

The rule (common practice, no source; its coefficients are settings of each mode):

- fringe tracking needs enough photons within the atmospheric coherence time tau0, so
  its limiting magnitude moves by ``coherence_coefficient x 2.5 log10(tau0 / tau0_ref)``
  (a shorter tau0 makes the limit brighter);
- guiding (wavefront sensing) spreads the star over the seeing disk, so its limiting
  magnitude moves by ``-seeing_coefficient x 2.5 log10(seeing / seeing_ref)`` (default
  coefficient 2: flux per area of a disk of the seeing's width).

Wind: above the array file's wind speed limit no telescope points within a stated
angle of the azimuth the wind comes from.  ``worse`` is one step worse: seeing x 1.25 and
tau0 x 0.8 (common practice, from memory), used for backup lists.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from scheduler.model.array import Mode

WORSE_SEEING_FACTOR = 1.25
WORSE_COHERENCE_FACTOR = 0.8


@dataclass(frozen=True)
class Conditions:
    """Seeing (rad) and coherence time (s), None for each mode's reference, each times
    a factor (1 as stated; :meth:`worse` makes them one step worse); wind speed (m/s)
    and the azimuth it comes from (rad, north through east; None: no wind)."""

    seeing_rad: float | None = None
    coherence_s: float | None = None
    wind_speed_m_s: float = 0.0
    wind_from_rad: float | None = None
    seeing_factor: float = 1.0
    coherence_factor: float = 1.0

    def worse(self) -> Conditions:
        """One step worse: seeing x 1.25, coherence time x 0.8."""
        return replace(self, seeing_factor=self.seeing_factor * WORSE_SEEING_FACTOR,
                       coherence_factor=self.coherence_factor * WORSE_COHERENCE_FACTOR)

    def seeing_for(self, mode: Mode) -> float:
        base = self.seeing_rad if self.seeing_rad is not None else mode.reference_seeing_rad
        return base * self.seeing_factor

    def coherence_for(self, mode: Mode) -> float:
        base = self.coherence_s if self.coherence_s is not None else mode.reference_coherence_s
        return base * self.coherence_factor


def tracking_limit(mode: Mode, c: Conditions) -> float:
    """Faintest magnitude the fringe tracker works with under ``c``."""
    return mode.tracking_limit_mag + mode.coherence_coefficient * 2.5 * math.log10(
        c.coherence_for(mode) / mode.reference_coherence_s)


def guiding_limit(mode: Mode, c: Conditions) -> float:
    """Faintest magnitude the telescopes' guiding works with under ``c``."""
    return mode.guiding_limit_mag - mode.seeing_coefficient * 2.5 * math.log10(
        c.seeing_for(mode) / mode.reference_seeing_rad)
