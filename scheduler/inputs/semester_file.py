"""Load and validate a semester file (TOML) and a proposals table (CSV).

Semester file: ``[semester] start, end`` (local evening dates, inclusive),
``[[calendar]] configuration, from, to`` (inclusive, non-overlapping), ``[weather]
usable_fraction = {month number = fraction of night time usable}``, one entry for every
month the semester touches.  Unknown keys anywhere are problems.  Proposals (CSV):
``program, target, configuration, hours, priority``, one row per requested target.
"""

from __future__ import annotations

import datetime as dt
import math
from pathlib import Path
from typing import Any

from scheduler.inputs.catalog import read_table
from scheduler.inputs.toml_file import read_toml
from scheduler.model.array import ArrayModel
from scheduler.model.errors import ProblemList
from scheduler.model.semester import CalendarEntry, Request, Semester
from scheduler.model.targets import Targets

_TOP = {"semester", "calendar", "weather"}
_SEMESTER = {"start", "end"}
_CALENDAR = {"configuration", "from", "to"}
_WEATHER = {"usable_fraction"}


def _date(value: Any, where: str, p: ProblemList) -> dt.date | None:
    if isinstance(value, dt.date) and not isinstance(value, dt.datetime):
        return value
    try:
        return dt.date.fromisoformat(str(value))
    except ValueError:
        p.add(where, f"{value!r} is not a date (YYYY-MM-DD)")
        return None


def _table(value: Any, where: str, allowed: set[str], required: set[str],
           p: ProblemList) -> dict[str, Any]:  # fmt: skip
    """``value`` as a table with only ``allowed`` keys; problems for everything else."""
    if not isinstance(value, dict):
        p.add(where, f"must be a table, got {value!r}")
        return {}
    for key in sorted(set(value) - allowed):
        p.add(f"{where}.{key}" if where else key, f"unknown key (allowed: {sorted(allowed)})")
    for key in sorted(required - set(value)):
        p.add(f"{where}.{key}" if where else key, "missing required key")
    return value


def load_semester(path: str | Path, array: ArrayModel | None) -> Semester:
    """Read and validate a semester file; every problem reported together (configuration
    names are checked only when the ``array`` could be read)."""
    src = str(path)
    data = read_toml(path)
    p = ProblemList(src)
    _table(data, "", _TOP, _TOP, p)
    sem = _table(data.get("semester", {}), "semester", _SEMESTER, _SEMESTER, p)
    start = _date(sem["start"], "semester.start", p) if "start" in sem else None
    end = _date(sem["end"], "semester.end", p) if "end" in sem else None
    if start and end and end < start:
        p.add("semester.end", f"{end} is before the start {start}")
    entries = _calendar(data.get("calendar", []), array, p)
    fractions = _weather(data.get("weather", {}), p)
    if start and end and end >= start:
        months = sorted({(start + dt.timedelta(days=k)).month
                         for k in range((end - start).days + 1)})  # fmt: skip
        for month in months:
            if month not in fractions:
                p.add("weather.usable_fraction", f"no statistics for month {month}")
    p.raise_if_any()
    assert start is not None and end is not None
    return Semester(start, end, tuple(entries), tuple(sorted(fractions.items())), src)


def _calendar(raw: Any, array: ArrayModel | None, p: ProblemList) -> list[CalendarEntry]:
    if not isinstance(raw, list):
        p.add("calendar", "must be an array of tables ([[calendar]])")
        return []
    names = {c.name for c in array.configurations} if array is not None else None
    entries: list[tuple[int, CalendarEntry]] = []
    for i, raw_entry in enumerate(raw):
        where = f"calendar[{i}]"
        e = _table(raw_entry, where, _CALENDAR, _CALENDAR, p)
        cfg = e.get("configuration")
        if cfg is not None and names is not None and cfg not in names:
            p.add(f"{where}.configuration", f"{cfg!r} is not a configuration of the array"
                  f" (one of {sorted(names)})")  # fmt: skip
        a = _date(e["from"], f"{where}.from", p) if "from" in e else None
        b = _date(e["to"], f"{where}.to", p) if "to" in e else None
        if a and b and b < a:
            p.add(f"{where}.to", f"{b} is before {a}")
        if a and b and isinstance(cfg, str):
            entries.append((i, CalendarEntry(cfg, a, b)))
    for k, (i, x) in enumerate(entries):
        for j, y in entries[k + 1 :]:
            if x.first <= y.last and y.first <= x.last:
                p.add(f"calendar[{j}]", f"overlaps calendar[{i}] ({x.first} to {x.last})")
    return [e for _, e in entries]


def _weather(raw: Any, p: ProblemList) -> dict[int, float]:
    weather = _table(raw, "weather", _WEATHER, _WEATHER, p)
    table = weather.get("usable_fraction", {})
    if not isinstance(table, dict):
        p.add("weather.usable_fraction", f"must map month numbers to fractions, got {table!r}")
        return {}
    fractions: dict[int, float] = {}
    for key, value in table.items():
        ok = isinstance(value, int | float) and not isinstance(value, bool)
        ok = ok and math.isfinite(value) and 0 <= value <= 1
        if not str(key).isdigit() or not 1 <= int(key) <= 12 or not ok:
            p.add(f"weather.usable_fraction.{key}",
                  f"needs a month 1-12 and a fraction 0-1, got {value!r}")  # fmt: skip
            continue
        fractions[int(key)] = float(value)
    return fractions


def load_proposals(path: str | Path, targets: Targets, array: ArrayModel) -> list[Request]:
    """Read and validate the proposals table against the catalog and the array."""
    src = str(path)
    frame = read_table(path)
    p = ProblemList(src)
    for col in ("program", "target", "configuration", "hours", "priority"):
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
