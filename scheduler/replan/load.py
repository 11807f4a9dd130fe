"""Everything a replan reads, checked together: the previous plan, the array and catalog
it was made from (or the ones given), ``--now``, and the night log."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from scheduler.astro.night import find_night
from scheduler.astro.problem import night_problem
from scheduler.inputs.array_file import load_array
from scheduler.inputs.campaign_file import campaign_of_plan
from scheduler.inputs.catalog import load_targets
from scheduler.inputs.night_log import LogTerms, read_log
from scheduler.inputs.plan_file import read_plan
from scheduler.inputs.provenance import plan_input
from scheduler.model.array import ArrayModel
from scheduler.model.campaign import CampaignState
from scheduler.model.errors import Gather, InputError, Problem
from scheduler.model.plan import Start
from scheduler.model.problem import NightProblem
from scheduler.model.targets import Targets
from scheduler.model.times import iso_utc, parse_night, utc_option
from scheduler.queue.campaign import campaign_night
from scheduler.replan.situation import Situation, origin_of, read_situation


@dataclass(frozen=True)
class Replan:
    """A replan's inputs: the array, the night problem of what is left (lines out
    removed), the restart state, the previous plan document, the situation, and the
    night with every line of the configuration (for the visits already done), and the
    campaign the plan was made for (None: none)."""

    array: ArrayModel
    problem: NightProblem
    origin: Start
    previous: dict[str, Any]
    situation: Situation
    full: NightProblem
    campaign: CampaignState | None = None


def load_replan(plan_path: str, log_path: str, now_text: str, array_path: str | None = None,
                targets_path: str | None = None, g: Gather | None = None) -> Replan:  # fmt: skip
    """Read and check every input of a replan; InputError with all problems at once
    (together with those already in ``g``)."""
    g = g if g is not None else Gather()
    doc = g.take(read_plan, plan_path)
    now_s = g.take(utc_option, now_text, "--now")
    array: ArrayModel | None = None
    targets: Targets | None = None
    terms: LogTerms | None = None
    if doc is not None:
        src = plan_input(doc, plan_path, "array", array_path, g)
        array = g.take(load_array, src) if src else None
        src = plan_input(doc, plan_path, "targets", targets_path, g)
        modes = [m.name for m in array.modes] if array is not None else None
        targets = g.take(load_targets, src, modes) if src else None
        terms = LogTerms.of_plan(doc, plan_path)
        if array is not None and doc["configuration"] not in {c.name for c in array.configurations}:
            g.add(plan_path, "configuration", f"{doc['configuration']!r} is not a configuration "
                  f"of {array.source}")  # fmt: skip
    log = g.take(read_log, log_path, terms)
    g.raise_if_any()
    assert doc is not None and array is not None and targets is not None and log is not None
    assert now_s is not None
    night = find_night(array, parse_night(doc["night"]["date"], plan_path))
    if not night.start_s <= now_s <= night.end_s:
        span = f"{iso_utc(night.start_s)} to {iso_utc(night.end_s)}"
        raise InputError(Problem("--now", "", f"{now_text} is outside the night {span}"))
    sit = read_situation(log[0], log[1], doc, log_path, now_s)
    beams = array.beams(doc["configuration"], sit.out)
    if len(beams) < 2:
        raise InputError(Problem(log_path, "", f"with {sorted(sit.out)} out, fewer than two "
                                 "delay lines are left: no baseline to observe with"))  # fmt: skip
    problem = night_problem(array, beams, targets, night, conditions=sit.conditions)
    full = night_problem(array, array.beams(doc["configuration"]), targets, night,
                         conditions=sit.conditions) if sit.out else problem  # fmt: skip
    state = campaign_of_plan(doc)
    if state is not None:  # the plan was made for a campaign: the replan keeps it
        problem = campaign_night(problem, state)
        full = campaign_night(full, state) if sit.out else problem
    return Replan(array, problem, origin_of(problem, doc, sit), doc, sit, full, state)

