"""``opdplan windows``: when each target is observable tonight, and what limits it."""

from __future__ import annotations

from scheduler.commands.common import Inputs
from scheduler.constraints import SkyContext, category
from scheduler.timefmt import hours_label, iso_utc
from scheduler.views.windows_view import WindowRow, WindowsView
from scheduler.windows import TargetWindows, observable_windows


def windows_json(ctx: SkyContext, windows: list[TargetWindows]) -> dict:
    night = ctx.night
    return {
        "night": {
            "date": night.date.isoformat(),
            "start_utc": iso_utc(night.start_s),
            "end_utc": iso_utc(night.end_s),
        },
        "configuration": ctx.beams.configuration,
        "targets": [
            {
                "name": w.name,
                "kind": ctx.targets.kind(i),
                "observable": [[iso_utc(a), iso_utc(b)] for a, b in w.observable],
                "excluded": [
                    {"start_utc": iso_utc(a), "end_utc": iso_utc(b), "reason": ctx.reason(c)}
                    for a, b, c in w.excluded
                ],
                "hours": round(w.hours, 4),
            }
            for i, w in enumerate(windows)
        ],
    }


def windows_view(ctx: SkyContext, windows: list[TargetWindows]) -> WindowsView:
    night = ctx.night
    rows = []
    for i, w in enumerate(windows):
        segments = [(a, b, "open") for a, b in w.observable]
        segments += [(a, b, category(c)) for a, b, c in w.excluded]
        main = w.main_reason()
        rows.append(WindowRow(
            w.name, ctx.targets.kind(i)[:3], ctx.targets.program[i], w.hours,
            ctx.short_reason(main), tuple(sorted(segments)),
        ))  # fmt: skip
    moon = float(night.moon_illumination(0.5 * (night.start_s + night.end_s)))
    title = (
        f"Night of {night.date} - configuration {ctx.beams.configuration} - dark "
        f"{iso_utc(night.start_s)} to {iso_utc(night.end_s)} - Moon {moon:.0%} lit"
    )
    return WindowsView(
        title, night.start_s, night.end_s, lambda t: hours_label(night.lst_rad(t)), rows
    )


def run(inputs: Inputs, as_json: bool):
    ctx = inputs.context()
    windows = observable_windows(ctx)
    return windows_json(ctx, windows) if as_json else windows_view(ctx, windows)
