"""Load and validate a semester file (TOML) and a proposals table (CSV).

Semester file: ``[semester] start, end`` (local evening dates, inclusive),
``[[calendar]] configuration, from, to`` (inclusive, non-overlapping), and one
``[[weather]]`` table for every month the semester touches::

    [[weather]]
    month = 4
    clear_nights = 0.8          # fraction of nights not lost whole (required)
    lost_spell_nights = 2.5     # mean run of lost nights (default: independent nights)
    partial_nights = 0.2        # fraction of clear nights losing part of the night
    seeing_arcsec = 0.8         # median seeing (default: each mode's reference)
    seeing_spread = 0.3         # standard deviation of ln(seeing)
    coherence_ms = 4.0          # median coherence time (default: each mode's reference)
    coherence_spread = 0.4      # standard deviation of ln(coherence time)

Unknown keys anywhere are problems.  Proposals (CSV): ``program, target, configuration,
hours, priority``, one row per requested target.
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
from scheduler.model.semester import CalendarEntry, MonthWeather, Request, Semester
from scheduler.model.targets import Targets

_TOP = {"semester", "calendar", "weather"}
_SEMESTER = {"start", "end"}
_CALENDAR = {"configuration", "from", "to"}
#: weather key -> (allowed range, factor to SI)
_WEATHER = {"clear_nights": ((0.0, 1.0), 1.0), "lost_spell_nights": ((1.0, 366.0), 1.0),
            "partial_nights": ((0.0, 1.0), 1.0), "seeing_arcsec": ((0.05, 10.0), math.pi / 648e3),
            "seeing_spread": ((0.0, 2.0), 1.0), "coherence_ms": ((0.1, 1000.0), 1e-3),
            "coherence_spread": ((0.0, 2.0), 1.0)}  # fmt: skip
_WEATHER_FIELD = {"seeing_arcsec": "seeing_rad", "coherence_ms": "coherence_s"}


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
    weather = _weather(data.get("weather", []), p)
    if start and end and end >= start:
        months = sorted({(start + dt.timedelta(days=k)).month
                         for k in range((end - start).days + 1)})  # fmt: skip
        for month in months:
            if month not in weather:
                p.add("weather", f"no [[weather]] table for month {month}")
    p.raise_if_any()
    assert start is not None and end is not None
    return Semester(start, end, tuple(entries), tuple(weather[m] for m in sorted(weather)), src)


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


def _weather(raw: Any, p: ProblemList) -> dict[int, MonthWeather]:
    """The ``[[weather]]`` tables by month number."""
    if not isinstance(raw, list):
        p.add("weather", "must be an array of tables ([[weather]], one per month)")
        return {}
    out: dict[int, MonthWeather] = {}
    for i, t in enumerate(raw):
        where = f"weather[{i}]"
        w = _table(t, where, {"month", *_WEATHER}, {"month", "clear_nights"}, p)
        month = w.get("month")
        if "month" in w and (not isinstance(month, int) or isinstance(month, bool)
                             or not 1 <= month <= 12):  # fmt: skip
            p.add(f"{where}.month", f"must be a month number 1-12, got {month!r}")
            continue
        values: dict[str, float] = {}
        for key, ((lo, hi), factor) in _WEATHER.items():
            v = w.get(key)
            if v is None:
                continue
            if isinstance(v, bool) or not isinstance(v, int | float) or not lo <= v <= hi:
                p.add(f"{where}.{key}", f"must be a number in [{lo:g}, {hi:g}], got {v!r}")
                continue
            values[_WEATHER_FIELD.get(key, key)] = float(v) * factor
        month_weather = _month(where, month, values, p)
        if month_weather is not None and isinstance(month, int):
            if month in out:
                p.add(f"{where}.month", f"month {month} has two [[weather]] tables")
            out[month] = month_weather
    return out


def _month(where: str, month: Any, values: dict[str, float],
           p: ProblemList) -> MonthWeather | None:  # fmt: skip
    """A month's weather once its numbers are checked together: a lost spell no shorter
    than the chain allows (P(clear -> lost) <= 1 needs spell >= (1 - clear) / clear)."""
    if "clear_nights" not in values or not isinstance(month, int):
        return None
    clear = values["clear_nights"]
    spell = values.get("lost_spell_nights", 1.0 / clear if clear > 0 else 1.0)
    if clear > 0 and (1.0 - clear) / clear > spell + 1e-12:
        p.add(f"{where}.lost_spell_nights", f"{spell:g} is too short for clear_nights "
              f"{clear:g}: runs of lost nights average at least {(1 - clear) / clear:.3g}")
        return None
    values["lost_spell_nights"] = spell
    return MonthWeather(month, **values)


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
