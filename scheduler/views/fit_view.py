"""The committee's view: programmes with their requests (those not fitting first), the
completion odds with their standard errors, and the pressure per configuration and
hour of sidereal time.  Displays finished answers only."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from rich import box
from rich.console import Console, ConsoleOptions, RenderResult
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from scheduler.semester.pressure import Pressure
from scheduler.semester.verdicts import ProgramAnswer, RequestAnswer

STYLE = {"fits": "green", "at risk": "yellow", "does not fit": "red"}
#: pressure cell: (upper ratio bound, glyph, style); our own scale
LEVELS = ((0.5, "·", "green"), (1.0, "▒", "green"), (1.5, "▓", "yellow"),
          (math.inf, "█", "red"))  # fmt: skip


def odds_text(p: float, se: float, n: int) -> str:
    """``83% ±4`` (a probability and its standard error, in percent); at 0 or 1 the
    one-sided 95 % bound of the rule of three (``0% (<3)``)."""
    if p <= 0.0:
        return f"0% (<{300.0 / n:.0f})" if n else "-"
    if p >= 1.0:
        return f"100% (>{100 - 300.0 / n:.0f})" if n else "-"
    return f"{p:.0%} ±{100 * se:.0f}"


@dataclass(frozen=True)
class FitView:
    """The whole answer: ``title``, programmes, pressure, realisations used."""

    title: str
    programs: tuple[ProgramAnswer, ...]
    pressure: tuple[Pressure, ...]
    realisations: int

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        yield self._table()
        yield Text("asked, clear, done, used: hours asked, observable with no weather, done "
                   "on average, and used on average with calibrators, acquisitions and "
                   "transitions; completes: the share of weather realisations in which all "
                   "hours asked are done, ± its standard error", style="dim")
        yield from self._shortfalls()
        yield self._strips()
        legend = Text("  ")
        bounds = ("under half", "under 1", "up to 1.5", "over 1.5")
        for (_, glyph, style), words in zip(LEVELS, bounds, strict=True):
            legend.append(glyph, style=style)
            legend.append(f" {words}   ")
        legend.append("(blank: no usable dark time)", style="dim")
        yield legend
        notes = [f"{p.unplaced_hours:.0f} h asked with {p.configuration} are never observable "
                 "with it" for p in self.pressure if p.unplaced_hours > 0]  # fmt: skip
        yield Text("eff.: science hours over hours used on the simulated nights"
                   + "".join(f"; {n}" for n in notes), style="dim")

    def _table(self) -> Table:
        t = Table(title=self.title, title_justify="left", box=box.SIMPLE_HEAD, pad_edge=False,
                  collapse_padding=True)
        for col in ("target", "cfg", "asked", "clear", "done", "used", "completes",
                    "verdict"):  # fmt: skip
            right = col in ("asked", "clear", "done", "used", "completes")
            t.add_column(col, justify="right" if right else "left", no_wrap=True)
        for p in self.programs:
            t.add_row(Text(p.program, style="bold"), "", f"{p.requested_hours:.1f}", "",
                      f"{p.expected_hours:.1f}", f"{p.charged_hours:.1f}",
                      odds_text(p.completion, p.standard_error, self.realisations),
                      Text(p.verdict, style=STYLE[p.verdict]))  # fmt: skip
            for r in p.requests:
                t.add_row(*self._row(r))
        return t

    def _row(self, r: RequestAnswer) -> list[str | Text]:
        return ["  " + r.target, r.configuration, f"{r.requested_hours:.1f}",
                f"{r.clear_hours:.0f}", f"{r.expected_hours:.1f}", f"{r.charged_hours:.1f}",
                odds_text(r.completion, r.standard_error, self.realisations),
                Text(r.verdict, style=STYLE[r.verdict])]  # fmt: skip

    def _shortfalls(self) -> RenderResult:
        """Requests that do not fit, grouped by their reason, each with its figures."""
        groups: dict[str, list[str]] = {}
        for p in self.programs:
            for r in p.requests:
                if r.verdict != "fits":
                    label = f"{r.target} ({r.detail})" if r.detail else r.target
                    groups.setdefault(r.reason, []).append(label)
        if not groups:
            return
        yield Text("Why requests fall short", style="bold")
        for why, names in groups.items():
            yield Padding(Text.assemble((why, "yellow"), f" ({len(names)})"), (0, 0, 0, 2))
            yield Padding(Text(", ".join(names)), (0, 0, 0, 4))

    def _strips(self) -> Table:
        t = Table(title="pressure: requested hours (with overheads) over usable dark hours, "
                  "per hour of sidereal time", title_justify="left", box=None, pad_edge=False)
        t.add_column("cfg  LST h", no_wrap=True)
        t.add_column("0     6     12    18", no_wrap=True, min_width=24)
        t.add_column("eff.", justify="right", no_wrap=True)
        t.add_column("busiest", no_wrap=True)
        for p in self.pressure:
            strip = Text()
            for ratio in p.ratio:
                glyph, style = " ", ""
                if not np.isnan(ratio):
                    _, glyph, style = next(level for level in LEVELS if ratio < level[0])
                strip.append(glyph, style=style)
            busiest = sorted((r, h) for h, r in enumerate(p.ratio) if not np.isnan(r))[-2:]
            words = ", ".join(f"{h}h {r:.1f}x" for r, h in reversed(busiest) if r > 0)
            t.add_row(p.configuration, strip, f"{p.efficiency:.0%}", words or "-")
        return t
