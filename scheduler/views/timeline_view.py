"""The night timeline: one row per visit, in order, with its transition split."""

from __future__ import annotations

from dataclasses import dataclass

from rich import box
from rich.table import Table
from rich.text import Text


@dataclass(frozen=True)
class TimelineRow:
    start: str
    end: str
    lst: str
    target: str
    kind: str
    program: str
    altitude: str
    slew_s: float
    carriage_s: float
    acquisition_s: float
    note: str


class TimelineView:
    """Visits in time order; calibrators dim, science bold."""

    def __init__(self, title: str, rows: list[TimelineRow], summary: list[str],
                 unscheduled: list[tuple[str, str]]):  # fmt: skip
        self.title, self.rows, self.summary, self.unscheduled = title, rows, summary, unscheduled

    def __rich_console__(self, console, options):
        table = Table(title=self.title, title_justify="left", box=box.SIMPLE_HEAD, pad_edge=False)
        for col in ("UTC", "LST", "target", "kind", "program", "alt deg", "slew/carr/acq s",
                    "note"):  # fmt: skip
            table.add_column(col, no_wrap=col != "note")
        for r in self.rows:
            style = "bold" if r.kind == "science" else "dim"
            table.add_row(
                f"{r.start}-{r.end}", r.lst, Text(r.target, style=style), r.kind[:3], r.program,
                r.altitude, f"{r.slew_s:.0f}/{r.carriage_s:.0f}/{r.acquisition_s:.0f}", r.note,
            )  # fmt: skip
        yield table
        yield Text("  ".join(self.summary), style="bold")
        if self.unscheduled:
            rest = Table(
                title="not scheduled", title_justify="left", box=box.SIMPLE, pad_edge=False
            )
            rest.add_column("target")
            rest.add_column("why")
            for name, why in self.unscheduled:
                rest.add_row(name, why)
            yield rest
