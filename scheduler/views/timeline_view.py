"""The night timeline: a strip across the night, one row per visit, summary, leftovers.

The strip shows the dark interval cell by cell (science, calibrator, transition, idle)
between UTC and LST hour labels, with science visit numbers under their blocks.  The
visit table grows with the console: carriage positions, full kind names, the whole gap
before each visit and the science visits a calibrator brackets are added as they fit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from rich import box
from rich.cells import cell_len
from rich.padding import Padding
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from scheduler.views.timeaxis import TimeAxis

#: span kind -> (glyph, style, legend); our own scheme
GLYPHS = {
    "science": ("█", "bold green", "science"),
    "calibrator": ("▒", "cyan", "calibrator"),
    "transition": ("▸", "yellow", "transition"),
    "idle": ("·", "grey50", "idle"),
    "done": ("▪", "grey62", "done"),
    "closed": ("×", "red", "closed"),
}
PRIORITY = ("closed", "done", "science", "calibrator", "transition", "idle")  # wins ties
LABEL_W = 4  # "UTC " before the strip
WIDE_W = 100  # consoles at least this wide put reasons beside the unscheduled targets


@dataclass(frozen=True)
class NightStrip:
    """The night from ``start_s`` to ``end_s`` (POSIX UTC seconds); ``marks`` are
    (time, UTC label, LST label) at full hours, ``spans`` (start, end, kind) cover it."""

    start_s: float
    end_s: float
    marks: tuple[tuple[float, str, str], ...]
    spans: tuple[tuple[float, float, str], ...]


@dataclass(frozen=True)
class VisitRow:
    """One scheduled visit, ready to show: times as ``HH:MM``, seconds, degrees, and
    ``opd_start_m`` (metres) in the order of the view's delay lines."""

    number: int
    utc_start: str
    utc_end: str
    lst_start: str
    target: str
    kind: str
    program: str
    alt_deg: tuple[float, float]
    slew_s: float
    carriage_s: float
    acquisition_s: float
    gap_s: float
    opd_start_m: tuple[float, ...]
    serves: tuple[int, ...]  # numbers of the science visits a calibrator brackets
    done: bool = False  # a replan's visit already done (times logged; no transition)
    setup_s: float = 0.0  # another observing mode's set-up before the visit
    weak: int = 0  # baselines that measure nothing at some instant (partly resolved)


class TimelineView:
    """The night queue: strip, visit table, summary panel, unscheduled science."""

    def __init__(
        self, title: str, strip: NightStrip, rows: list[VisitRow], lines: tuple[str, ...],
        summary: tuple[tuple[str, str], ...], unscheduled: tuple[tuple[str, tuple[str, ...]], ...],
        notes: tuple[str, ...] = (), backups: tuple[tuple[str, tuple[str, ...]], ...] = (),
    ):  # fmt: skip
        self.title, self.strip, self.rows, self.lines = title, strip, list(rows), tuple(lines)
        self.summary, self.unscheduled, self.notes = summary, unscheduled, notes
        self.backups = backups

    def __rich_console__(self, console, options):
        width = options.max_width
        yield Text(self.title, style="bold")
        for note in self.notes:
            yield Text(note, style="yellow")
        yield Text()
        yield from _strip_lines(self.strip, self.rows, max(12, width - LABEL_W))
        yield _legend({kind for _, _, kind in self.strip.spans})
        yield Text()
        if self.rows:
            table, note = _visit_table(self.rows, self.lines, width)
            yield table
            yield Text(note, style="dim")
        else:
            yield Text("No visit could be scheduled tonight.", style="bold red")
        yield _summary_panel(self.summary, width)
        yield Text(SUMMARY_LEGEND, style="dim")
        if self.unscheduled:
            yield from _unscheduled(self.unscheduled, width)
        if self.backups:
            yield from _backups(self.backups)


# ---------------------------------------------------------------- the strip


def _axis(strip: NightStrip, cells: int) -> TimeAxis:
    """Hour ticks thinned so that 5-character labels never touch."""
    hours = max((strip.end_s - strip.start_s) / 3600.0, 1e-9)
    step = max(1, math.ceil(6.0 * hours / cells))  # full hours between labels
    ticks = []
    for k, (t, utc, lst) in enumerate(strip.marks):
        cell = int((t - strip.start_s) / (strip.end_s - strip.start_s) * cells)
        if k % step == 0 and 0 <= cell <= cells - 5:
            ticks.append((cell, utc, lst))
    return TimeAxis(strip.start_s, strip.end_s, cells, tuple(ticks))


def _winner(cover: dict[str, float]) -> str:
    """The kind covering most of a cell, ties by PRIORITY."""
    return max(PRIORITY, key=lambda k: (cover[k], -PRIORITY.index(k)))


