"""The delays view: where each carriage must be through the night."""

from __future__ import annotations

from dataclasses import dataclass

from rich import box
from rich.table import Table
from rich.text import Text


@dataclass(frozen=True)
class DelaySample:
    utc: str
    lst: str
    altitude_deg: float
    azimuth_deg: float
    opd_m: dict[str, float] | None
    feasible: bool
    status: str
    short: str


class DelaysView:
    """One row per sample: time, pointing, each line's optical path, verdict."""

    def __init__(self, title: str, lines: tuple[str, ...], samples: list[DelaySample]):
        self.title, self.lines, self.samples = title, lines, samples

    def __rich_console__(self, console, options):
        table = Table(
            title=self.title, title_justify="left", pad_edge=False, box=box.SIMPLE,
            padding=(0, 1), collapse_padding=True,
        )  # fmt: skip
        for col, width in (("UTC", 5), ("LST", 5), ("alt", 3), ("az", 3)):
            table.add_column(col, justify="right", no_wrap=True, min_width=width)
        for line in self.lines:
            table.add_column(line, justify="right", no_wrap=True, min_width=6)
        table.add_column("status", no_wrap=True)
        for s in self.samples:
            paths = [f"{s.opd_m[ln]:.2f}" if s.opd_m is not None else "-" for ln in self.lines]
            style = "green" if s.status == "observable" else "red" if not s.feasible else "yellow"
            table.add_row(
                s.utc[11:16], s.lst, f"{s.altitude_deg:.0f}", f"{s.azimuth_deg:.0f}", *paths,
                Text(s.short if s.status != "observable" else "ok", style=style),
            )  # fmt: skip
        yield table
        yield Text(
            "Optical path each line adds, in metres (JSON gives micrometres), with the "
            "common constant centred in its feasible span (every carriage as far from "
            "its ends as the geometry allows).",
            style="dim",
        )
