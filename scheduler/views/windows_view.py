"""The windows view: when each target can start and must end tonight, why each window
opens and closes, and how much margin it keeps.  Displays a finished ``opdplan windows
--json`` document.

Targets are grouped by programme (calibrators last), each group and each target in the
order its windows open; one row per window with its times in UTC and LST, the events
that open and close it in words, and a profile of its tightest margin across the whole
night (eighth-height blocks, scaled to the target's own best margin, blank while it is
not observable), with that best margin beside it.  The layout keeps to the console's
width: the least important column goes first (limited by, then the LST columns, then
the best margin, then the kind), event words shorten, and the profile takes what is
left between :data:`PROFILE_MIN` and :data:`PROFILE_MAX` cells.
"""

from __future__ import annotations

import math
from typing import Any

from rich import box
from rich.cells import cell_len
from rich.console import Console, ConsoleOptions, RenderResult
from rich.table import Table
from rich.text import Text

LEVELS = "▁▂▃▄▅▆▇█"
PROFILE_MIN, PROFILE_MAX = 12, 48
GAP = 3  # between columns: a space of padding each side and the divider


def profile(values: list[float | None], cells: int) -> str:
    """The margin profile: each cell the tightest sample inside it, as an eighth-height
    block of the best margin; blank where no sample is observable."""
    best = max((v for v in values if v is not None), default=None)
    if best is None or cells <= 0:
        return " " * max(cells, 0)
    out = []
    n = len(values)
    for k in range(cells):
        part = [v for v in values[k * n // cells:max((k + 1) * n // cells, k * n // cells + 1)]
                if v is not None]  # fmt: skip
        if not part:
            out.append(" ")
            continue
        frac = min(part) / best if best > 0 else 1.0
        out.append(LEVELS[min(7, max(0, math.ceil(frac * 8) - 1))])
    return "".join(out)


def _rows(doc: dict[str, Any]) -> list[dict[str, Any]]:
    """Display rows: a group heading per programme, then one row per window."""
    groups: dict[str, list[dict[str, Any]]] = {}
    for t in doc["targets"]:
        key = "calibrators" if t["kind"] == "calibrator" else (t["program"] or "no programme")
        groups.setdefault(key, []).append(t)

    def first(t: dict[str, Any]) -> str:
        return t["windows"][0]["start_utc"] if t["windows"] else "~"  # never: last

    order = sorted(groups, key=lambda g: (g == "calibrators", min(map(first, groups[g]))))
    rows: list[dict[str, Any]] = []
    for g in order:
        rows.append({"group": f"{g} ({len(groups[g])})"})
        for t in sorted(groups[g], key=first):
            for k, w in enumerate(t["windows"] or [None]):
                rows.append({"target": t if k == 0 else None, "window": w, "of": t})
    return rows


def _cells(row: dict[str, Any], key: str, short: bool) -> str:
    t, w = row["target"], row["window"]
    if key == "target":
        return t["name"] if t else ""
    if key == "kind":
        return ("sci" if t["kind"] == "science" else "cal") if t else ""
    if w is None:
        never = ("never: " if short else "not tonight: ") + (row["of"]["limited_by_short"] or "-")
        return {"opens": "-", "closes": "-", "h": "0", "events": never}.get(key, "")
    return {
        "opens": w["start_utc"][11:16], "lst_opens": w["start_lst"],
        "closes": w["end_utc"][11:16], "lst_closes": w["end_lst"], "h": f"{w['hours']:.1f}",
        "events": f"{w['opens_short' if short else 'opens']} → "
                  f"{w['closes_short' if short else 'closes']}",
    }.get(key, "")  # fmt: skip


def _spec(opts: set[str]) -> list[tuple[str, str]]:
    cols = [("target", "target"), ("kind", "kind"), ("opens", "opens"),
            ("lst_opens", "LST"), ("closes", "closes"), ("lst_closes", "LST"), ("h", "h"),
            ("events", "opens when → closes when"), ("profile", "margin"),
            ("peak", "best"), ("limited", "limited most by")]  # fmt: skip
    gone = {"lst": ("lst_opens", "lst_closes"), "kind": ("kind",), "peak": ("peak",),
            "limited": ("limited",)}  # fmt: skip
    drop = {c for o in gone if o not in opts for c in gone[o]}
    return [c for c in cols if c[0] not in drop]


def _other(row: dict[str, Any], key: str) -> str:
    t = row["target"]
    if t is None:
        return ""
    if key == "peak":
        best = max((v for v in t["margin"]["values"] if v is not None), default=None)
        unit = "m" if t["margin"]["unit"] == "m" else "°"
        if best is None:
            return ""
        return f"{best:.0f}°" if unit == "°" else f"{best:.1f} m"
    if key == "limited":
        return t["limited_by_short"] or "-"
    return ""


def _text(row: dict[str, Any], key: str, short: bool, cells: int) -> str:
    if key == "profile":
        return profile(row["target"]["margin"]["values"], cells) if row["target"] else ""
    if key in ("peak", "limited"):
        return _other(row, key)
    return _cells(row, key, short)


def _widths(rows: list[dict[str, Any]], spec: list[tuple[str, str]], short: bool,
            cells: int) -> list[int]:  # fmt: skip
    """Each column's width: its header and every cell (group headings in the first)."""
    out = []
    for key, head in spec:
        if key == "profile":
            out.append(max(cells, cell_len(head)))
            continue
        texts = [_text(r, key, short, 0) for r in rows if "group" not in r]
        out.append(max([cell_len(head)] + [cell_len(x) for x in texts]))
    return out


#: the layouts tried, richest first: each drops or shortens the least important thing left
STEPS: tuple[tuple[frozenset[str], bool], ...] = (
    (frozenset({"limited", "lst", "peak", "kind"}), False),
    (frozenset({"lst", "peak", "kind"}), False),
    (frozenset({"lst", "peak", "kind"}), True),
    (frozenset({"peak", "kind"}), True),
    (frozenset({"kind"}), True),
    (frozenset(), True),
)


def layout(rows: list[dict[str, Any]], width: int) -> tuple[set[str], bool, int]:
    """(optional columns kept, short event words, profile cells) for ``width``: the
    first of :data:`STEPS` that fits, the profile widened with what is left."""
    for opts, short in STEPS:
        spec = _spec(set(opts))
        need = sum(_widths(rows, spec, short, PROFILE_MIN)) + GAP * (len(spec) - 1)
        if need <= width:
            return set(opts), short, min(PROFILE_MAX, PROFILE_MIN + width - need)
    return set(), True, PROFILE_MIN


class WindowsView:
    """The windows of a night as tables fitted to the console's width."""

    def __init__(self, doc: dict[str, Any]):
        self.doc = doc

    @staticmethod
    def _table(spec: list[tuple[str, str]], widths: list[int], show_header: bool) -> Table:
        table = Table(box=box.SIMPLE_HEAD, pad_edge=False,
                      padding=(0, 1), show_edge=False, show_header=show_header)  # fmt: skip
        for (key, head), w in zip(spec, widths, strict=True):
            table.add_column(head, no_wrap=True, width=w,
                             justify="right" if key in ("h", "peak") else "left",
                             style="dim" if key.startswith("lst") else None)  # fmt: skip
        return table

    def __rich_console__(self, console: Console, options: ConsoleOptions) -> RenderResult:
        d, n = self.doc, self.doc["night"]
        yield Text(f"Night of {n['date']} · configuration {d['configuration']} · dark "
                   f"{n['start_utc'][11:16]}–{n['end_utc'][11:16]} UTC (LST {n['start_lst']}–"
                   f"{n['end_lst']}) · Moon {n['moon_illuminated']:.0%} lit",
                   style="bold")  # fmt: skip
        rows = _rows(d)
        opts, short, cells = layout(rows, options.max_width)
        spec = _spec(opts)
        widths = _widths(rows, spec, short, cells)
        table = None
        for r in rows + [{"group": ""}]:
            if "group" in r:  # a table per programme, all of the same widths
                if table is not None:
                    yield table
                if r["group"]:
                    yield Text(r["group"], style="bold underline")
                table = self._table(spec, widths, show_header=table is None)
                continue
            assert table is not None
            table.add_row(*[Text(_text(r, key, short, cells),
                                 style="green" if key == "profile" else "")
                            for key, _ in spec])  # fmt: skip
        yield Text(f"margin tonight: the tightest margin through the night, {cells} cells "
                   f"from dusk to dawn, blank while not observable, full height at the "
                   "target's best (best): metres of carriage headroom where a carriage "
                   "limit shuts the target tonight, else degrees above the altitude limit.",
                   style="dim")  # fmt: skip
