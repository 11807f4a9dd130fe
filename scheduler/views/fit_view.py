"""The committee's view: proposals with verdicts and odds, and the pressure on the sky."""

from __future__ import annotations

from rich import box
from rich.table import Table
from rich.text import Text

STYLE = {"fits": "green", "tight": "yellow", "does not fit": "red"}


class FitView:
    def __init__(self, title: str, programs: list[dict], pressure: list[dict],
                 odds: dict | None):  # fmt: skip
        self.title, self.programs, self.pressure, self.odds = title, programs, pressure, odds

    def __rich_console__(self, console, options):
        t = Table(title=self.title, title_justify="left", box=box.SIMPLE_HEAD, pad_edge=False)
        for col in ("program", "asked h", "clear h", "expected h", "verdict"):
            t.add_column(col, justify="right" if col.endswith("h") else "left", no_wrap=True)
        if self.odds:
            t.add_column("completes", justify="right")
        t.add_column("reason")
        for p in self.programs:
            cells = [p["program"], f"{p['requested_hours']:.1f}", f"{p['available_hours']:.1f}",
                     f"{p['expected_hours']:.1f}",
                     Text(p["verdict"], style=STYLE[p["verdict"]])]  # fmt: skip
            if self.odds:
                o = self.odds.get(p["program"])
                cells.append(f"{o['completion_probability']:.0%}" if o else "-")
            cells.append(p["reason"])
            t.add_row(*cells)
        yield t
        peak = max([max(b["requested_hours"], b["usable_dark_hours"]) for b in self.pressure]
                   + [1.0])  # fmt: skip
        width = max(10, min(40, options.max_width - 40))
        bars = Table(title="pressure by right ascension (requested vs usable dark hours)",
                     title_justify="left", box=None, pad_edge=False)  # fmt: skip
        for col in ("RA h", "asked", "usable", ""):
            bars.add_column(col, justify="right" if col else "left", no_wrap=True)
        for b in self.pressure:
            asked = int(round(width * b["requested_hours"] / peak))
            have = int(round(width * b["usable_dark_hours"] / peak))
            bar = Text("█" * min(asked, have), style="green")
            bar.append("█" * max(0, asked - have), style="red")
            bar.append("░" * max(0, have - asked), style="grey50")
            bars.add_row(f"{b['ra_hours']:02d}", f"{b['requested_hours']:.0f}",
                         f"{b['usable_dark_hours']:.0f}", bar)  # fmt: skip
        yield bars
        yield Text("green: requested within the usable dark time; red: beyond it; grey: "
                   "unrequested dark time", style="dim")  # fmt: skip
