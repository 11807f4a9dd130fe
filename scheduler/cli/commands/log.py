"""``opdplan log``: append what happened to the night log, checked against the plan.

A record naming a visit, station or delay line the plan does not know, or a carriage
path that is not finite or outside its line's range, is refused (exit status 2) and
nothing is written."""

from __future__ import annotations

import argparse
import math
import os
import stat
import time
from pathlib import Path
from typing import Any

from rich.console import Console

from scheduler.cli.commands.common import Result
from scheduler.inputs.night_log import (
    CONDITION_RANGES,
    LogTerms,
    append_record,
    check_names,
    cut_last_line,
)
from scheduler.inputs.plan_file import read_plan
from scheduler.model.errors import Gather
from scheduler.model.log import Event, LogRecord
from scheduler.model.times import iso_utc, utc_option


def _carriages(items: list[str], g: Gather) -> dict[str, float]:
    opd: dict[str, float] = {}
    for item in items:
        line, _, value = item.partition("=")
        try:
            x = float(value)
        except ValueError:
            g.add("--opd", "", f"{item!r} is not LINE=METRES")
            continue
        if not math.isfinite(x):
            g.add("--opd", "", f"{item!r}: the path must be a finite number of metres")
            continue
        opd[line] = x
    return opd


def _conditions(args: argparse.Namespace, g: Gather) -> dict[str, float]:
    """The conditions given, checked against the log's ranges."""
    out = {}
    for option, key in (("--seeing", "seeing_arcsec"), ("--coherence-ms", "coherence_ms"),
                        ("--wind-speed", "wind_speed_m_s"), ("--wind-from", "wind_from_deg")):
        v = getattr(args, key)
        if v is None:
            continue
        lo, hi = CONDITION_RANGES[key]
        if not (math.isfinite(v) and lo <= v <= hi):
            g.add(option, "", f"{v} is not in [{lo:g}, {hi:g}]")
        out[key] = v
    if not out:
        g.add("opdplan log conditions", "",
              "give --seeing, --coherence-ms or --wind-speed with --wind-from")
    if ("wind_speed_m_s" in out) != ("wind_from_deg" in out):
        g.add("--wind-speed", "", "--wind-speed and --wind-from go together")
    return out


def _record(args: argparse.Namespace, g: Gather) -> dict[str, Any]:
    at = args.at if getattr(args, "at", None) else iso_utc(time.time())
    g.take(utc_option, at, "--at")
    event = Event(args.event)
    if event in (Event.DONE, Event.ABORTED):
        return {"event": event.value, "visit": args.visit, "at_utc": at}
    if event is Event.CLOSED:
        a, b = g.take(utc_option, args.from_, "--from"), g.take(utc_option, args.to, "--to")
        if a is not None and b is not None and b <= a:
            g.add("--to", "", "the closure ends before it starts")
        return {"event": event.value, "from_utc": args.from_, "to_utc": args.to}
    if event is Event.CONDITIONS:
        return {"event": event.value, "at_utc": at, **_conditions(args, g)}
    if event in (Event.OUT, Event.BACK):
        key = "station" if args.station else "delay_line"
        return {"event": event.value, key: args.station or args.delay_line, "at_utc": at}
    return {"event": event.value, "at_utc": at, "opd_m": _carriages(args.opd, g)}


def _check_log_path(path: str, g: Gather) -> None:
    """The log must be a regular file (or not exist yet) in a writable folder."""
    p = Path(path)
    if p.exists() and not stat.S_ISREG(p.stat().st_mode):
        g.add("--log", "", f"{path} is not a regular file")
    elif not p.parent.is_dir():
        g.add("--log", "", f"the folder {p.parent} does not exist")
    elif not os.access(p if p.exists() else p.parent, os.W_OK):
        g.add("--log", "", f"{path} is not writable")


def _visit_facts(doc: dict[str, Any], record: dict[str, Any]) -> dict[str, Any]:
    """What the plan says of a done or aborted visit (target, configuration, night,
    length), kept in the record so that campaigns can read logs alone."""
    visit = next((v for v in doc.get("visits", []) + doc.get("done", [])
                  if v.get("id") == record.get("visit")), None)  # fmt: skip
    if visit is None:
        return {}
    return {"target": visit["target"], "configuration": doc["configuration"],
            "night": doc["night"]["date"], "planned_end_utc": visit["end_utc"],
            "duration_s": round(float(visit["end_s"]) - float(visit["start_s"]), 3)}


def run(args: argparse.Namespace, started_s: float, console: Console) -> Result:
    """Append one record; prints it (JSON)."""
    g = Gather()
    doc = g.take(read_plan, args.plan)
    record = _record(args, g)
    _check_log_path(args.log, g)
    if doc is not None:
        record.update(_visit_facts(doc, record))
        terms = LogTerms.of_plan(doc, args.plan)
        rec = LogRecord(0, Event(args.event), visit=record.get("visit"),
                        station=record.get("station"), delay_line=record.get("delay_line"),
                        opd_m=tuple(record.get("opd_m", {}).items()))  # fmt: skip
        for message in check_names(rec, terms):
            g.add(f"opdplan log {args.event}", "", message)
    g.raise_if_any()
    append_record(args.log, record, after_cut=cut_last_line(args.log))
    return Result(json={"logged": record, "log": args.log}, caution=False)
