"""The night log: an append-only JSON Lines file of what happened during the night.

Each record is one line, written with a single write, flushed and synced, so a crash can
at worst leave the last line cut short.  Reading reports such a line as a warning and
keeps every record before it.  A record appended after a cut line starts on a fresh line
and names the cut line it leaves behind (``"after_cut_line": N``); any other damaged
line, anywhere in the file, is an error naming its line: a log is never half-trusted.

Records are checked against the plan being flown (:class:`LogTerms`) when they are
written and when a replan reads them: visits, stations and delay lines must be the
plan's, carriage paths finite and inside each line's range.

Records (all times ISO 8601 UTC with ``Z``; ``logged_utc`` is when it was written):

- ``{"event": "done" | "aborted", "visit": ID, "at_utc"[, "target", "configuration",
  "night", "duration_s", "planned_end_utc"]}``: what the plan said of the visit is kept
  with it, so that a campaign can count the visits of many nights from their logs alone
- ``{"event": "closed", "from_utc", "to_utc"}``: domes closed (weather)
- ``{"event": "out" | "back", "station": NAME | "delay_line": NAME, "at_utc"}``
- ``{"event": "carriages", "at_utc", "opd_m": {LINE: metres}}``
- ``{"event": "conditions", "at_utc", "seeing_arcsec", "coherence_ms"[, "wind_speed_m_s",
  "wind_from_deg"]}``: the conditions from then on
"""

from __future__ import annotations

import json
import math
import os
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from scheduler.model.errors import InputError, Problem, ProblemList
from scheduler.model.log import Event, LogRecord
from scheduler.model.times import iso_utc, parse_utc

LOG_SCHEMA = "opdplan-log/1"


@dataclass(frozen=True)
class LogTerms:
    """What records may name: the visits, stations and delay lines of the plan being
    flown (``source`` its file), with each line's optical-path range in metres."""

    source: str
    visits: frozenset[str]
    stations: frozenset[str]
    lines: tuple[tuple[str, float, float], ...]  # (name, opd_min_m, opd_max_m)

    @classmethod
    def of_plan(cls, doc: dict[str, Any], source: str) -> LogTerms:
        visits = {v["id"] for v in doc.get("visits", []) + doc.get("done", [])}
        lines = tuple((d["name"], float(d["opd_min_m"]), float(d["opd_max_m"]))
                      for d in doc.get("delay_lines", []))  # fmt: skip
        stations = {s["name"] for s in doc.get("stations", [])}
        return cls(source, frozenset(visits), frozenset(stations), lines)


def check_names(rec: LogRecord, terms: LogTerms) -> list[str]:
    """What in ``rec`` the plan does not know, or is out of range, as sentences."""
    bad = []
    if rec.visit is not None and rec.visit not in terms.visits:
        bad.append(f"visit {rec.visit!r} is not in {terms.source}")
    if rec.station is not None and rec.station not in terms.stations:
        bad.append(f"station {rec.station!r} is not one of {sorted(terms.stations)} "
                   f"(the stations of {terms.source})")  # fmt: skip
    ranges = {name: (lo, hi) for name, lo, hi in terms.lines}
    if rec.delay_line is not None and rec.delay_line not in ranges:
        bad.append(f"delay line {rec.delay_line!r} is not one of {sorted(ranges)}")
    for line, x in rec.opd_m:
        if line not in ranges:
            bad.append(f"opd_m: delay line {line!r} is not one of {sorted(ranges)}")
        elif not ranges[line][0] <= x <= ranges[line][1]:
            lo, hi = ranges[line]
            bad.append(f"opd_m: {line} = {x} m is outside its range [{lo}, {hi}] m")
    return bad


def append_record(path: str | Path, record: dict[str, Any], after_cut: int | None = None) -> None:
    """Append one record as one line, flushed and synced; never rewrites the file.
    ``after_cut`` names the cut last line this record leaves behind."""
    body: dict[str, Any] = {"schema": LOG_SCHEMA, **record, "logged_utc": iso_utc(time.time())}
    if after_cut is not None:
        body["after_cut_line"] = after_cut
    line = json.dumps(body, separators=(",", ":"), allow_nan=False) + "\n"
    with open(path, "ab") as f:
        if after_cut is not None:
            line = "\n" + line  # keep the cut line apart
        f.write(line.encode("utf-8"))
        f.flush()
        os.fsync(f.fileno())


def cut_last_line(path: str | Path) -> int | None:
    """The number of the log's last line when a crash cut it short (it does not end the
    file with a newline), else None.  A missing or empty file has no cut line."""
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        return None
    if not raw or raw.endswith(b"\n"):
        return None
    return raw.count(b"\n") + 1


def read_log(path: str | Path, terms: LogTerms | None = None
             ) -> tuple[list[LogRecord], list[str]]:  # fmt: skip
    """Records and warnings (a cut line); every other problem raises InputError."""
    src = str(path)
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        raise InputError(Problem(src, "", "file not found")) from None
    except OSError as exc:
        raise InputError(Problem(src, "", f"cannot read: {exc}")) from None
    lines = raw.decode("utf-8", errors="replace").split("\n")
    complete = raw.endswith(b"\n") or not raw
    p = ProblemList(src)
    parsed: dict[int, Any] = {}
    damaged: list[int] = []
    for n, text in enumerate(lines, 1):
        if not text.strip():
            continue
        try:
            parsed[n] = json.loads(text)
        except json.JSONDecodeError:
            damaged.append(n)
    acknowledged = {d.get("after_cut_line") for d in parsed.values() if isinstance(d, dict)}
    warnings = []
    for n in damaged:
        if (n == len(lines) and not complete) or n in acknowledged:
            warnings.append(f"{src}: line {n}: cut short (a crash while writing?); skipped")
        else:
            p.add(f"line {n}", "damaged record (not JSON, and not a cut last line)")
    records = [r for n, d in parsed.items() if (r := _record(d, n, p)) is not None]
    for r in records if terms else ():
        for message in check_names(r, terms):  # type: ignore[arg-type]
            p.add(f"line {r.line}", message)
    p.raise_if_any()
    return records, warnings


