"""The set-up advice: the planned choices, best planned value first, with what each
changes, opens and closes.  Displays a finished ``opdplan-advice/1`` document."""

from __future__ import annotations

from typing import Any

from rich import box
from rich.console import Console, ConsoleOptions, RenderResult
from rich.table import Table
from rich.text import Text

LEGEND = ("value: what the planned night earns (the queue's value rule); sci h: science "
          "hours planned; pool h: priority x observable hours summed over the pool; "
          "open: science targets observable for at least one visit; room: the least "
          "carriage headroom among them, m of optical path (the most marginal target's "
          "best moment); alike: combinations giving every target the same hours.")  # fmt: skip


def _spaces(doc: dict[str, Any]) -> Text:
    parts = [f"{s['configuration']} {s['combinations']:,} "
             f"combination{'s' if s['combinations'] != 1 else ''}, {s['distinct']:,} "
             + ("distinct, all scored" if s["exhaustive"] else "met by a search (not all)")
             for s in doc["spaces"]]  # fmt: skip
    return Text("; ".join(parts) + f". Ranked in {doc['rank_s']:.1f} s; "
                f"{len(doc['choices'])} choice{'s' if len(doc['choices']) != 1 else ''} planned "
                f"({doc['solver']}) in "
                f"{doc['plan_s']:.1f} s.", style="dim")  # fmt: skip


def _what(c: dict[str, Any]) -> Text:
    text = Text(c["name"], style="bold")
    text.append(" (tonight's set-up)" if c["tonight"] else "")
    if c["changes"]:
        text.append("\n" + ", ".join(c["changes"]), style="cyan")
    if c["opens"]:
        text.append("\nopens " + ", ".join(c["opens"]), style="green")
    if c["closes"]:
        text.append("\ncloses " + ", ".join(c["closes"]), style="red")
    return text


def _verdict(doc: dict[str, Any]) -> list[Any]:
    best = doc["choices"][0]
    same = [c for c in doc["choices"] if c["tonight"] and
            c["configuration"] == best["configuration"]]  # fmt: skip
    if best["tonight"]:
        return [Text(f"Best: tonight's set-up of {best['name']} (value "
                     f"{best['planned']['value']:.2f}); no change plans better.")]  # fmt: skip
    base = same[0]["planned"]["value"] if same else None
    against = (f" against {base:.2f} for tonight's {best['configuration']}"
               if base is not None else "")  # fmt: skip
    return [Text(f"Best: {best['name']}, value {best['planned']['value']:.2f}{against}. "
                 "As a configuration of the array file:"),
            Text(best["configuration_toml"].rstrip(), style="cyan")]  # fmt: skip


class AdviceView:
    def __init__(self, doc: dict[str, Any]):
        self.doc = doc

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        d = self.doc
        yield Text(f"Set-up advice, night of {d['night']['date']} "
                   f"(dark {d['night']['start_utc'][11:16]} to {d['night']['end_utc'][11:16]} "
                   "UTC)", style="bold")  # fmt: skip
        yield _spaces(d)
        t = Table(box=box.SIMPLE_HEAD, pad_edge=False, expand=False)
        t.add_column("#", justify="right")
        t.add_column("set-up and what it changes", ratio=1, overflow="fold")
        for col in ("value", "sci h", "pool h", "open", "room", "alike"):
            t.add_column(col, justify="right", no_wrap=True)
        for c in d["choices"]:
            room = c["least_headroom_m"]
            t.add_row(str(c["rank"]), _what(c), f"{c['planned']['value']:.2f}",
                      f"{c['planned']['science_hours']:.2f}", f"{c['weighted_hours']:.1f}",
                      str(len(c["open_targets"])), "-" if room is None else f"{room:.1f}",
                      f"{c['alike']:,}")  # fmt: skip
        yield t
        yield from _verdict(d)
        yield Text(LEGEND, style="dim")
