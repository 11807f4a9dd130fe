"""What a replan changed: kept, moved, dropped and added visits."""

from __future__ import annotations

from rich.table import Table
from rich.text import Text


class DiffView:
    def __init__(self, diff: dict, now_utc: str, out: list[str]):
        self.diff, self.now_utc, self.out = diff, now_utc, out

    def __rich_console__(self, console, options):
        d = self.diff
        head = Text(f"Replanned at {self.now_utc}", style="bold")
        if self.out:
            head.append(f"  (out: {', '.join(self.out)})", style="red")
        yield head
        table = Table(show_header=True, pad_edge=False, box=None)
        table.add_column("change", style="bold")
        table.add_column("visits", overflow="fold")
        table.add_row(Text("kept", style="green"), ", ".join(d["kept"]) or "-")
        table.add_row(Text("moved", style="yellow"),
                      ", ".join(f"{m['id']} {m['from_utc'][11:16]}->{m['to_utc'][11:16]}"
                                for m in d["moved"]) or "-")  # fmt: skip
        table.add_row(Text("dropped", style="red"), ", ".join(d["dropped"]) or "-")
        table.add_row(Text("added", style="cyan"), ", ".join(d["added"]) or "-")
        yield table
