"""The order of the checks: the schema first (and alone when it fails), then the plan's
rules, conditions and configuration against the inputs, each visit as written (its
mode and brightness included), the sky at every sample (one astropy transform for
everything: wind and visibilities too), the carriages, the sequence, the counts, the
brackets and a replan's own rules."""

from __future__ import annotations

from functools import partial
from typing import Any

from scheduler.model.array import ArrayModel
from scheduler.model.conditions import Conditions
from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets
from scheduler.verify.campaign_rules import campaign_allowed, spread_violations
from scheduler.verify.declared import (
    LineSet,
    configuration_violations,
    lines_in_use,
    rules_violations,
)
from scheduler.verify.document import PlanDoc, read_document
from scheduler.verify.entries import (
    catalog_violations,
    duration_violations,
    id_violations,
    time_violations,
)
from scheduler.verify.group_rules import (
    bracket_violations,
    count_violations,
    separation_violations,
)
from scheduler.verify.observing import (
    brightness_violations,
    conditions_violations,
    mode_violations,
    setup_s,
    stated_conditions,
)
from scheduler.verify.report import Violation
from scheduler.verify.resolution import visibility_violations
from scheduler.verify.sequence import (
    overlap_violations,
    replan_violations,
    time_order,
    transition_violations,
)
from scheduler.verify.sky import Sky, observe
from scheduler.verify.visit_rules import (
    geometry_violations,
    night_edge_violations,
    range_violations,
    sky_violations,
    wind_violations,
)


def _written(plan: PlanDoc, array: ArrayModel, targets: Targets) -> list[Violation]:
    """Rules on the visits as written, and over all visits of a target."""
    return (catalog_violations(plan.visits, plan.done, targets)
            + mode_violations(plan.visits, plan.done, array, targets)
            + id_violations(plan.visits, plan.done) + time_violations(plan.visits, plan.done)
            + duration_violations(plan.visits, targets)
            + overlap_violations(plan.visits) + replan_violations(plan))  # fmt: skip


def _sky(plan: PlanDoc, array: ArrayModel, targets: Targets) -> Sky:
    """One transform for every visit that can be placed on the sky, and the pointing."""
    visits = {j: (targets.index(v.target), v.start_s, v.end_s) for j, v in enumerate(plan.visits)
              if v.target in targets.names and v.end_s > v.start_s}  # fmt: skip
    state = plan.start_state
    pointing = None
    if state is not None and state.pointing in targets.names:
        pointing = (targets.index(str(state.pointing)), state.utc_s)
    return observe(array.site, targets, visits, pointing, (plan.night_start_s, plan.night_end_s))


def _pointing(plan: PlanDoc, targets: Targets) -> list[Violation]:
    state = plan.start_state
    if state is None or state.pointing is None or state.pointing in targets.names:
        return []
    return [Violation("catalog", "start_state.pointing",
                      f"target {state.pointing!r} is not in the catalog")]


def _geometry(plan: PlanDoc, array: ArrayModel, targets: Targets, lines: LineSet, sky: Sky,
              conditions: Conditions) -> list[Violation]:  # fmt: skip
    """Sky, carriage and transition rules of the planned visits."""
    night = (plan.night_start_s, plan.night_end_s)
    found = night_edge_violations(sky.extra_sun, array.limits, night)
    for j, v in enumerate(plan.visits):
        found += range_violations(v, lines)
        track = sky.tracks.get(j)
        if track is not None:
            found += sky_violations(v, track, targets, array.limits, lines, night)
            found += wind_violations(v, track, array.limits, conditions)
            found += visibility_violations(v, track, targets, array, lines)
            found += geometry_violations(v, track, lines)
    order = time_order(plan.visits)
    return found + transition_violations(plan, order, lines, array.overheads, sky,
                                         partial(setup_s, array, targets))  # fmt: skip


def check_plan(doc: dict[str, Any], array: ArrayModel, targets: Targets, settings: PlanSettings,
               conditions: Conditions | None = None) -> list[Violation]:  # fmt: skip
    """Every violation of the plan ``doc`` against the array, catalog, settings and
    conditions (None: those the plan states)."""
    plan, found = read_document(doc)
    if plan is None:
        return found
    found = rules_violations(doc["rules"], settings)
    if conditions is None:
        conditions = stated_conditions(doc)
    else:
        found += conditions_violations(doc, conditions)
    lines, problems = lines_in_use(array, plan.configuration, plan.out)
    found += problems
    found += _written(plan, array, targets) + _pointing(plan, targets)
    found += brightness_violations(plan.visits, array, targets, conditions)
    found += count_violations(plan.visits, plan.done, targets, settings.calibrator_copies,
                              campaign_allowed(doc, plan.configuration))  # fmt: skip
    found += separation_violations(plan.visits, plan.done, targets)
    found += spread_violations(doc, plan.visits + plan.done, array.site, targets,
                               plan.configuration)  # fmt: skip
    if lines is None:
        return found
    found += configuration_violations(doc, array, lines)
    found += _geometry(plan, array, targets, lines, _sky(plan, array, targets), conditions)
    found += bracket_violations(plan.visits, plan.done, targets, settings, array,
                                lines.longest_baseline_m())  # fmt: skip
    return found
