"""``opdplan fit``: will the proposals fit the semester, and how likely do they finish."""

from __future__ import annotations

import argparse
from contextlib import nullcontext
from typing import Any

from rich.console import Console

from scheduler.cli.commands.common import Result, check_matplotlib
from scheduler.inputs.array_file import load_array
from scheduler.inputs.catalog import load_targets
from scheduler.inputs.semester_file import load_proposals, load_semester
from scheduler.model.errors import Gather
from scheduler.output.files import check_outputs


def _inputs(args: argparse.Namespace, g: Gather) -> tuple[Any, Any, Any, Any, Any]:
    """Array, catalog, semester, requests and a Dask client, problems gathered."""
    array = g.take(load_array, args.array)
    targets = g.take(load_targets, args.targets,
                     [m.name for m in array.modes] if array is not None else None)
    semester = g.take(load_semester, args.semester, array)
    requests = None
    if array is not None and targets is not None:
        requests = g.take(load_proposals, args.proposals, targets, array)
    if args.simulate < 0:
        g.add("--simulate", "", f"{args.simulate} is negative")
    client = None
    if args.cluster and args.simulate > 0:
        from scheduler.semester.simulate import connect

        client = g.take(connect, args.cluster)
    return array, targets, semester, requests, client


def _document(semester: Any, nights: int, av: Any, rows: list[Any], targets: Any,
              programs: list[dict[str, Any]], sky: list[dict[str, Any]],
              args: argparse.Namespace) -> dict[str, Any]:  # fmt: skip
    return {
        "semester": {"start": semester.start.isoformat(), "end": semester.end.isoformat(),
                     "nights": nights, "dark_hours": round(av.dark_hours, 3)},
        "targets": [
            {"name": targets.names[r.request.target], "program": r.request.program,
             "configuration": r.request.configuration, "requested_hours": r.request.hours,
             "available_hours": round(r.available_hours, 3),
             "expected_hours": round(r.expected_hours, 3),
             "per_month": {str(m): round(h, 3) for m, h in
                           av.per_month[(r.request.target, r.request.configuration)].items()},
             "verdict": r.verdict, "reason": r.reason, "best_weeks": list(r.best_weeks)}
            for r in rows
        ],
        "proposals": programs,
        "pressure": sky,
        "simulation": None if not args.simulate else {"realisations": args.simulate,
                                                       "seed": args.seed},
    }  # fmt: skip


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    from rich.progress import Progress

    from scheduler.semester.availability import semester_availability
    from scheduler.semester.fit import by_program, judge, pressure
    from scheduler.semester.simulate import Scenario, odds, simulate
    from scheduler.views.fit_view import FitView

    g = Gather()
    array, targets, semester, requests, client = _inputs(args, g)
    outs = check_outputs({"--plot": args.plot}, [args.array, args.targets, args.semester,
                                                 args.proposals], g)  # fmt: skip
    if args.plot:
        check_matplotlib("--plot", g)
    g.raise_if_any()
    nights = semester.nights()
    bar = Progress(console=console, transient=True) if not args.json else None
    try:
        with bar if bar is not None else nullcontext():
            tick = _ticker(bar, "availability, night by night", len(nights))
            wanted = {(r.target, r.configuration) for r in requests}
            av = semester_availability(array, targets, semester, wanted, progress=tick)
            rows = judge(requests, av)
            programs = by_program(rows)
            sky = pressure(requests, targets, av, semester)
            chances = None
            if args.simulate:
                scn = Scenario(array, targets, semester, tuple(requests))
                tick = _ticker(bar, "weather realisations", args.simulate)
                done = simulate(scn, args.simulate, args.seed, client=client, progress=tick)
                chances = {o["program"]: o for o in odds(scn, done)}
    finally:
        if client is not None:
            client.close()
    for p in programs:
        if chances and p["program"] in chances:
            p["completion_probability"] = chances[p["program"]]["completion_probability"]
            p["simulated_hours"] = chances[p["program"]]["expected_hours"]
    doc = _document(semester, len(nights), av, rows, targets, programs, sky, args)
    result = Result(caution=False)
    if outs:
        from scheduler.output.plot import pressure_png

        result.outputs = [(outs[0], pressure_png(sky))]
    if args.json:
        result.json = doc
        return result
    title = (f"Semester {semester.start} to {semester.end}: {len(nights)} nights, "
             f"{av.dark_hours:.0f} dark hours")  # fmt: skip
    result.view = [FitView(title, programs, sky, chances)]
    return result


def _ticker(bar: Any, label: str, total: int) -> Any:
    if bar is None:
        return None
    task = bar.add_task(label, total=total)
    return lambda: bar.advance(task)
