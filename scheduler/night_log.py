"""The night log: an append-only JSON Lines file of what happened during the night.

Each record is one line, written with a single write and flushed to disk, so a crash
can at worst leave the last line cut short; reading reports and skips such a line and
keeps every record before it.  A new record after a cut line starts on a fresh line.

Records (all times ISO 8601 UTC with ``Z``; ``logged_utc`` is when it was written):

- ``{"event": "done" | "aborted", "visit": ID, "at_utc"}``
- ``{"event": "closed", "from_utc", "to_utc"}``: domes closed (weather)
- ``{"event": "out" | "back", "station": NAME}`` or ``{"event": ..., "delay_line": NAME}``
  with ``at_utc``
- ``{"event": "carriages", "at_utc", "opd_m": {LINE: metres}}``
"""

from __future__ import annotations

import json
import os
import time
from dataclasses import dataclass
from pathlib import Path

from scheduler.catalog import parse_utc
from scheduler.errors import InputError, Problem, ProblemList
from scheduler.timefmt import iso_utc

LOG_SCHEMA = "opdplan-log/1"
EVENTS = ("done", "aborted", "closed", "out", "back", "carriages")


@dataclass(frozen=True)
class LogRecord:
    line: int  # line number in the file
    event: str
    at_s: float | None = None
    visit: str | None = None
    from_s: float | None = None
    to_s: float | None = None
    station: str | None = None
    delay_line: str | None = None
    opd_m: tuple[tuple[str, float], ...] = ()


def append_record(path: str | Path, record: dict) -> None:
    """Append one record as one line, flushed and synced; never rewrites the file."""
    path = Path(path)
    body = {"schema": LOG_SCHEMA, **record, "logged_utc": iso_utc(time.time())}
    line = json.dumps(body, separators=(",", ":")) + "\n"
    with open(path, "ab") as f:
        if f.tell() > 0:
            with open(path, "rb") as r:
                r.seek(-1, os.SEEK_END)
                if r.read(1) != b"\n":  # the last write was cut short: keep it apart
                    line = "\n" + line
        f.write(line.encode("utf-8"))
        f.flush()
        os.fsync(f.fileno())


def read_log(path: str | Path) -> tuple[list[LogRecord], list[str]]:
    """Records and warnings (a cut last line); every other problem raises InputError."""
    path = Path(path)
    src = str(path)
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputError(Problem(src, "", "file not found")) from None
    lines = raw.decode("utf-8", errors="replace").split("\n")
    complete = raw.endswith(b"\n") or not raw
    p = ProblemList(src)
    records, warnings = [], []
    for n, text in enumerate(lines, 1):
        if not text.strip():
            continue
        last = n == len(lines) and not complete
        try:
            data = json.loads(text)
        except json.JSONDecodeError:
            # a record cut short by a crash: the last line, or an old one that a later
            # record was appended after (on its own line)
            cut = last or (text.lstrip().startswith("{") and not text.rstrip().endswith("}"))
            if cut:
                warnings.append(f"{src}: line {n}: cut short (a crash while writing?); skipped")
            else:
                p.add(f"line {n}", "not a JSON record")
            continue
        rec = _record(data, n, p)
        if rec is not None:
            records.append(rec)
    p.raise_if_any()
    return records, warnings


def _record(data, n: int, p: ProblemList) -> LogRecord | None:
    where = f"line {n}"
    if not isinstance(data, dict) or data.get("schema") != LOG_SCHEMA:
        got = data.get("schema") if isinstance(data, dict) else None
        p.add(where, f"schema: expected {LOG_SCHEMA!r}, got {got!r}")
        return None
    event = data.get("event")
    if event not in EVENTS:
        p.add(where, f"event {event!r} is not one of {list(EVENTS)}")
        return None

    def utc(key):
        if key not in data:
            p.add(where, f"{event}: missing {key!r}")
            return None
        try:
            return parse_utc(data[key])
        except (TypeError, ValueError):
            p.add(where, f"{key} {data[key]!r} is not an ISO 8601 UTC time")
            return None

    if event == "closed":
        a, b = utc("from_utc"), utc("to_utc")
        if a is not None and b is not None and b <= a:
            p.add(where, "closed: the closure ends before it starts")
        return LogRecord(n, event, from_s=a, to_s=b)
    at = utc("at_utc")
    if event in ("done", "aborted"):
        if not isinstance(data.get("visit"), str):
            p.add(where, f"{event}: missing 'visit'")
        return LogRecord(n, event, at_s=at, visit=data.get("visit"))
    if event in ("out", "back"):
        st, dl = data.get("station"), data.get("delay_line")
        if (st is None) == (dl is None):
            p.add(where, f"{event}: give exactly one of 'station' or 'delay_line'")
        return LogRecord(n, event, at_s=at, station=st, delay_line=dl)
    opd = data.get("opd_m")
    ok = (
        isinstance(opd, dict)
        and opd
        and all(isinstance(v, int | float) and not isinstance(v, bool) for v in opd.values())
    )
    if not ok:
        p.add(where, "carriages: 'opd_m' must map delay lines to metres")
        return None
    return LogRecord(n, event, at_s=at, opd_m=tuple((k, float(v)) for k, v in opd.items()))
