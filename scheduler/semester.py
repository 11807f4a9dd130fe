"""A semester: its nights, which configuration is on the array each night, the weather,
and the proposals asking for time.

Semester file (TOML): ``[semester] start, end`` (local evening dates, inclusive),
``[[calendar]] configuration, from, to`` (inclusive, non-overlapping), ``[weather]
usable_fraction = {month number = fraction of night time usable}``, one entry for every
month the semester touches.  Proposals (CSV): ``program, target, configuration, hours,
priority``, one row per requested target.
"""

from __future__ import annotations

import datetime as dt
import math
import tomllib
from dataclasses import dataclass
from pathlib import Path

from scheduler.catalog import Targets, read_table
from scheduler.errors import InputError, Problem, ProblemList
from scheduler.model import ArrayModel


@dataclass(frozen=True)
class CalendarEntry:
    configuration: str
    first: dt.date
    last: dt.date


@dataclass(frozen=True)
class Semester:
    start: dt.date
    end: dt.date
    calendar: tuple[CalendarEntry, ...]
    usable_fraction: tuple[tuple[int, float], ...]
    source: str = ""

    def nights(self) -> list[dt.date]:
        days = (self.end - self.start).days + 1
        return [self.start + dt.timedelta(days=k) for k in range(days)]

    def configuration_on(self, night: dt.date) -> str | None:
        for e in self.calendar:
            if e.first <= night <= e.last:
                return e.configuration
        return None

    def usable(self, night: dt.date) -> float:
        return dict(self.usable_fraction)[night.month]


@dataclass(frozen=True)
class Request:
    """One proposal row: ``hours`` on ``target`` with ``configuration``."""

    program: str
    target: int
    configuration: str
    hours: float
    priority: float
    row: int


def _date(value, where: str, p: ProblemList):
    if isinstance(value, dt.date):
        return value
    try:
        return dt.date.fromisoformat(str(value))
    except ValueError:
        p.add(where, f"{value!r} is not a date (YYYY-MM-DD)")
        return None


def load_semester(path: str | Path, array: ArrayModel) -> Semester:
    """Read and validate a semester file; every problem reported together."""
    src = str(path)
    try:
        data = tomllib.loads(Path(path).read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(Problem(src, "", "file not found")) from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(Problem(src, "", f"not valid TOML: {exc}")) from None
    p = ProblemList(src)
    for key in sorted(set(data) - {"semester", "calendar", "weather"}):
        p.add(key, "unknown key (allowed: ['calendar', 'semester', 'weather'])")
    sem = data.get("semester", {})
    for key in ("start", "end"):
        if key not in sem:
            p.add(f"semester.{key}", "missing required key")
    start = _date(sem.get("start"), "semester.start", p) if "start" in sem else None
    end = _date(sem.get("end"), "semester.end", p) if "end" in sem else None
    if start and end and end < start:
        p.add("semester.end", f"{end} is before the start {start}")
    names = {c.name for c in array.configurations}
    entries = []
    for i, e in enumerate(data.get("calendar", [])):
        where = f"calendar[{i}]"
        for key in ("configuration", "from", "to"):
            if key not in e:
                p.add(f"{where}.{key}", "missing required key")
        cfg = e.get("configuration")
        if cfg is not None and cfg not in names:
            p.add(f"{where}.configuration", f"{cfg!r} is not a configuration of {array.source}")
        a = _date(e.get("from"), f"{where}.from", p) if "from" in e else None
        b = _date(e.get("to"), f"{where}.to", p) if "to" in e else None
        if a and b and b < a:
            p.add(f"{where}.to", f"{b} is before {a}")
        if a and b and cfg:
            entries.append((i, CalendarEntry(cfg, a, b)))
    for (i, x), (j, y) in ((u, v) for k, u in enumerate(entries) for v in entries[k + 1 :]):
        if x.first <= y.last and y.first <= x.last:
            p.add(f"calendar[{j}]", f"overlaps calendar[{i}] ({x.first} to {x.last})")
    weather = data.get("weather", {}).get("usable_fraction", {})
    fractions = {}
    for key, value in weather.items():
        ok = isinstance(value, int | float) and not isinstance(value, bool) and 0 <= value <= 1
        if not str(key).isdigit() or not 1 <= int(key) <= 12 or not ok:
            p.add(f"weather.usable_fraction.{key}", f"needs a month 1-12 and a fraction 0-1, "
                                                   f"got {value!r}")  # fmt: skip
            continue
        fractions[int(key)] = float(value)
    if start and end and end >= start:
        months = sorted({(start + dt.timedelta(days=k)).month
                         for k in range((end - start).days + 1)})  # fmt: skip
        for month in months:
            if month not in fractions:
                p.add("weather.usable_fraction", f"no statistics for month {month}")
    p.raise_if_any()
    return Semester(start, end, tuple(e for _, e in entries), tuple(sorted(fractions.items())),
                    src)  # fmt: skip


def load_proposals(path: str | Path, targets: Targets, array: ArrayModel) -> list[Request]:
    """Read and validate the proposals table against the catalog and the array."""
    src = str(path)
    frame = read_table(path)
    p = ProblemList(src)
    need = ("program", "target", "configuration", "hours", "priority")
    for col in need:
        if col not in frame.columns:
            p.add(f"column {col!r}", "missing required column")
    p.raise_if_any()
    names = {c.name for c in array.configurations}
    first = int(frame.attrs.get("header_line", 1)) + 1
    out = []
    for k, row in enumerate(frame.to_dict("records")):
        where = f"row {k + first}"
        name, cfg = str(row["target"]).strip(), str(row["configuration"]).strip()
        if name not in targets.names:
            p.add(f"{where}, column 'target'", f"{name!r} is not in {targets.source}")
        if cfg not in names:
            p.add(f"{where}, column 'configuration'", f"{cfg!r} is not a configuration")
        values = {}
        for col in ("hours", "priority"):
            try:
                values[col] = float(row[col])
                if not math.isfinite(values[col]) or values[col] <= 0:
                    raise ValueError
            except ValueError:
                p.add(f"{where}, column {col!r}", f"{row[col]!r} is not a positive number")
        if name in targets.names and cfg in names and len(values) == 2:
            out.append(Request(str(row["program"]).strip(), targets.index(name), cfg,
                               values["hours"], values["priority"], k + first))  # fmt: skip
    if not len(frame):
        p.add("", "no proposals")
    p.raise_if_any()
    return out
