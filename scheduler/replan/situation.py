"""What the night log says at ``now``, and the restart state it gives.

Reads the records up to ``now``: done and aborted visits, closures, stations and delay
lines out (and back), logged carriage paths.  Records later than ``now`` are reported
and not used (a closure logged ahead of time is used: it constrains the future), as are
planned visits that should have ended before ``now`` with no record of being done (unless
a closure covered them).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from scheduler.model.conditions import Conditions
from scheduler.model.log import Event, LogRecord
from scheduler.model.plan import Candidate, Start
from scheduler.model.problem import NightProblem
from scheduler.model.targets import Kind
from scheduler.model.times import iso_utc


@dataclass(frozen=True)
class Situation:
    """What the log says at ``now_s``: done visits (id -> time logged done), closures,
    what is out, the last logged carriage paths (at, {line: m}), where the telescopes
    point (target of the last visit done or aborted), and warnings for the operator."""

    now_s: float
    done: dict[str, float | None]
    closures: tuple[tuple[float, float], ...]
    out: frozenset[str]
    carriages: tuple[float, dict[str, float]] | None
    pointing: str | None
    warnings: tuple[str, ...]
    conditions: Conditions = Conditions()


def read_situation(records: list[LogRecord], warnings: list[str], doc: dict[str, Any],
                   log_path: str, now_s: float) -> Situation:  # fmt: skip
    """The :class:`Situation` at ``now_s`` from the log's records (already checked
    against the plan ``doc``)."""
    known = {v["id"]: v for v in doc["visits"] + doc.get("done", [])}
    done: dict[str, float | None] = {}
    out: set[str] = set()
    carriages, pointing, last_at = None, None, -np.inf
    notes = list(warnings)
    for r in sorted(records, key=lambda r: (r.when_s or 0.0, r.line)):
        at = r.when_s
        if at is None:
            continue
        if at > now_s:
            if r.event is not Event.CLOSED:
                notes.append(f"{log_path}: line {r.line}: {r.event} at {iso_utc(at)} is later "
                             f"than --now {iso_utc(now_s)}; not used")  # fmt: skip
            continue
        if r.event is Event.DONE and r.visit:
            done[r.visit] = r.at_s
        elif r.event is Event.ABORTED and r.visit:
            done.pop(r.visit, None)
        elif r.event is Event.OUT:
            out.add(str(r.station or r.delay_line))
        elif r.event is Event.BACK:
            out.discard(str(r.station or r.delay_line))
        elif r.event is Event.CARRIAGES and r.at_s is not None:
            carriages = (r.at_s, dict(r.opd_m))
        if r.event in (Event.DONE, Event.ABORTED) and r.visit and at >= last_at:
            pointing, last_at = known[r.visit]["target"], at
    closures = tuple(sorted((float(r.from_s), float(r.to_s)) for r in records
                            if r.event is Event.CLOSED and r.from_s is not None
                            and r.to_s is not None))  # fmt: skip
    aborted = {r.visit for r in records if r.event is Event.ABORTED}
    for v in doc["visits"]:
        closed = any(a < v["end_s"] and v["start_s"] < b for a, b in closures)
        if v["end_s"] <= now_s and v["id"] not in done and v["id"] not in aborted and not closed:
            notes.append(f"{v['id']} was planned to end at {v['end_utc']}, before --now, but "
                         "the log does not say it was done; it may be planned again")  # fmt: skip
    return Situation(now_s, done, closures, frozenset(out), carriages, pointing, tuple(notes),
                     conditions_at(records, doc, now_s))  # fmt: skip


def stated_conditions(doc: dict[str, Any]) -> Conditions:
    """The conditions a plan document assumed (its ``conditions`` block)."""
    c = doc.get("conditions") or {}
    seeing, tau = c.get("seeing_arcsec"), c.get("coherence_ms")
    wind_from = c.get("wind_from_deg")
    return Conditions(
        seeing_rad=None if seeing is None else math.radians(seeing / 3600.0),
        coherence_s=None if tau is None else tau * 1e-3,
        wind_speed_m_s=float(c.get("wind_speed_m_s") or 0.0),
        wind_from_rad=None if wind_from is None else math.radians(wind_from),
    )  # fmt: skip


def conditions_at(records: list[LogRecord], doc: dict[str, Any], now_s: float) -> Conditions:
    """The previous plan's conditions, updated by every ``conditions`` record up to
    ``now_s`` in time order (a record leaves out what it does not state)."""
    c = stated_conditions(doc)
    logged = sorted((r for r in records if r.event is Event.CONDITIONS
                     and r.at_s is not None and r.at_s <= now_s), key=lambda r: r.at_s or 0.0)
    for r in logged:
        if r.seeing_arcsec is not None:
            c = replace(c, seeing_rad=math.radians(r.seeing_arcsec / 3600.0))
        if r.coherence_ms is not None:
            c = replace(c, coherence_s=r.coherence_ms * 1e-3)
        if r.wind_speed_m_s is not None and r.wind_from_deg is not None:
            c = replace(c, wind_speed_m_s=r.wind_speed_m_s,
                        wind_from_rad=math.radians(r.wind_from_deg))  # fmt: skip
    return c


def _done_visits(problem: NightProblem, known: dict[str, dict[str, Any]], sit: Situation):
    """Done calibrators (for brackets), per-target counts and last ends, and the last
    done visit as (end, its plan entry)."""
    t = problem.targets
    fixed: list[tuple[Candidate, float]] = []
    last_end: dict[int, float] = {}
    count: dict[int, int] = {}
    last_done: tuple[float, dict[str, Any]] | None = None
    for vid, at in sit.done.items():
        v = known[vid]
        i = t.index(v["target"])
        end = at if at is not None else float(v["end_s"])
        start = end - (float(v["end_s"]) - float(v["start_s"]))
        if v["kind"] == Kind.CALIBRATOR:
            fixed.append((Candidate(vid, i, Kind.CALIBRATOR, int(v["number"]), end - start, 0.0,
                                    ()), start))  # fmt: skip
        else:
            last_end[i] = max(last_end.get(i, -np.inf), end)
            count[i] = count.get(i, 0) + 1
        if last_done is None or end > last_done[0]:
            last_done = (end, v)
    return fixed, last_end, count, last_done


def origin_of(problem: NightProblem, doc: dict[str, Any], sit: Situation) -> Start:
    """The restart state: from ``now`` (or the end of a closure going on then), with the
    pointing and carriage paths last known; a line with no known path is NaN."""
    known = {v["id"]: v for v in doc["visits"] + doc.get("done", [])}
    t_from = sit.now_s
    for a, b in sit.closures:  # a closure going on now: wait for its end
        if a <= t_from < b:
            t_from = b
    fixed, last_end, count, last_done = _done_visits(problem, known, sit)
    opd: dict[str, float] | None = None
    if sit.carriages and (last_done is None or sit.carriages[0] >= last_done[0]):
        opd = sit.carriages[1]
    elif last_done is not None:
        opd = last_done[1]["opd_end_m"]
    lines = problem.beams.line_names
    opd_m = tuple(float(opd.get(ln, np.nan)) for ln in lines) if opd else None
    t = problem.targets
    pointing = t.index(sit.pointing) if sit.pointing in t.names else None
    previous = tuple((v["id"], float(v["start_s"])) for v in doc["visits"]
                     if v["id"] not in sit.done)  # fmt: skip
    return Start(t_from, pointing, opd_m, tuple(fixed), frozenset(sit.done),
                 tuple(count.items()), tuple(last_end.items()), sit.closures, previous)  # fmt: skip
