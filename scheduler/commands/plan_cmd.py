"""``opdplan plan`` and ``opdplan verify``: the night queue, checked independently."""

from __future__ import annotations

from dataclasses import dataclass

from scheduler.array_file import load_array
from scheduler.catalog import load_targets
from scheduler.commands.common import Inputs, require_matplotlib
from scheduler.errors import InputError, Problem
from scheduler.plan_export import write_csv, write_votable
from scheduler.plan_io import plan_dict, read_plan, write_plan
from scheduler.plan_model import PlanSettings
from scheduler.planner import plan_night
from scheduler.timeline_rows import timeline_view
from scheduler.verifier import verify_plan


class PlanRejected(RuntimeError):
    """The verifier found a broken rule in a plan opdplan made: a bug, never shown."""


@dataclass(frozen=True)
class Outputs:
    """Where to write the plan (any may be None)."""

    json: str | None = None
    csv: str | None = None
    votable: str | None = None
    plot: str | None = None


def run(inputs: Inputs, settings: PlanSettings, solver: str, outputs: Outputs, as_json: bool,
        started_s: float | None = None):  # fmt: skip
    """Plan, verify, write the requested files (only once everything is computed)."""
    if outputs.plot:
        require_matplotlib()
    ctx = inputs.context()
    plan = plan_night(ctx, settings, solver, started_s)
    doc = plan_dict(ctx, inputs.array, plan, settings)
    problems = verify_plan(doc, inputs.array, inputs.targets)
    if problems:
        raise PlanRejected("the verifier rejected the plan: " + "; ".join(problems))
    doc["summary"]["verified"] = True
    write_outputs(ctx, plan, doc, outputs)
    if as_json:
        return doc
    return timeline_view(ctx, plan, doc)


def write_outputs(ctx, plan, doc: dict, outputs: Outputs) -> None:
    t = ctx.targets
    critical = {t.names[i] for i in range(len(t)) if t.window_start_s[i] == t.window_start_s[i]}
    if outputs.json:
        write_plan(outputs.json, doc)
    if outputs.csv:
        write_csv(outputs.csv, doc)
    if outputs.votable:
        write_votable(outputs.votable, doc, critical)
    if outputs.plot:
        from scheduler.plot import plot_plan

        plot_plan(ctx, plan, outputs.plot)


def verify_file(plan_path: str, array_path: str, targets_path: str) -> dict:
    doc = read_plan(plan_path)
    array, targets = load_array(array_path), load_targets(targets_path)
    try:
        problems = verify_plan(doc, array, targets)
    except (KeyError, TypeError, ValueError) as exc:
        raise InputError(Problem(plan_path, "", f"malformed plan: {exc}")) from None
    return {"plan": plan_path, "valid": not problems, "problems": problems}