def _cells(axis: TimeAxis, spans) -> list[str]:
    """Kind shown in each cell: the kind covering most of it (ties by PRIORITY), then
    every visit made visible in the cell of its middle if it won no cell."""
    width = (axis.end_s - axis.start_s) / axis.cells
    cover = [dict.fromkeys(PRIORITY, 0.0) for _ in range(axis.cells)]
    for a, b, kind in spans:
        for c in range(axis.cell_of(a), axis.cell_of(b) + 1):
            lo, hi = max(a, axis.start_s + c * width), min(b, axis.start_s + (c + 1) * width)
            if hi > lo:
                cover[c][kind] += hi - lo
    shown = [_winner(cv) for cv in cover]
    owner = [None] * axis.cells
    for a, b, kind in spans:
        if kind in ("science", "calibrator", "done"):
            cells = range(axis.cell_of(a), axis.cell_of(b) + 1)
            if not any(shown[c] == kind for c in cells):
                mid = axis.cell_of(0.5 * (a + b))
                if owner[mid] is None:
                    shown[mid] = kind
            for c in cells:
                owner[c] = owner[c] or kind
    return shown


def _strip_lines(strip: NightStrip, rows: list[VisitRow], cells: int):
    axis = _axis(strip, cells)
    utc, lst = axis.label_rows()
    bar = Text()
    for kind in _cells(axis, strip.spans):
        glyph, style, _ = GLYPHS[kind]
        bar.append(glyph, style=style)
    marks = [" "] * cells
    visits = [s for s in strip.spans if s[2] in ("science", "calibrator")]
    for row, (a, b, kind) in zip([r for r in rows if not r.done], visits, strict=False):
        if kind != "science":
            continue
        label = str(row.number)
        c = axis.cell_of(0.5 * (a + b))
        c = min(c, cells - len(label))
        lo, hi = max(0, c - 1), min(cells, c + len(label) + 1)
        if all(ch == " " for ch in marks[lo:hi]):
            marks[c : c + len(label)] = label
    yield Text.assemble(("UTC ", "bold"), utc)
    yield Text.assemble("    ", bar)
    yield Text.assemble(("  # ", "dim"), ("".join(marks).rstrip(), "bold green"))
    yield Text.assemble(("LST ", "dim"), lst)


def _legend(present: set[str]) -> Text:
    text = Text("    ")
    for kind, (glyph, style, label) in GLYPHS.items():
        if kind in ("done", "closed") and kind not in present:
            continue
        text.append(glyph, style=style)
        text.append(f" {label}  ")
    text.append("# science visit", style="dim")
    return text


# ---------------------------------------------------------------- the visit table

OPTIONS = ("opd", "serves", "gap", "long_kind")  # added in this order while they fit


def _columns(rows: list[VisitRow], lines, opts=frozenset(), drop=()):
    """(header, cells, justify, style) for each column of the layout ``opts``."""
    cols = [
        ("#", [Text.assemble((GLYPHS[_kind(r)][0], GLYPHS[_kind(r)][1]), f" {r.number}")
               for r in rows], "left", None),
        ("", ["done" if r.done else "" for r in rows], "left", "grey62"),
        ("UTC", [f"{r.utc_start}–{r.utc_end}" for r in rows], "left", None),
        ("LST", [r.lst_start for r in rows], "left", "dim"),
        ("target", [Text(r.target, style=GLYPHS[_kind(r)][1]) for r in rows], "left", None),
        ("kind", [r.kind if "long_kind" in opts else r.kind[:3] for r in rows], "left", "dim"),
        ("program", [r.program for r in rows], "left", None),
        ("alt°", [f"{r.alt_deg[0]:.0f}–{r.alt_deg[1]:.0f}" for r in rows], "right", None),
        ("slew", [_num(r.slew_s, 0) for r in rows], "right", None),
        ("carr", [_num(r.carriage_s, 0) for r in rows], "right", None),
        ("acq", [_num(r.acquisition_s, 0) for r in rows], "right", None),
    ]  # fmt: skip
    if any(r.setup_s > 0 for r in rows):
        cols.append(("setup", [f"{r.setup_s:.0f}" if r.setup_s else "" for r in rows], "right",
                     None))  # fmt: skip
    if any(r.weak for r in rows):
        cols.append(("weak", [str(r.weak) if r.weak else "" for r in rows], "right", "red"))
    if not any(r.done for r in rows):
        cols = [c for c in cols if c[0] != ""]
    if "gap" in opts:
        cols.append(("gap", [_num(r.gap_s, 0) for r in rows], "right", "dim"))
    if "opd" in opts:
        for k, line in enumerate(lines):
            cols.append((line, [_num(r.opd_start_m[k], 2) for r in rows], "right", "blue"))
    if "serves" in opts:
        cols.append(("for #", [" ".join(map(str, r.serves)) for r in rows], "left", "dim"))
    return [c for c in cols if c[0] not in drop]


def _kind(row: VisitRow) -> str:
    if row.done:
        return "done"
    return "science" if row.kind == "science" else "calibrator"


def _num(x: float, digits: int) -> str:
    """A number for the table; a dash where it is not known (a done visit's transition)."""
    return "–" if math.isnan(x) else f"{x:.{digits}f}"


