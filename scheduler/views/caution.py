"""The safety caution shown under every plan-like view."""

from __future__ import annotations

from rich.panel import Panel
from rich.text import Text

CAUTION = (
    "Advisory only. Every carriage, telescope and dome motion follows the site's "
    "interlocks, tunnel access rules and local procedures; opening limits (wind, "
    "humidity, dew) belong to the operator."
)


class Caution:
    """A one-paragraph reminder that the plan is advisory."""

    def __rich_console__(self, console, options):
        yield Panel(Text(CAUTION, style="italic"), title="caution", border_style="yellow")
