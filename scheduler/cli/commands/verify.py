"""``opdplan verify``: check any plan file against the array, the catalog, the rules and
the conditions observed (``--seeing``, ``--coherence-ms``, ``--wind-speed``,
``--wind-from``; when none is given, the conditions the plan states)."""

from __future__ import annotations

import argparse

from rich.console import Console

from scheduler.cli.commands.common import Result, conditions_of
from scheduler.inputs.array_file import load_array
from scheduler.inputs.catalog import load_targets
from scheduler.inputs.plan_file import read_plan
from scheduler.model.conditions import Conditions
from scheduler.model.errors import Gather
from scheduler.model.plan import PlanSettings

CONDITION_OPTIONS = ("seeing", "coherence_ms", "wind_speed", "wind_from")


def given_conditions(args: argparse.Namespace, g: Gather) -> Conditions | None:
    """The conditions of the command line (any not given: the mode's reference, no
    wind), or None when none is given: the verifier then takes the plan's own."""
    if all(getattr(args, key, None) is None for key in CONDITION_OPTIONS):
        return None
    return conditions_of(args, g)


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    """Exit status 0 when the plan holds, 1 when the verifier finds problems (listed),
    2 when an input cannot be read (the plan file failing its schema included)."""
    from scheduler.verify import verify_plan

    g = Gather()
    doc = g.take(read_plan, args.plan)
    array = g.take(load_array, args.array)
    targets = g.take(load_targets, args.targets)
    conditions = given_conditions(args, g)
    g.raise_if_any()
    assert doc is not None and array is not None and targets is not None
    settings = PlanSettings(value_per_hour=args.value_per_hour,
                            strict_priority=args.strict_priority)  # fmt: skip
    problems = verify_plan(doc, array, targets, settings, conditions)
    report = {"plan": args.plan, "valid": not problems, "problems": [str(p) for p in problems]}
    return Result(json=report, exit_code=0 if not problems else 1, caution=False)
