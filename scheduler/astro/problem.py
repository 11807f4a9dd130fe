"""Preparing the night problem: each target's apparent place for the night, once, and
whether it is bright enough for its mode under the conditions."""

from __future__ import annotations

from scheduler.astro.ephemeris import apparent_places
from scheduler.model.array import ArrayModel, Beams
from scheduler.model.brightness import faint_codes, mode_indices
from scheduler.model.conditions import Conditions
from scheduler.model.night import Night
from scheduler.model.problem import Margins, NightProblem
from scheduler.model.targets import Targets


def night_problem(array: ArrayModel, beams: Beams, targets: Targets, night: Night,
                  margins: Margins | None = None,
                  conditions: Conditions | None = None) -> NightProblem:  # fmt: skip
    """The :class:`NightProblem` of ``targets`` observed with ``beams`` on ``night``."""
    ri, di = apparent_places(targets, night.frame.t_ref_s)
    c = conditions or Conditions()
    return NightProblem(night, beams, targets, array.limits, array.overheads, ri, di,
                        margins or Margins(), array.modes, mode_indices(targets, array),
                        faint_codes(targets, array, c), c)  # fmt: skip
