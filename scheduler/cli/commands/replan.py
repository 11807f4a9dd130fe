"""``opdplan replan``: the rest of the night from the current state."""

from __future__ import annotations

import argparse

from rich.console import Console

from scheduler.cli.commands.common import Result, solver_progress
from scheduler.cli.commands.plan import check_time_limit, file_outputs, verified
from scheduler.model.errors import Gather
from scheduler.model.plan import PlanSettings
from scheduler.output.files import OutputPath, check_outputs, same_file
from scheduler.output.plan_document import replan_document
from scheduler.replan.load import load_replan


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    from scheduler.queue.planner import plan_night
    from scheduler.views.diff_view import DiffView
    from scheduler.views.timeline_rows import timeline_view

    g = Gather()
    outs: list[OutputPath] = []
    check_time_limit(args.time_limit, g)
    reads = [p for p in (args.log, args.array, args.targets) if p]
    if args.out and same_file(args.out, args.plan) and not args.overwrite:
        g.add("--out", "", f"{args.out} is the previous plan; add --overwrite to replace it")
    else:
        outs = check_outputs({"--out": args.out}, reads, g)
    rp = load_replan(args.plan, args.log, args.now, args.array, args.targets, g)
    rules = rp.previous.get("rules", {})  # the value rule stays the plan's unless changed
    settings = PlanSettings(time_limit_s=args.time_limit, seed=args.seed,
                            deterministic=args.deterministic,
                            value_per_hour=args.value_per_hour or bool(rules.get("value_per_hour")),
                            strict_priority=args.strict_priority
                            or bool(rules.get("strict_priority")))  # fmt: skip
    with solver_progress(console, args.quiet or args.json or args.solver != "optimize",
                         "replanning", settings.time_limit_s) as progress:  # fmt: skip
        plan = plan_night(rp.problem, settings, args.solver, started_s, rp.origin, progress)
    doc = replan_document(rp.problem, rp.array, plan, settings, rp.origin, rp.previous,
                          rp.situation, args.plan, rp.full)  # fmt: skip
    plan, doc = verified(rp.problem, rp.array, plan, settings, doc)
    result = Result(outputs=file_outputs(rp.problem, plan, doc, outs),
                    warnings=list(rp.situation.warnings))  # fmt: skip
    if args.json:
        result.json = doc
    else:
        result.view = [timeline_view(rp.problem, plan, doc),
                       DiffView(doc["diff"], doc["replanned_from"]["now_utc"], doc["out"])]
    return result
