"""The windows view: one row per target with its hours and a bar across the night."""

from __future__ import annotations

from dataclasses import dataclass

from rich.table import Table
from rich.text import Text

from scheduler.views.timeaxis import TimeAxis, make_axis

#: category -> (glyph, style, legend); our own scheme
GLYPHS = {
    "open": ("█", "green", "observable"),
    "altitude": ("·", "grey50", "altitude limit"),
    "horizon": ("▁", "yellow", "horizon mask"),
    "delay": ("▒", "red", "delay range"),
    "moon": ("○", "cyan", "Moon"),
    "time": ("┄", "magenta", "time window / Sun"),
    "wind": ("≈", "blue", "into the wind"),
    "resolved": ("◌", "bright_red", "over-resolved"),
    "faint": ("░", "grey62", "too faint"),
}


@dataclass(frozen=True)
class WindowRow:
    """One target: ``segments`` are (start_s, end_s, category) covering the night."""

    name: str
    kind: str
    program: str
    hours: float
    limited_by: str
    segments: tuple[tuple[float, float, str], ...]


def bar(axis: TimeAxis, segments) -> Text:
    """The bar of one target: each cell shows the category covering most of it."""
    cover: list[dict[str, float]] = [{} for _ in range(axis.cells)]
    width = (axis.end_s - axis.start_s) / axis.cells
    for a, b, cat in segments:
        for c in range(axis.cell_of(a), axis.cell_of(b) + 1):
            lo = max(a, axis.start_s + c * width)
            hi = min(b, axis.start_s + (c + 1) * width)
            if hi > lo:
                cover[c][cat] = cover[c].get(cat, 0.0) + hi - lo
    text = Text()
    for cell in cover:
        cat = max(cell, key=lambda k: cell[k]) if cell else "altitude"
        glyph, style, _ = GLYPHS[cat]
        text.append(glyph, style=style)
    return text


class WindowsView:
    """Table of targets with observable hours, limiting constraint and night bar."""

    def __init__(self, title: str, start_s: float, end_s: float, lst_label, rows: list[WindowRow]):
        self.title, self.rows = title, rows
        self.start_s, self.end_s, self.lst_label = start_s, end_s, lst_label

    def __rich_console__(self, console, options):
        name_w = max([len(r.name) for r in self.rows] + [6])
        prog_w = max([len(r.program) for r in self.rows] + [7])
        cells = max(24, min(120, options.max_width - name_w - prog_w - 44))
        self.axis = make_axis(self.start_s, self.end_s, cells, self.lst_label)
        table = Table(title=self.title, title_justify="left", show_lines=False, pad_edge=False)
        table.add_column("target", no_wrap=True, min_width=name_w)
        table.add_column("kind", style="dim")
        table.add_column("program", style="dim", no_wrap=True)
        table.add_column("h", justify="right")
        table.add_column("limited by", no_wrap=True)
        utc, lst = self.axis.label_rows()
        head = Text.assemble(utc, "\n", lst)
        table.add_column(head, no_wrap=True, min_width=self.axis.cells)
        for r in self.rows:
            hours = Text(f"{r.hours:4.1f}", style="bold green" if r.hours > 0 else "red")
            table.add_row(
                r.name, r.kind, r.program, hours, r.limited_by, bar(self.axis, r.segments)
            )
        yield table
        legend = Text("  ")
        for glyph, style, label in GLYPHS.values():
            legend.append(glyph * 2, style=style)
            legend.append(f" {label}   ")
        yield Text("UTC on the first axis row, LST below it.", style="dim")
        yield legend
