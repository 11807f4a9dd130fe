"""``opdplan plan`` and ``opdplan demo``: the night queue, checked independently."""

from __future__ import annotations

import argparse
from dataclasses import replace
from typing import Any

from rich.console import Console

from scheduler.cli.commands.common import (
    Inputs,
    Result,
    campaign_of,
    check_matplotlib,
    conditions_of,
    demo_file,
    finish_inputs,
    gather_inputs,
    solver_progress,
)
from scheduler.model.errors import Gather
from scheduler.model.plan import Plan, PlanSettings
from scheduler.model.problem import NightProblem
from scheduler.output.files import OutputPath, check_outputs
from scheduler.output.plan_document import document_bytes, plan_document

DEMO_NIGHT = "2027-04-18"
DEMO_CONFIG = "medium"
DEMO_TIME_LIMIT_S = 15.0
TIME_LIMIT_RANGE_S = (1.0, 3600.0)


class PlanRejected(RuntimeError):
    """The verifier found a broken rule in a plan opdplan made: a bug, never shown."""


def check_time_limit(value: float, g: Gather) -> None:
    lo, hi = TIME_LIMIT_RANGE_S
    if not lo <= value <= hi:
        g.add("--time-limit", "", f"{value} is not in [{lo:.0f}, {hi:.0f}] s")


def verified(problem: NightProblem, inputs_array: Any, plan: Plan, settings: PlanSettings,
             doc: dict[str, Any]) -> tuple[Plan, dict[str, Any]]:  # fmt: skip
    """The plan and its document once the independent verifier accepts it; a rejection
    is a bug (:class:`PlanRejected`)."""
    from scheduler.verify import verify_plan

    problems = verify_plan(doc, inputs_array, problem.targets, settings, problem.conditions)
    if problems:
        raise PlanRejected("the verifier rejected the plan: " + "; ".join(map(str, problems)))
    plan = replace(plan, summary=replace(plan.summary, verified=True))
    doc["summary"]["verified"] = True
    return plan, doc


def file_outputs(problem: NightProblem, plan: Plan, doc: dict[str, Any],
                 outs: list[OutputPath]) -> list[tuple[OutputPath, bytes]]:  # fmt: skip
    """The bytes of every requested file."""
    from scheduler.output.export import csv_bytes, votable_bytes

    t = problem.targets
    critical = {t.names[i] for i in range(len(t)) if t.is_time_critical(i)}
    made = []
    for out in outs:
        if out.option == "--out":
            made.append((out, document_bytes(doc)))
        elif out.option == "--csv":
            made.append((out, csv_bytes(doc)))
        elif out.option == "--votable":
            made.append((out, votable_bytes(doc, critical)))
        elif out.option == "--plot":
            from scheduler.output.plot import plan_png

            made.append((out, plan_png(problem, plan)))
    return made


def plan_and_show(inputs: Inputs, settings: PlanSettings, solver: str, outs: list[OutputPath],
                  as_json: bool, started_s: float, console: Console,
                  quiet: bool = False) -> Result:  # fmt: skip
    from scheduler.queue.planner import plan_night
    from scheduler.views.timeline_rows import timeline_view

    problem = inputs.problem()
    with solver_progress(console, quiet or as_json or solver != "optimize", "planning",
                         settings.time_limit_s) as progress:  # fmt: skip
        plan = plan_night(problem, settings, solver, started_s, progress=progress)
    doc = plan_document(problem, inputs.array, plan, settings, inputs.campaign)
    plan, doc = verified(problem, inputs.array, plan, settings, doc)
    result = Result(outputs=file_outputs(problem, plan, doc, outs),
                    warnings=list(inputs.warnings))  # fmt: skip
    if as_json:
        result.json = doc
    else:
        result.view = [timeline_view(problem, plan, doc)]
    return result


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    g = Gather()
    check_time_limit(args.time_limit, g)
    array, targets, date = gather_inputs(args.array, args.config, args.targets, args.night, g)
    inputs_given = [p for p in (args.array, args.targets, args.campaign) if p]
    outs = check_outputs({"--out": args.out, "--csv": args.csv, "--votable": args.votable,
                          "--plot": args.plot}, inputs_given, g)  # fmt: skip
    if args.plot:
        check_matplotlib("--plot", g)
    conditions = conditions_of(args, g)
    campaign, notes = campaign_of(args, array, targets, g)
    g.raise_if_any()
    settings = PlanSettings(time_limit_s=args.time_limit, seed=args.seed,
                            deterministic=args.deterministic,
                            value_per_hour=args.value_per_hour,
                            strict_priority=args.strict_priority)  # fmt: skip
    inputs = finish_inputs(array, args.config, targets, date, conditions, campaign)
    inputs = replace(inputs, warnings=inputs.warnings + tuple(notes))
    return plan_and_show(inputs, settings, args.solver, outs, args.json, started_s, console,
                         args.quiet)  # fmt: skip


def demo(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    g = Gather()
    array, targets, date = gather_inputs(demo_file("demo_array.toml"), DEMO_CONFIG,
                                         demo_file("demo_targets.csv"), DEMO_NIGHT, g)  # fmt: skip
    g.raise_if_any()
    inputs = finish_inputs(array, DEMO_CONFIG, targets, date)
    intro = (
        "[bold]opdplan demo[/bold]: a fictional site and array (catalogs/demo_array.toml) "
        f"and catalog (catalogs/demo_targets.csv); the queue for the night of {DEMO_NIGHT} "
        f"in configuration {DEMO_CONFIG}, optimised for up to {DEMO_TIME_LIMIT_S:.0f} s and "
        "checked by the independent verifier. See `opdplan windows` for every target's windows."
    )
    result = plan_and_show(inputs, PlanSettings(time_limit_s=DEMO_TIME_LIMIT_S), "optimize", [],
                           False, started_s, console)  # fmt: skip
    result.view.insert(0, intro)
    return result