def _utc(data: dict[str, Any], key: str, where: str, p: ProblemList) -> float | None:
    if key not in data:
        p.add(where, f"{data.get('event')}: missing {key!r}")
        return None
    try:
        return parse_utc(data[key])
    except ValueError:
        p.add(where, f"{key} {data[key]!r} is not an ISO 8601 UTC time")
        return None


def _record(data: Any, n: int, p: ProblemList) -> LogRecord | None:
    where = f"line {n}"
    if not isinstance(data, dict) or data.get("schema") != LOG_SCHEMA:
        got = data.get("schema") if isinstance(data, dict) else None
        p.add(where, f"schema: expected {LOG_SCHEMA!r}, got {got!r}")
        return None
    try:
        event = Event(str(data.get("event")))
    except ValueError:
        p.add(where, f"event {data.get('event')!r} is not one of {[e.value for e in Event]}")
        return None
    if event is Event.CLOSED:
        a, b = _utc(data, "from_utc", where, p), _utc(data, "to_utc", where, p)
        if a is not None and b is not None and b <= a:
            p.add(where, "closed: the closure ends before it starts")
        return LogRecord(n, event, from_s=a, to_s=b)
    at = _utc(data, "at_utc", where, p)
    if event in (Event.DONE, Event.ABORTED):
        if not isinstance(data.get("visit"), str):
            p.add(where, f"{event}: missing 'visit'")
        return _visit_record(data, n, event, at, p)
    if event is Event.CONDITIONS:
        return _conditions(data, n, at, p)
    if event in (Event.OUT, Event.BACK):
        st, dl = data.get("station"), data.get("delay_line")
        if (st is None) == (dl is None) or not isinstance(st or dl, str):
            p.add(where, f"{event}: give exactly one of 'station' or 'delay_line'")
        return LogRecord(n, event, at_s=at, station=st, delay_line=dl)
    return _carriages(data, n, at, p)


def _visit_record(data: dict[str, Any], n: int, event: Event, at: float | None,
                  p: ProblemList) -> LogRecord:  # fmt: skip
    """A done or aborted visit, with what the plan said of it when the log has it."""
    about = {k: data.get(k) for k in ("target", "configuration", "night")}
    for key, value in about.items():
        if value is not None and not isinstance(value, str):
            p.add(f"line {n}", f"{event}: {key!r} must be a string, got {value!r}")
            about[key] = None
    length = data.get("duration_s")
    if length is not None and (isinstance(length, bool) or not isinstance(length, int | float)
                               or not math.isfinite(length) or length <= 0):  # fmt: skip
        p.add(f"line {n}", f"{event}: 'duration_s' must be a positive number, got {length!r}")
        length = None
    planned = _utc(data, "planned_end_utc", f"line {n}", p) if "planned_end_utc" in data else None
    return LogRecord(n, event, at_s=at, visit=data.get("visit"), target=about["target"],
                     configuration=about["configuration"], night=about["night"],
                     duration_s=None if length is None else float(length),
                     planned_end_s=planned)  # fmt: skip


def _carriages(data: dict[str, Any], n: int, at: float | None, p: ProblemList) -> LogRecord | None:
    opd = data.get("opd_m")
    ok = isinstance(opd, dict) and bool(opd) and all(
        isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)
        for v in opd.values()
    )
    if not ok:
        p.add(f"line {n}", f"carriages: 'opd_m' must map delay lines to finite metres, got {opd!r}")
        return None
    assert isinstance(opd, dict)
    return LogRecord(n, Event.CARRIAGES, at_s=at,
                     opd_m=tuple((str(k), float(v)) for k, v in opd.items()))  # fmt: skip


#: conditions fields and their ranges (seeing arcsec, tau0 ms, wind m/s, azimuth deg)
CONDITION_RANGES = {"seeing_arcsec": (0.05, 10.0), "coherence_ms": (0.1, 1000.0),
                    "wind_speed_m_s": (0.0, 100.0), "wind_from_deg": (0.0, 360.0)}


def _conditions(data: dict[str, Any], n: int, at: float | None,
                p: ProblemList) -> LogRecord | None:  # fmt: skip
    values: dict[str, float | None] = {}
    for key, (lo, hi) in CONDITION_RANGES.items():
        v = data.get(key)
        ok = v is None or (isinstance(v, int | float) and not isinstance(v, bool)
                           and math.isfinite(v) and lo <= v <= hi)  # fmt: skip
        if not ok:
            p.add(f"line {n}", f"conditions: {key} must be a number in [{lo}, {hi}], got {v!r}")
            return None
        values[key] = None if v is None else float(v)
    if all(v is None for v in values.values()):
        p.add(f"line {n}", "conditions: give seeing_arcsec, coherence_ms or the wind")
        return None
    if (values["wind_speed_m_s"] is None) != (values["wind_from_deg"] is None):
        p.add(f"line {n}", "conditions: wind_speed_m_s and wind_from_deg go together")
        return None
    return LogRecord(n, Event.CONDITIONS, at_s=at, seeing_arcsec=values["seeing_arcsec"],
                     coherence_ms=values["coherence_ms"], wind_speed_m_s=values["wind_speed_m_s"],
                     wind_from_deg=values["wind_from_deg"])  # fmt: skip
