"""``opdplan windows``: when each target is observable tonight, and what limits it."""

from __future__ import annotations

import argparse
from typing import Any

from rich.console import Console

from scheduler.cli.commands.common import Result, load_inputs
from scheduler.geometry.bodies import moon_illumination
from scheduler.geometry.windows import TargetWindows, observable_windows
from scheduler.model.problem import NightProblem
from scheduler.model.reasons import family, short_words, words
from scheduler.model.times import hours_label, iso_utc
from scheduler.views.windows_view import WindowRow, WindowsView


def windows_json(problem: NightProblem, windows: list[TargetWindows]) -> dict[str, Any]:
    night, beams, lim = problem.night, problem.beams, problem.limits
    return {
        "night": {"date": night.date.isoformat(), "start_utc": iso_utc(night.start_s),
                  "end_utc": iso_utc(night.end_s)},
        "configuration": beams.configuration,
        "targets": [
            {"name": w.name, "kind": str(problem.targets.kind(i)),
             "observable": [[iso_utc(a), iso_utc(b)] for a, b in w.observable],
             "excluded": [{"start_utc": iso_utc(a), "end_utc": iso_utc(b),
                           "reason": words(c, beams, lim)} for a, b, c in w.excluded],
             "hours": round(w.hours, 4)}
            for i, w in enumerate(windows)
        ],
    }  # fmt: skip


def windows_view(problem: NightProblem, windows: list[TargetWindows]) -> WindowsView:
    night, targets = problem.night, problem.targets
    rows = []
    for i, w in enumerate(windows):
        segments = [(a, b, "open") for a, b in w.observable]
        segments += [(a, b, _category(c)) for a, b, c in w.excluded]
        rows.append(WindowRow(
            w.name, str(targets.kind(i))[:3], targets.program[i], w.hours,
            short_words(w.main_reason(), problem.beams), tuple(sorted(segments)),
        ))  # fmt: skip
    moon = float(moon_illumination(night, 0.5 * (night.start_s + night.end_s)))
    title = (
        f"Night of {night.date} - configuration {problem.beams.configuration} - dark "
        f"{iso_utc(night.start_s)} to {iso_utc(night.end_s)} - Moon {moon:.0%} lit"
    )
    return WindowsView(title, night.start_s, night.end_s,
                       lambda t: hours_label(float(night.lst_rad(t))), rows)  # fmt: skip


def _category(code: int) -> str:
    """The view's glyph family of a reason code."""
    return {"open": "open", "altitude": "altitude", "horizon mask": "horizon",
            "delay range": "delay", "Moon": "moon", "time": "time", "wind": "wind",
            "over-resolved": "resolved", "too faint": "faint"}[family(code)]  # fmt: skip


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    inputs = load_inputs(args.array, args.config, args.targets, args.night)
    problem = inputs.problem()
    windows = observable_windows(problem)
    if args.json:
        return Result(json=windows_json(problem, windows), warnings=list(inputs.warnings))
    return Result(view=[windows_view(problem, windows)], warnings=list(inputs.warnings))
