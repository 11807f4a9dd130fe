"""The one live line shown while the optimiser works: the best value so far, the best
proven bound and the gap between them.  It only displays what it is told."""

from __future__ import annotations

import threading
import time

from rich.console import Console, ConsoleOptions, RenderResult
from rich.text import Text


class ProgressLine:
    """Updated from the solver's threads with :meth:`update`; rendered by rich.Live."""

    def __init__(self, label: str, limit_s: float):
        self.label, self.limit_s = label, limit_s
        self.started = time.perf_counter()
        self.value: float | None = None
        self.bound: float | None = None
        self._lock = threading.Lock()

    def update(self, value: float, bound: float | None) -> None:
        with self._lock:
            self.value, self.bound = value, bound

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        with self._lock:
            value, bound = self.value, self.bound
        elapsed = time.perf_counter() - self.started
        text = Text(f"{self.label} ", style="bold")
        text.append(f"{elapsed:4.0f} of {self.limit_s:.0f} s", style="dim")
        if value is not None:
            text.append("  best value ")
            text.append(f"{value:.2f}", style="bold green")
        if bound is not None:
            text.append("  bound ")
            text.append(f"{bound:.2f}", style="bold")
            if value is not None and bound > 0:
                text.append(f"  gap {max(0.0, bound - value) / bound:.1%}", style="yellow")
        yield text
