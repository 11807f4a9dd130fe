"""``opdplan fit``: will the proposals fit the semester, and how likely do they finish."""

from __future__ import annotations

from scheduler.array_file import load_array
from scheduler.availability import semester_availability
from scheduler.catalog import load_targets
from scheduler.commands.common import require_matplotlib
from scheduler.fit import by_program, judge, pressure
from scheduler.semester import load_proposals, load_semester
from scheduler.simulate import Scenario, odds, simulate
from scheduler.views.fit_view import FitView


def run(args, console):
    array = load_array(args.array)
    targets = load_targets(args.targets)
    semester = load_semester(args.semester, array)
    requests = load_proposals(args.proposals, targets, array)
    if args.plot:
        require_matplotlib()
    wanted = {(r.target, r.configuration) for r in requests}
    nights = semester.nights()
    progress = None
    if not args.json:
        from rich.progress import Progress

        bar = Progress(console=console, transient=True)
    with bar if not args.json else _Null() as live:
        if not args.json:
            task = live.add_task("availability, night by night", total=len(nights))
            progress = lambda: live.advance(task)  # noqa: E731
        av = semester_availability(array, targets, semester, wanted, progress=progress)
        rows = judge(requests, av)
        programs = by_program(rows)
        sky = pressure(requests, targets, av, semester)
        chances = None
        if args.simulate:
            scn = Scenario(array, targets, semester, tuple(requests))
            if not args.json:
                task = live.add_task("weather realisations", total=args.simulate)
                progress = lambda: live.advance(task)  # noqa: E731
            done = simulate(scn, args.simulate, args.seed, cluster=args.cluster,
                            progress=progress)  # fmt: skip
            chances = {o["program"]: o for o in odds(scn, done)}
    for p in programs:
        if chances and p["program"] in chances:
            p["completion_probability"] = chances[p["program"]]["completion_probability"]
            p["simulated_hours"] = chances[p["program"]]["expected_hours"]
    doc = {
        "semester": {"start": semester.start.isoformat(), "end": semester.end.isoformat(),
                     "nights": len(nights), "dark_hours": round(av.dark_hours, 3)},
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
    if args.plot:
        from scheduler.plot import plot_pressure

        plot_pressure(sky, args.plot)
    if args.json:
        return doc
    title = (f"Semester {semester.start} to {semester.end}: {len(nights)} nights, "
             f"{av.dark_hours:.0f} dark hours")  # fmt: skip
    return FitView(title, programs, sky, chances)


class _Null:
    def __enter__(self):
        return None

    def __exit__(self, *exc):
        return False
