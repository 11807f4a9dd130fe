"""``opdplan advise``: which configuration, routing and fixed delays serve tonight's pool
best.  Every choice is ranked by the pool's priority-weighted observable hours, the best
are planned with the queue and verified, and maps of the reachable sky are drawn."""

from __future__ import annotations

import argparse
import time
from pathlib import Path
from typing import Any

from rich.console import Console

from scheduler.cli.commands.common import (
    Result,
    check_matplotlib,
    finish_inputs,
    gather_inputs,
)
from scheduler.cli.commands.plan import check_time_limit, verified
from scheduler.model.errors import Gather
from scheduler.model.plan import PlanSettings
from scheduler.output.advice_document import advice_document
from scheduler.output.files import OutputPath, check_folder, check_outputs
from scheduler.output.plan_document import plan_document

TOP_RANGE = (1, 50)
STEP_RANGE_MIN = (1.0, 60.0)


def _checks(args: argparse.Namespace, g: Gather) -> list[str]:
    lo, hi = TOP_RANGE
    if not lo <= args.top <= hi:
        g.add("--top", "", f"{args.top} is not in [{lo}, {hi}]")
    lo_s, hi_s = STEP_RANGE_MIN
    if not lo_s <= args.step_min <= hi_s:
        g.add("--step-min", "", f"{args.step_min} is not in [{lo_s:g}, {hi_s:g}] minutes")
    check_time_limit(args.time_limit, g)
    configs = [c.strip() for c in (args.configs or "").split(",") if c.strip()]
    if args.configs is not None and not configs:
        g.add("--configs", "", f"{args.configs!r} names no configuration")
    return configs


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    from scheduler.advise.advisor import Advice, plan_options
    from scheduler.advise.rank import rank_choices

    g = Gather()
    configs = _checks(args, g)
    array, targets, date = gather_inputs(args.array, "", args.targets, args.night, g)
    if array is not None:
        known = [c.name for c in array.configurations]
        for c in configs:
            if c not in known:
                g.add("--configs", "", f"{c!r} is not a configuration of {args.array} "
                      f"(there are: {', '.join(known)})")  # fmt: skip
        configs = configs or known
    folder = check_folder("--plot", args.plot, g) if args.plot else None
    if args.plot:
        check_matplotlib("--plot", g)
    g.raise_if_any()
    inputs = finish_inputs(array, configs[0], targets, date)
    base = inputs.problem()
    settings = PlanSettings(time_limit_s=args.time_limit, seed=args.seed)
    with _progress(console, args.json) as bar:
        t0 = time.perf_counter()
        ranking = rank_choices(array, base, configs, args.top, args.step_min * 60.0, args.seed,
                               tick=_rank_tick(bar))  # fmt: skip
        t1 = time.perf_counter()
        planned = plan_options(array, base, ranking, settings, args.solver, _plan_tick(bar))
    advice = Advice(ranking, tuple(planned), args.solver, t1 - t0, time.perf_counter() - t1)
    docs = [verified(p.problem, p.array, p.plan, settings,
                     plan_document(p.problem, p.array, p.plan, settings))[1]
            for p in advice.planned]  # fmt: skip
    result = Result(warnings=list(inputs.warnings))
    sources: list[str | Path] = [args.array, args.targets]
    maps = _maps(advice, folder, sources, g) if folder else []
    g.raise_if_any()
    result.outputs = [(out, data) for out, data, _ in maps]
    doc = advice_document(advice, docs, {k: Path(out.given).name for out, _, k in maps
                                         if out.given.endswith(".png")})  # fmt: skip
    if args.json:
        result.json = doc
    else:
        from scheduler.views.advise_view import AdviceView

        result.view = [AdviceView(doc)]
    return result


def _maps(advice: Any, folder: Path, inputs: list[str | Path],
          g: Gather) -> list[tuple[OutputPath, bytes, int]]:  # fmt: skip
    """A PNG and a JSON map per planned choice, in ``folder``: ``reach-<rank>-<name>``."""
    import json

    from scheduler.advise.maps import choice_map, map_document, pool_tracks
    from scheduler.output.plot import reach_png

    out: list[tuple[OutputPath, bytes, int]] = []
    tracks = pool_tracks(advice.planned[0].problem)  # the pool and night of every choice
    for k, p in enumerate(advice.planned, start=1):
        name = p.configuration.name
        title = f"{name}: " + ("; ".join(p.option.changes) or "tonight's set-up")
        doc = map_document(choice_map(p.problem, name, title, tracks))
        stem = folder / f"reach-{k:02d}-{name.replace('~', '-')}"
        paths = check_outputs({"--plot": f"{stem}.png"}, inputs, g)
        paths += check_outputs({"--plot": f"{stem}.json"}, inputs, g)
        opened = set(p.option.open_targets)
        if len(paths) == 2:
            out.append((paths[0], reach_png(doc, opened), k))
            out.append((paths[1], (json.dumps(doc) + "\n").encode(), k))
    return out


def _progress(console: Console, quiet: bool) -> Any:
    """A transient progress bar on a terminal (nothing with --json or when piped)."""
    from contextlib import nullcontext

    if quiet or not console.is_terminal:
        return nullcontext(None)
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn

    return Progress(TextColumn("{task.description}"), BarColumn(), MofNCompleteColumn(),
                    console=console, transient=True)  # fmt: skip


def _rank_tick(bar: Any) -> Any:
    if bar is None:
        return None
    tasks: dict[str, Any] = {}

    def tick(config: str, done: int, total: int) -> None:
        if config not in tasks:
            tasks[config] = bar.add_task(f"scoring the choices of {config}", total=total)
        bar.update(tasks[config], completed=done, total=total)

    return tick


def _plan_tick(bar: Any) -> Any:
    if bar is None:
        return None
    task: list[Any] = []

    def tick(done: int, total: int) -> None:
        if not task:
            task.append(bar.add_task("planning the best choices", total=total))
        bar.update(task[0], completed=done)

    return tick
