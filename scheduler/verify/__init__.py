"""The independent plan verifier: every rule the planner promises, re-checked by another
code path.

It reads only the inputs (the array file with its observing modes, the catalog, the
settings and the night's conditions) and the plan document, and shares no geometry,
timing or transition code with the planner: sky directions come from astropy's full
ICRS -> AltAz transform at every minute of every visit
(:mod:`scheduler.astro.reference`), and the delay arithmetic, horizon masks, angular
distances, projected baselines, disk visibilities and their slopes, magnitude limits,
slews and carriage moves are written again here.  The rules are listed in
:data:`scheduler.verify.report.RULES`; the tolerances in
:mod:`scheduler.verify.tolerances`.

Conditions (seeing, coherence time, wind) are what the operator observed, so the
verifier takes them from whoever observed them: when conditions are given (the command
line's ``--seeing``, ``--coherence-ms``, ``--wind-speed``, ``--wind-from``), the plan is
judged under them, and its ``conditions`` block must state the same (rule
``conditions``); when none are given, the plan is judged under the conditions its
``conditions`` block states (a plan is held to what it claims; no block: each mode's
reference and no wind).  Either way the brightness and wind rules work from the
conditions themselves, never from the plan's verdicts (its ``weak_baselines``, its
``setup_s`` and ``backups`` are informational and not read).
"""

from __future__ import annotations

from typing import Any

from scheduler.model.array import ArrayModel
from scheduler.model.conditions import Conditions
from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets
from scheduler.verify.check import check_plan
from scheduler.verify.report import RULES, Violation

__all__ = ["RULES", "Violation", "verify_plan"]


def verify_plan(doc: dict[str, Any], array: ArrayModel, targets: Targets,
                settings: PlanSettings, conditions: Conditions | None = None) -> list[Violation]:
    """Every way in which the plan document ``doc`` (schema ``opdplan-plan/1``) breaks a
    rule of ``array``, ``targets``, ``settings`` and the night's ``conditions`` (None:
    those the plan's ``conditions`` block states); an empty list when the plan holds.

    The document is validated against its schema first; if that fails, or it holds a
    non-finite number, only those ``schema`` violations are returned."""
    return check_plan(doc, array, targets, settings, conditions)
