"""``opdplan fit``: will the proposals fit the semester, and how likely do they finish."""

from __future__ import annotations

import argparse
import math
from contextlib import nullcontext
from typing import Any

from rich.console import Console

from scheduler.cli.commands.common import Result, check_matplotlib
from scheduler.inputs.array_file import load_array
from scheduler.inputs.catalog import load_targets
from scheduler.inputs.semester_file import load_proposals, load_semester
from scheduler.model.errors import Gather
from scheduler.output.files import check_outputs

SIMULATE_RANGE = (1, 100000)


def _inputs(args: argparse.Namespace, g: Gather) -> tuple[Any, Any, Any, Any, Any]:
    """Array, catalog, semester, requests and a Dask client, problems gathered."""
    array = g.take(load_array, args.array)
    targets = g.take(load_targets, args.targets,
                     [m.name for m in array.modes] if array is not None else None)
    semester = g.take(load_semester, args.semester, array)
    requests = None
    if array is not None and targets is not None:
        requests = g.take(load_proposals, args.proposals, targets, array)
    lo, hi = SIMULATE_RANGE
    if not lo <= args.simulate <= hi:
        g.add("--simulate", "", f"{args.simulate} is not in [{lo}, {hi}]")
    if args.workers is not None and args.workers < 1:
        g.add("--workers", "", f"{args.workers} is not a positive number")
    client = None
    if args.cluster and not g.problems:
        from scheduler.semester.simulate import connect

        client = g.take(connect, args.cluster)
    return array, targets, semester, requests, client


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    from scheduler.semester.availability import semester_availability
    from scheduler.semester.pool import build_scenario
    from scheduler.semester.pressure import pressure
    from scheduler.semester.simulate import simulate
    from scheduler.semester.verdicts import program_answers, request_answers

    g = Gather()
    array, targets, semester, requests, client = _inputs(args, g)
    outs = check_outputs({"--plot": args.plot}, [args.array, args.targets, args.semester,
                                                 args.proposals], g)  # fmt: skip
    if args.plot:
        check_matplotlib("--plot", g)
    g.raise_if_any()
    scn = build_scenario(array, targets, semester, requests)
    bar = _progress(console) if not args.json else None
    try:
        with bar if bar is not None else nullcontext():
            tick = _ticker(bar, len(semester.nights()))
            wanted = {(r.target, r.configuration) for r in scn.requests}
            av = semester_availability(array, scn.targets, semester, wanted,
                                       progress=tick("availability"))  # fmt: skip
            out = simulate(scn, args.simulate, args.seed, client=client, workers=args.workers,
                           progress=tick(None))  # fmt: skip
    finally:
        if client is not None:
            client.close()
    answers = request_answers(scn, out, av)
    programs = program_answers(scn, out, answers)
    sky = pressure(scn, av, out)
    doc = fit_document(scn, av, out, programs, sky, args.seed)
    result = Result(caution=False)
    if outs:
        from scheduler.output.plot import pressure_png

        result.outputs = [(outs[0], pressure_png(doc["pressure"]))]
    if args.json:
        result.json = doc
        return result
    from scheduler.views.fit_view import FitView

    title = (f"Semester {semester.start} to {semester.end}: {len(semester.nights())} nights, "
             f"{av.dark_hours:.0f} dark hours; {args.simulate} weather realisations "
             f"(seed {args.seed})")  # fmt: skip
    result.view = [FitView(title, tuple(programs), tuple(sky), args.simulate)]
    return result


def _progress(console: Console) -> Any:
    from rich.progress import (
        BarColumn,
        MofNCompleteColumn,
        Progress,
        TextColumn,
        TimeRemainingColumn,
    )

    return Progress(TextColumn("{task.description}"), BarColumn(), MofNCompleteColumn(),
                    TextColumn("time left"), TimeRemainingColumn(), console=console,
                    transient=True)  # fmt: skip


