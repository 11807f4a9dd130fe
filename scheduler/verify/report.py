"""What the verifier reports: one :class:`Violation` per broken rule and place.

``rule`` is one of :data:`RULES`; ``where`` names the place (a visit id, a field path,
``rules.<key>``, ``delay_lines[2]``); ``message`` says what is wrong with the numbers.
"""

from __future__ import annotations

from dataclasses import dataclass

RULES: tuple[str, ...] = (
    "schema",  # the document breaks its JSON Schema or holds a non-finite number
    "rules",  # the plan's rules block differs from the rules of the settings
    "configuration",  # the plan's site, stations or delay lines differ from the array file
    "catalog",  # a visit's target is missing from the catalog or disagrees with it
    "ids",  # duplicate visit ids, or a visit number below 1
    "times",  # end not after start, or the UTC strings disagree with the seconds
    "duration",  # a visit's length differs from its target's duration
    "night",  # outside the stated night, or the Sun above the night's limit
    "sun",  # too close to the Sun
    "moon",  # too close to the Moon while it is up
    "altitude",  # below the minimum or above the maximum altitude
    "horizon",  # below a station's horizon mask
    "time_window",  # a time-critical target outside its window
    "wind",  # pointing into a wind above the speed limit
    "visibility",  # at some instant no baseline measures the target (over-resolved)
    "mode",  # a visit's mode, wavelength or bandwidth is not its target's mode's
    "brightness",  # a target fainter than its mode's limits under the conditions
    "conditions",  # the plan's conditions block differs from the conditions given
    "delay",  # no common constant K puts every line inside its range
    "carriage_range",  # a stated carriage path outside its line's range, or a line missing
    "carriage_geometry",  # stated carriage paths that disagree with the geometry
    "transition",  # too little time to slew, move carriages and acquire
    "overlap",  # two visits overlap, or the file is not in time order
    "visits_per_target",  # more science visits of a target than it asks for
    "separation",  # two visits of one target closer than its minimum separation
    "hour_angle_spread",  # two visits of one target closer in hour angle than its spread
    "calibrator_copies",  # a calibrator observed more often than allowed
    "bracket",  # a science visit without a suitable calibrator before or after it
    "closure",  # a visit during a logged closure (replans)
    "replan_start",  # a visit before the replan's start (replans)
    "done",  # a visit already done planned again (replans)
)


@dataclass(frozen=True)
class Violation:
    """One broken rule: which rule, where in the plan, and what is wrong."""

    rule: str
    where: str
    message: str

    def __str__(self) -> str:
        return f"{self.where}: [{self.rule}] {self.message}"
