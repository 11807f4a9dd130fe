"""The (u, v) view: per target, its coverage figures beside a small map of the (u, v)
plane (samples and their mirrors).  Displays a finished ``opdplan uv`` document."""

from __future__ import annotations

from typing import Any

from rich import box
from rich.console import Console, ConsoleOptions, Group, RenderResult
from rich.table import Table
from rich.text import Text

MAP_W, MAP_H = 41, 19  # character cells of the (u, v) map (about square on a terminal)


def uv_map(target: dict[str, Any]) -> Text:
    """A character map of the (u, v) plane out to the longest baseline: ``●`` where a
    baseline samples (u, v), ``·`` where only the mirror (-u, -v) falls; east (+u) left,
    as on the sky."""
    r = target["coverage"]["disk_radius_m"] or 1.0
    cells: dict[tuple[int, int], str] = {}
    for b in target["baselines"]:
        for s in b["samples"]:
            for sign, mark in ((1, "●"), (-1, "·")):
                col = round((1 - sign * s["u_m"] / r) * (MAP_W - 1) / 2)
                row = round((1 - sign * s["v_m"] / r) * (MAP_H - 1) / 2)
                if 0 <= col < MAP_W and 0 <= row < MAP_H and cells.get((row, col), "") != "●":
                    cells[(row, col)] = mark
    text = Text()
    for row in range(MAP_H):
        for col in range(MAP_W):
            mark = cells.get((row, col), "")
            centre = row == (MAP_H - 1) // 2 and col == (MAP_W - 1) // 2
            text.append(mark or ("+" if centre else " "),
                        style="cyan" if mark == "●" else "grey50")  # fmt: skip
        text.append("\n")
    return text


def figures(target: dict[str, Any]) -> Table:
    c = target["coverage"]
    t = Table(box=box.SIMPLE, show_header=False, pad_edge=False)
    t.add_column("figure", style="dim")
    t.add_column("value", justify="right")
    for label, value in (
        ("samples", f"{c['points']}"), ("stretches", f"{len(target['spans'])}"),
        ("longest projected", f"{c['longest_m']:.1f} m"),
        ("shortest projected", f"{c['shortest_m']:.1f} m"),
        ("largest radial gap", f"{c['radial_gap_m']:.1f} m"),
        ("largest angle gap", f"{c['position_angle_gap_deg']:.0f} deg"),
        ("filled", f"{c['fill']:.0%} within {c['fill_radius_m']:.0f} m"),
        ("disk radius", f"{c['disk_radius_m']:.0f} m"),
    ):  # fmt: skip
        t.add_row(label, value)
    return t


class UVView:
    """Every target of an ``opdplan uv`` document."""

    def __init__(self, doc: dict[str, Any]):
        self.doc = doc

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        yield Text(f"(u, v) coverage, night of {self.doc['night']['date']}, configuration "
                   f"{self.doc['configuration']}", style="bold")  # fmt: skip
        if not self.doc["targets"]:
            yield Text("  no science visit to show")
        for target in self.doc["targets"]:
            head = Text.assemble(("  " + target["target"], "bold"),
                                 f"  mode {target['mode']}, {target['wavelength_um']:g} um")
            grid = Table.grid(padding=(0, 3))
            grid.add_row(uv_map(target), figures(target))
            yield Group(head, grid)
        yield Text("●: sampled (u, v); ·: its mirror (-u, -v); + the origin; north up, east "
                   "left; the map reaches the longest baseline", style="dim")
