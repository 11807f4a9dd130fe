"""``opdplan verify``: check any plan file against the array, the catalog and the rules."""

from __future__ import annotations

import argparse

from rich.console import Console

from scheduler.cli.commands.common import Result
from scheduler.inputs.array_file import load_array
from scheduler.inputs.catalog import load_targets
from scheduler.inputs.plan_file import read_plan
from scheduler.model.errors import Gather
from scheduler.model.plan import PlanSettings


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    """Exit status 0 when the plan holds, 1 when the verifier finds problems (listed),
    2 when an input cannot be read (the plan file failing its schema included)."""
    from scheduler.verify import verify_plan

    g = Gather()
    doc = g.take(read_plan, args.plan)
    array = g.take(load_array, args.array)
    targets = g.take(load_targets, args.targets)
    g.raise_if_any()
    assert doc is not None and array is not None and targets is not None
    settings = PlanSettings(value_per_hour=args.value_per_hour,
                            strict_priority=args.strict_priority)  # fmt: skip
    problems = verify_plan(doc, array, targets, settings)
    report = {"plan": args.plan, "valid": not problems, "problems": [str(p) for p in problems]}
    return Result(json=report, exit_code=0 if not problems else 1, caution=False)
