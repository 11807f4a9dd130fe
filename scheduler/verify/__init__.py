"""The independent plan verifier: every rule the planner promises, re-checked by another
code path.

It reads only the inputs (the array file, the catalog and the settings) and the plan
document, and shares no geometry, timing or transition code with the planner: sky
directions come from astropy's full ICRS -> AltAz transform at every minute of every
visit (:mod:`scheduler.astro.reference`), and the delay arithmetic, horizon masks,
angular distances, visibilities, slews and carriage moves are written again here.  The
rules are listed in :data:`scheduler.verify.report.RULES`; the tolerances in
:mod:`scheduler.verify.tolerances`.
"""

from __future__ import annotations

from typing import Any

from scheduler.model.array import ArrayModel
from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets
from scheduler.verify.check import check_plan
from scheduler.verify.report import RULES, Violation

__all__ = ["RULES", "Violation", "verify_plan"]


def verify_plan(doc: dict[str, Any], array: ArrayModel, targets: Targets,
                settings: PlanSettings) -> list[Violation]:  # fmt: skip
    """Every way in which the plan document ``doc`` (schema ``opdplan-plan/1``) breaks a
    rule of ``array``, ``targets`` and ``settings``; an empty list when the plan holds.

    The document is validated against its schema first; if that fails, or it holds a
    non-finite number, only those ``schema`` violations are returned."""
    return check_plan(doc, array, targets, settings)
