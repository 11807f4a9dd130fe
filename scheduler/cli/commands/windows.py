"""``opdplan windows``: when each target is observable tonight, and what limits it."""

from __future__ import annotations

import argparse

from rich.console import Console

from scheduler.cli.commands.common import Result, load_inputs
from scheduler.geometry.windows import observable_windows
from scheduler.output.windows_document import windows_document
from scheduler.views.windows_view import WindowsView


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    inputs = load_inputs(args.array, args.config, args.targets, args.night)
    problem = inputs.problem()
    doc = windows_document(problem, observable_windows(problem))
    if args.json:
        return Result(json=doc, warnings=list(inputs.warnings))
    return Result(view=[WindowsView(doc)], warnings=list(inputs.warnings))
