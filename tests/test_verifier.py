"""The independent verifier (``scheduler.verify``).

- a plan opdplan makes, and a replan-shaped document built from it, pass;
- mutation tests: each breaks one rule of a copy of a valid plan (or tightens one input
  under it, or gives other conditions) and the verifier must name THAT rule; each
  mutation's docstring names the source of its rule (README.md, DOMAIN.md, CHECKS.md or
  a published formula);
- (in ``tests/test_verifier_arithmetic.py`` and ``tests/test_verifier_measuring.py``) the
  verifier's own arithmetic (directions, delay, horizon masks, angular distances, disk
  visibilities and their slopes, projected baselines, magnitude limits, mode set-ups,
  slews) against hand-computed values and CHECKS.md; its interpolated Sun and Moon
  against astropy's direct transform; modes, conditions and measuring.

The shared helpers are in ``tests/_verifier_cases.py``, the mutations in
``tests/_verifier_mutations_plan.py`` and ``tests/_verifier_mutations_observing.py``.
Data are the fictional demo scenario or invented here.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable

import pytest
from _verifier_cases import Case, Doc, demo, make_replan, plan_case, replan_case, shift
from _verifier_mutations_observing import (
    bracket_calibrator_deleted,
    bracket_calibrator_diameters_poorly_known,
    bracket_calibrators_in_another_mode,
    bracket_calibrators_resolved,
    bracket_calibrators_too_faint,
    bracket_no_calibrator_before,
    brightness_bad_seeing_given,
    brightness_guiding_band_fainter,
    brightness_short_coherence_given,
    brightness_tracking_limit_tightened,
    calibrator_copied_four_times,
    conditions_better_seeing_given,
    conditions_block_missing,
    conditions_wind_given,
    hour_angle_spread_repeats_an_earlier_night,
    mode_bandwidth_changed,
    mode_catalog_moves_target,
    mode_catalog_unknown,
    mode_not_stated,
    mode_unknown_name,
    mode_wavelength_changed,
    rules_wavelength_kept,
    transition_mode_setup_outgrows_the_gap,
    visibility_science_target_resolved,
    visits_per_target_beyond_the_campaign,
    wind_everywhere_in_the_plans_conditions,
)
from _verifier_mutations_plan import (
    altitude_above_maximum,
    altitude_rising_target_too_early,
    carriage_line_missing,
    carriage_outside_range,
    carriage_path_off_by_5_mm,
    catalog_kind,
    catalog_position,
    catalog_priority,
    catalog_program,
    catalog_unknown_pointing,
    catalog_unknown_target,
    closure_overlapped,
    configuration_feeds_swapped,
    configuration_line_range,
    configuration_out_line_kept,
    configuration_site_moved,
    configuration_station_moved,
    configuration_unknown,
    configuration_unknown_out,
    delay_out_of_reach,
    done_planned_again,
    duration_shortened,
    horizon_behind_a_dome,
    horizon_mask,
    ids_duplicate,
    moon_target_beside_the_moon,
    moon_too_close,
    night_ends_early,
    night_starts_in_daylight,
    night_visit_in_daylight,
    overlap_file_order,
    overlap_non_neighbours,
    replan_starts_before_now,
    rules_looser_gap,
    rules_other_settings,
    rules_unknown_key,
    schema_infinite_path,
    schema_missing_end_utc,
    schema_nan_position,
    schema_wrong_type,
    separation_too_short,
    sun_target_in_the_glow,
    sun_too_close,
    time_window_missed,
    times_reversed,
    times_utc_disagrees,
    transition_carriages_far,
    transition_carriages_unknown,
    transition_first_acquisition,
    transition_gap_shortened,
    transition_one_line_unknown,
    transition_pointing_unknown,
    visits_repeated,
)

from scheduler.model.array import ArrayModel
from scheduler.model.plan import PlanSettings
from scheduler.model.targets import Targets
from scheduler.verify import RULES, Violation, verify_plan

FIXTURES = (demo, plan_case, replan_case)
"""Fixtures of ``tests/_verifier_cases.py``, imported so that pytest finds them by name."""


# ---------------------------------------------------------------- valid documents pass


def test_greedy_demo_plan_passes(plan_case: Case) -> None:
    """A plan the planner made holds every rule (README.md, *The night queue*)."""
    assert len(plan_case.doc["visits"]) >= 6
    assert plan_case.run() == []


@pytest.mark.parametrize("out", [(), ("jasper",)])
def test_replan_shaped_document_passes(demo: tuple[Doc, ArrayModel, Targets],
                                       out: tuple[str, ...]) -> None:  # fmt: skip
    """README.md, *Replanning during the night*: done visits, closures, the start state
    and a station out, consistent with the plan they come from, break no rule."""
    doc, array, targets = demo
    replan = make_replan(doc, out)
    assert replan["done"] and replan["visits"] and replan["closures"]
    assert verify_plan(replan, array, targets, PlanSettings()) == []


def test_violation_reads_as_one_line() -> None:
    """The command line prints each violation on one line: ``where: [rule] message``
    (the verifier's public form; common practice, no source)."""
    v = Violation("overlap", "Tide-05#1", "overlaps Cal-Elm-02@1")
    assert str(v) == "Tide-05#1: [overlap] overlaps Cal-Elm-02@1"
    with pytest.raises(dataclasses.FrozenInstanceError):
        v.rule = "ids"  # type: ignore[misc]


# ---------------------------------------------------------------- mutations
# Each takes a Case and breaks one rule (tests/_verifier_mutations_plan.py,
# tests/_verifier_mutations_observing.py).  Sources: README.md sections (rules of the
# queue are common practice, no source) or the published formula named.


@dataclasses.dataclass(frozen=True)
class Mutation:
    rule: str
    change: Callable[[Case], None]
    base: str = "plan"  # or "replan"
    only: bool = False  # the rule is the only one broken (with those in ``also``)
    also: tuple[str, ...] = ()  # rules the change must break as well


MUTATIONS = [
    Mutation("schema", schema_missing_end_utc, only=True),
    Mutation("schema", schema_nan_position, only=True),
    Mutation("schema", schema_infinite_path, only=True),
    Mutation("schema", schema_wrong_type, only=True),
    Mutation("rules", rules_looser_gap, only=True),
    Mutation("rules", rules_other_settings, only=True),
    Mutation("rules", rules_unknown_key, only=True),
    Mutation("configuration", configuration_line_range, only=True),
    Mutation("configuration", configuration_station_moved, only=True),
    Mutation("configuration", configuration_feeds_swapped, only=True),
    Mutation("configuration", configuration_out_line_kept, "replan"),
    Mutation("configuration", configuration_unknown, only=True),
    Mutation("configuration", configuration_site_moved, only=True),
    Mutation("configuration", configuration_unknown_out, "replan", only=True),
    Mutation("catalog", catalog_position, only=True),
    Mutation("catalog", catalog_unknown_target),
    Mutation("catalog", catalog_kind, only=True),
    Mutation("catalog", catalog_program, only=True),
    Mutation("catalog", catalog_priority, only=True),
    Mutation("catalog", catalog_unknown_pointing, "replan"),
    Mutation("ids", ids_duplicate, only=True),
    Mutation("times", times_utc_disagrees, only=True),
    Mutation("times", times_reversed),
    Mutation("duration", duration_shortened),
    Mutation("night", night_ends_early, only=True),
    Mutation("night", night_starts_in_daylight, only=True),
    Mutation("night", night_visit_in_daylight),
    Mutation("sun", sun_too_close, only=True),
    Mutation("sun", sun_target_in_the_glow),
    Mutation("moon", moon_too_close, only=True),
    Mutation("moon", moon_target_beside_the_moon),
    Mutation("altitude", altitude_rising_target_too_early),
    Mutation("altitude", altitude_above_maximum, only=True),
    Mutation("horizon", horizon_mask, only=True),
    Mutation("horizon", horizon_behind_a_dome),
    Mutation("time_window", time_window_missed),
    Mutation("delay", delay_out_of_reach),
    Mutation("carriage_range", carriage_outside_range),
    Mutation("carriage_range", carriage_line_missing, only=True),
    Mutation("carriage_geometry", carriage_path_off_by_5_mm, only=True),
    Mutation("transition", transition_gap_shortened),
    Mutation("transition", transition_carriages_far, only=True),
    Mutation("transition", transition_first_acquisition, only=True),
    Mutation("transition", transition_pointing_unknown, "replan", only=True),
    Mutation("transition", transition_carriages_unknown, "replan", only=True),
    Mutation("transition", transition_one_line_unknown, "replan", only=True),
    Mutation("overlap", overlap_non_neighbours),
    Mutation("overlap", overlap_file_order, only=True),
    Mutation("visits_per_target", visits_repeated),
    Mutation("separation", separation_too_short),
    Mutation("hour_angle_spread", hour_angle_spread_repeats_an_earlier_night, only=True),
    Mutation("visits_per_target", visits_per_target_beyond_the_campaign, only=True),
    Mutation("calibrator_copies", calibrator_copied_four_times),
    Mutation("bracket", bracket_calibrator_deleted, only=True),
    Mutation("bracket", bracket_no_calibrator_before, only=True),
    Mutation("bracket", bracket_calibrators_resolved, only=True),
    Mutation("bracket", bracket_calibrators_too_faint, only=True),
    Mutation("closure", closure_overlapped, "replan", only=True),
    Mutation("replan_start", replan_starts_before_now, "replan", only=True),
    Mutation("done", done_planned_again, "replan"),
    Mutation("ids", done_planned_again, "replan"),
    Mutation("rules", rules_wavelength_kept, only=True),
    Mutation("mode", mode_unknown_name, only=True),
    Mutation("mode", mode_wavelength_changed, only=True),
    Mutation("mode", mode_bandwidth_changed, only=True),
    Mutation("mode", mode_not_stated, only=True),
    Mutation("mode", mode_catalog_moves_target, also=("bracket",)),
    Mutation("mode", mode_catalog_unknown),
    Mutation("brightness", brightness_tracking_limit_tightened, only=True),
    Mutation("brightness", brightness_guiding_band_fainter, only=True),
    Mutation("brightness", brightness_short_coherence_given, only=True),
    Mutation("brightness", brightness_bad_seeing_given, also=("conditions",), only=True),
    Mutation("visibility", visibility_science_target_resolved, only=True),
    Mutation("wind", wind_everywhere_in_the_plans_conditions, only=True),
    Mutation("conditions", conditions_better_seeing_given, only=True),
    Mutation("conditions", conditions_wind_given, only=True),
    Mutation("conditions", conditions_block_missing, only=True),
    Mutation("bracket", bracket_calibrator_diameters_poorly_known, only=True),
    Mutation("bracket", bracket_calibrators_in_another_mode, only=True),
    Mutation("transition", transition_mode_setup_outgrows_the_gap, only=True),
]


@pytest.mark.parametrize("m", MUTATIONS, ids=[f"{m.rule}:{m.change.__name__}" for m in MUTATIONS])
def test_mutation_is_caught(m: Mutation, plan_case: Case, replan_case: Case) -> None:
    """A copy of a valid plan, broken in one way, must be rejected under THAT rule (and,
    where the change touches nothing else, under that rule alone).  Each mutation's
    docstring names the source of the rule it breaks."""
    case = replan_case if m.base == "replan" else plan_case
    m.change(case)
    found = case.run()
    rules = {p.rule for p in found}
    assert {m.rule, *m.also} <= rules, found
    if m.only:
        assert rules == {m.rule, *m.also}, found


def test_every_rule_has_a_mutation() -> None:
    """Every rule the verifier names (report.RULES) is broken by at least one mutation,
    and every mutation names its source (README.md, DOMAIN.md, CHECKS.md or the
    published formula)."""
    assert {m.rule for m in MUTATIONS} == set(RULES)
    sources = ("README.md", "DOMAIN.md", "CHECKS.md", "Thompson")
    for m in MUTATIONS:
        assert m.change.__doc__ and any(s in m.change.__doc__ for s in sources), m.change.__name__


def test_schema_problem_names_the_field(plan_case: Case) -> None:
    """README.md, *Outputs*: a NaN in ra_deg is reported at its field, and nothing else
    is checked."""
    plan_case.doc["visits"][2]["ra_deg"] = float("nan")
    plan_case.doc["visits"][5]["opd_start_m"]["rail-1"] += 1.0  # ignored: schema first
    want = Violation("schema", "visits[2].ra_deg", "nan is not a finite number")
    assert plan_case.run() == [want]


def test_visit_number_below_one() -> None:
    """README.md, *Outputs*: visit numbers count from 1 (the schema says so too; the
    rule is checked on its own here, behind the schema's back)."""
    from scheduler.verify.document import Entry
    from scheduler.verify.entries import id_violations

    entry = Entry("Tide-05#0", "Tide-05", "science", 0, "P-tide", 9.0, 163.9204, -56.8109,
                  0.0, 1200.0, 0.0, 1200.0, {}, {})  # fmt: skip
    assert [p.rule for p in id_violations((entry,), ())] == ["ids"]


def test_overlap_is_found_whatever_the_file_order(plan_case: Case) -> None:
    """README.md, *The night queue*: one visit at a time, every pair checked."""
    vs = plan_case.doc["visits"]
    shift(vs[12], vs[3]["start_s"] + 60.0 - vs[12]["start_s"])
    found = [p for p in plan_case.run() if p.rule == "overlap"]
    assert any(vs[12]["id"] in p.where + p.message and vs[3]["id"] in p.where + p.message
               for p in found), found  # fmt: skip


def test_moon_counts_only_while_it_is_up(plan_case: Case) -> None:
    """README.md, *Inputs*: moon_separation_min applies while the Moon is above the
    horizon.  With a limit of 179 deg every visit is near the Moon; the last visit of
    the demo night, after moonset (the Moon sets before it starts), is not reported."""
    plan_case.array = dataclasses.replace(plan_case.array, limits=dataclasses.replace(
        plan_case.array.limits, moon_separation_min_rad=math.radians(179.0)))
    found = {p.where for p in plan_case.run() if p.rule == "moon"}
    ids = [v["id"] for v in plan_case.doc["visits"]]
    assert set(ids[:5]) <= found
    assert ids[-1] not in found