def _width(cols, gap: int) -> int:
    per = [max([cell_len(h)] + [cell_len(str(c)) for c in cells]) for h, cells, _, _ in cols]
    return sum(per) + gap * (len(per) - 1)


def _layout(rows, lines, width: int):
    """The richest layout that fits ``width``: the OPTIONS are taken in order, each kept
    if it still fits; two spaces between columns unless only one space lets the carriage
    positions in; on very narrow consoles program, then altitude, go."""
    best = None
    for drop in ((), ("program",), ("program", "alt°")):
        for gap in (2, 1):
            if _width(_columns(rows, lines, drop=drop), gap) > width:
                continue
            opts: frozenset = frozenset()
            for key in OPTIONS:
                if key == "serves" and not any(r.serves for r in rows):
                    continue
                if _width(_columns(rows, lines, opts | {key}, drop), gap) <= width:
                    opts |= {key}
            rank = ("opd" in opts, gap, tuple(key in opts for key in OPTIONS))
            if best is None or rank > best[0]:
                best = (rank, opts, drop, gap)
        if best is not None:
            return best[1:]
    return frozenset(), ("program", "alt°"), 1


def _visit_table(rows: list[VisitRow], lines, width: int) -> tuple[Table, str]:
    opts, drop, gap = _layout(rows, lines, width)
    cols = _columns(rows, lines, opts, drop)
    table = Table(box=box.SIMPLE_HEAD, show_edge=False, pad_edge=False,
                  padding=(0, gap - 1), collapse_padding=True, header_style="bold")  # fmt: skip
    for header, _, justify, style in cols:
        table.add_column(header, justify=justify, style=style, no_wrap=True)
    for k in range(len(rows)):
        table.add_row(*[col[1][k] for col in cols])
    note = "slew, carr(iage), acq(uisition): the transition before each visit, s"
    if any(r.setup_s > 0 for r in rows):
        note += "; setup: another observing mode's set-up, s"
    if any(r.weak for r in rows):
        note += "; weak: baselines that measure nothing at some instant (partly resolved)"
    if "gap" in opts:
        note += "; gap: previous end to this start, s"
    if "serves" in opts:
        note += "; for #: the science visits a calibrator brackets"
    if "opd" in opts:
        note += f"; {lines[0]}..{lines[-1]}: optical path of each delay line at the start, m"
    elif lines:
        need = _width(_columns(rows, lines, {"opd"}, drop), gap)
        note += f"; carriage positions need {need}+ columns (or see the JSON plan)"
    return table, note + "."


# ---------------------------------------------------------------- summary, leftovers


SUMMARY_LEGEND = (
    "value: what the science visits earn under the value rule; greedy: what the by-hand "
    "(greedy) night earns; bound: no plan can earn more (proven, or as far as the time "
    "limit let the proof go); gap: (bound - value) / bound; idle carriage: seconds of "
    "carriage moves and settling between visits; carriage wait: seconds by which "
    "transitions last longer because of the carriages than the telescope slews alone."
)


def _summary_panel(items, width: int) -> Panel:
    """Label-value items packed into lines; an item is never split."""
    inner = max(20, width - 4)
    lines, line = [], Text()
    for label, value in items:
        piece = Text.assemble((label, "dim"), " ", (value, "bold"))
        if line and line.cell_len + 3 + piece.cell_len > inner:
            lines.append(line)
            line = Text()
        if line:
            line.append(" · ", style="dim")
        line.append_text(piece)
    if line:
        lines.append(line)
    return Panel(Text("\n").join(lines), title="summary", title_align="left",
                 box=box.ROUNDED, expand=False)  # fmt: skip


def _unscheduled(groups, width: int):
    """Reason beside its targets on wide consoles; reason over them on narrow ones."""
    count = sum(len(names) for _, names in groups)
    yield Text(f"Not scheduled: {count} science targets", style="bold")
    if width >= WIDE_W:
        why_w = max(cell_len(why) for why, _ in groups)
        table = Table(box=None, show_header=False, pad_edge=False, padding=(0, 2, 0, 0))
        table.add_column("why", style="yellow", max_width=min(why_w, max(30, width - 60)))
        table.add_column("targets")
        for why, names in groups:
            table.add_row(why, ", ".join(names))
        yield table
        return
    for why, names in groups:
        yield Padding(Text.assemble((why, "yellow"), f" ({len(names)})"), (0, 0, 0, 2))
        yield Padding(Text(", ".join(names)), (0, 0, 0, 4))


def _backups(hours: tuple[tuple[str, tuple[str, ...]], ...]):
    """Per hour, what to observe instead if the conditions get worse."""
    yield Text("Backups if the conditions get worse (seeing x1.25, coherence time x0.8):",
               style="bold")  # fmt: skip
    for hour, names in hours:
        yield Padding(Text.assemble((f"{hour} ", "dim"), ", ".join(names)), (0, 0, 0, 2))