def _ticker(bar: Any, nights: int) -> Any:
    """Progress callbacks: ``tick("availability")`` advances one task a night;
    ``tick(None)`` follows the simulation's stages (nights prepared, realisations)."""
    if bar is None:
        return lambda stage: None
    tasks: dict[str, Any] = {}
    words = {"availability": "clear-sky hours, night by night", "nights": "preparing nights",
             "realisations": "weather realisations"}  # fmt: skip

    def task(stage: str, total: int) -> Any:
        if stage not in tasks:
            tasks[stage] = bar.add_task(words[stage], total=total)
        return tasks[stage]

    def tick(stage: str | None) -> Any:
        if stage is not None:
            return lambda: bar.advance(task(stage, nights))
        return lambda name, done, total: bar.update(task(name, total), completed=done)

    return tick


def fit_document(scn: Any, av: Any, out: Any, programs: list[Any], sky: list[Any],
                 seed: int) -> dict[str, Any]:  # fmt: skip
    """The ``opdplan fit --json`` document."""
    sem = scn.semester
    return {
        "semester": {"start": sem.start.isoformat(), "end": sem.end.isoformat(),
                     "nights": len(sem.nights()), "dark_hours": round(av.dark_hours, 3)},
        "weather": [_weather(w) for w in sem.weather],
        "simulation": {"realisations": len(out.ks), "seed": seed,
                       "largest_standard_error": round(0.5 / math.sqrt(len(out.ks)), 4)},
        "programs": [_program(p) for p in programs],
        "pressure": [
            {"configuration": p.configuration, "lst_hour": h,
             "requested_hours": round(float(p.requested_hours[h]), 3),
             "usable_dark_hours": round(float(p.usable_dark_hours[h]), 3),
             "ratio": None if math.isnan(p.ratio[h]) else round(float(p.ratio[h]), 4),
             "efficiency": round(p.efficiency, 4)}
            for p in sky for h in range(24)
        ],
        "unplaced": {p.configuration: round(p.unplaced_hours, 3) for p in sky},
    }  # fmt: skip


def _weather(w: Any) -> dict[str, Any]:
    arcsec = 180.0 / math.pi * 3600.0
    return {"month": w.month, "clear_nights": w.clear_nights,
            "lost_spell_nights": round(w.lost_spell_nights, 4), "partial_nights": w.partial_nights,
            "seeing_arcsec": None if w.seeing_rad is None else round(w.seeing_rad * arcsec, 4),
            "seeing_spread": w.seeing_spread,
            "coherence_ms": None if w.coherence_s is None else round(w.coherence_s * 1e3, 4),
            "coherence_spread": w.coherence_spread,
            "usable_fraction": round(w.usable_fraction, 4)}  # fmt: skip


def _program(p: Any) -> dict[str, Any]:
    return {"program": p.program, "requested_hours": p.requested_hours,
            "expected_hours": round(p.expected_hours, 3),
            "charged_hours": round(p.charged_hours, 3),
            "completion_probability": round(p.completion, 4),
            "standard_error": round(p.standard_error, 4), "verdict": p.verdict,
            "reason": p.reason, "requests": [_request(r) for r in p.requests]}  # fmt: skip


def _request(r: Any) -> dict[str, Any]:
    clear, open_, bright = r.opportunities
    return {"target": r.target, "configuration": r.configuration,
            "requested_hours": r.requested_hours, "clear_hours": round(r.clear_hours, 3),
            "expected_hours": round(r.expected_hours, 3),
            "charged_hours": round(r.charged_hours, 3), "visits_needed": r.visits_needed,
            "opportunities": {"clear": round(clear, 3), "open": round(open_, 3),
                              "bright": round(bright, 3)},
            "completion_probability": round(r.completion, 4),
            "standard_error": round(r.standard_error, 4), "verdict": r.verdict,
            "reason": r.reason, "detail": r.detail,
            "best_weeks": list(r.best_weeks)}  # fmt: skip
