"""``opdplan replan`` and ``opdplan log``: the rest of the night from the current state."""

from __future__ import annotations

from pathlib import Path

from scheduler.catalog import parse_utc
from scheduler.commands.plan_cmd import Outputs, PlanRejected, write_outputs
from scheduler.errors import InputError, Problem
from scheduler.night_log import append_record
from scheduler.plan_model import PlanSettings
from scheduler.planner import plan_night
from scheduler.replan import prepare, replan_dict
from scheduler.timefmt import iso_utc
from scheduler.timeline_rows import timeline_view
from scheduler.verifier import verify_plan
from scheduler.views.diff_view import DiffView


def run(args, settings: PlanSettings, started_s: float):
    if args.out and Path(args.out).resolve() == Path(args.plan).resolve() and not args.overwrite:
        raise InputError(Problem("--out", "", f"{args.out} is the previous plan; "
                                 "add --overwrite to replace it"))  # fmt: skip
    array, ctx, origin, old, sit = prepare(args.plan, args.log, args.now, args.array, args.targets)
    plan = plan_night(ctx, settings, args.solver, started_s, origin)
    doc = replan_dict(ctx, array, plan, settings, origin, old, sit, args.plan)
    problems = verify_plan(doc, array, ctx.targets)
    if problems:
        raise PlanRejected("the verifier rejected the replan: " + "; ".join(problems))
    doc["summary"]["verified"] = True
    write_outputs(ctx, plan, doc, Outputs(args.out))
    if args.json:
        return doc
    return [*(f"[yellow]{w}[/yellow]" for w in sit.warnings), timeline_view(ctx, plan, doc),
            DiffView(doc["diff"], doc["replanned_from"]["now_utc"], doc["out"])]  # fmt: skip


def log(args) -> dict:
    """Append one record to the night log; returns it."""
    at = args.at if getattr(args, "at", None) else iso_utc(__import__("time").time())
    for key, text in (("--at", at), ("--from", getattr(args, "from_", None)),
                      ("--to", getattr(args, "to", None))):  # fmt: skip
        if text is not None:
            try:
                parse_utc(text)
            except ValueError:
                raise InputError(
                    Problem(key, "", f"{text!r} is not an ISO 8601 UTC time")
                ) from None
    event = args.event
    if event in ("done", "aborted"):
        record = {"event": event, "visit": args.visit, "at_utc": at}
    elif event == "closed":
        if parse_utc(args.to) <= parse_utc(args.from_):
            raise InputError(Problem("--to", "", "the closure ends before it starts"))
        record = {"event": event, "from_utc": args.from_, "to_utc": args.to}
    elif event in ("out", "back"):
        key = "station" if args.station else "delay_line"
        record = {"event": event, key: args.station or args.delay_line, "at_utc": at}
    else:
        opd = {}
        for item in args.opd:
            line, _, value = item.partition("=")
            try:
                opd[line] = float(value)
            except ValueError:
                raise InputError(Problem("--opd", "", f"{item!r} is not LINE=METRES")) from None
        record = {"event": event, "at_utc": at, "opd_m": opd}
    append_record(args.log, record)
    return record
