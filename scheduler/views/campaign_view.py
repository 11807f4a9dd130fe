"""The campaign view: per target and configuration, visits wanted, done and left, the
nights and hour angles done, and the coverage so far.  Displays a finished document."""

from __future__ import annotations

from typing import Any

from rich import box
from rich.console import Console, ConsoleOptions, RenderResult
from rich.table import Table
from rich.text import Text


class CampaignView:
    def __init__(self, doc: dict[str, Any]):
        self.doc = doc

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        t = Table(title=f"Campaign {self.doc['campaign']} (logs in {self.doc['log']})",
                  title_justify="left", box=box.SIMPLE_HEAD, pad_edge=False)  # fmt: skip
        for col in ("target", "cfg", "wanted", "done", "left", "nights", "HA h",
                    "filled", "angle gap"):  # fmt: skip
            t.add_column(col, justify="right" if col in ("wanted", "done", "left", "filled",
                                                         "angle gap") else "left")  # fmt: skip
        for r in self.doc["targets"]:
            c = r["coverage"]
            left = Text(str(r["left"]), style="green" if r["left"] == 0 else "yellow")
            t.add_row(r["target"], r["configuration"], str(r["wanted"]), str(r["done"]), left,
                      ", ".join(n[5:] for n in r["nights"]) or "-",
                      ", ".join(f"{h:+.1f}" for h in r["hour_angles_h"]) or "-",
                      f"{c['fill']:.0%}" if c["points"] else "-",
                      f"{c['position_angle_gap_deg']:.0f} deg" if c["points"] else "-")
        yield t
        yield Text("filled: share of the (u, v) disk out to the longest baseline within "
                   "a tenth of it of a sample; angle gap: the largest empty sector of "
                   "position angle; `opdplan plan --campaign FILE --campaign-log DIR` plans "
                   "what is left", style="dim")
