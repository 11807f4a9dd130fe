"""Replanning mid-night: from a plan file, the night log and the time now.

Reads what the log says happened up to ``now``: done and aborted visits, closures,
stations and delay lines out (and back), logged carriage paths.  It builds the
:class:`~scheduler.plan_model.Start` of the rest of the night, the reduced
configuration when something is out, plans again and says what changed.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from scheduler.array_file import load_array
from scheduler.catalog import load_targets, parse_utc
from scheduler.constraints import SkyContext
from scheduler.errors import InputError, Problem, ProblemList
from scheduler.night import find_night, parse_night
from scheduler.night_log import read_log
from scheduler.plan_io import file_sha256, read_plan
from scheduler.plan_model import Candidate, Start
from scheduler.timefmt import iso_utc

KEPT_TOL_S = 60.0  # a visit that moved less than this is "kept"


@dataclass(frozen=True)
class Situation:
    """What the log says at ``now_s``."""

    now_s: float
    done: dict  # visit id -> time logged done
    closures: tuple[tuple[float, float], ...]
    out: frozenset[str]
    carriages: tuple[float, dict] | None  # (at, {line: m})
    pointing: str | None  # target of the last visit done or aborted
    warnings: tuple[str, ...]


def _inputs(doc: dict, plan_path: str, array_path, targets_path):
    """The array and catalog the plan was made from (or the ones given)."""
    got = []
    for key, given, loader in (("array", array_path, load_array),
                               ("targets", targets_path, load_targets)):  # fmt: skip
        if given is not None:
            got.append(loader(given))
            continue
        ref = doc.get("inputs", {}).get(key)
        if not ref or not Path(ref["path"]).exists():
            raise InputError(
                Problem(
                    plan_path,
                    f"inputs.{key}",
                    f"the {key} file is not known or not found; pass --{key}",
                )
            )
        if ref.get("sha256") and file_sha256(ref["path"]) != ref["sha256"]:
            raise InputError(Problem(plan_path, f"inputs.{key}",
                                     f"{ref['path']} changed since the plan was made; pass "
                                     f"--{key} to use it anyway"))  # fmt: skip
        got.append(loader(ref["path"]))
    return got


def read_situation(log_path: str, doc: dict, plan_path: str, array, now_s: float) -> Situation:
    records, warnings = read_log(log_path)
    known = {v["id"]: v for v in doc["visits"] + doc.get("done", [])}
    names = {s.name for s in array.stations} | {d.name for d in array.delay_lines}
    p = ProblemList(log_path)
    for r in records:
        if r.visit is not None and r.visit not in known:
            p.add(f"line {r.line}", f"visit {r.visit!r} is not in {plan_path}")
        for name in (r.station, r.delay_line):
            if name is not None and name not in names:
                p.add(f"line {r.line}", f"{name!r} is neither a station nor a delay line")
    p.raise_if_any()
    done, out, carriages, pointing, last_at = {}, set(), None, None, -np.inf
    for r in sorted(records, key=lambda r: (r.at_s if r.at_s is not None else r.from_s, r.line)):
        at = r.at_s if r.at_s is not None else r.from_s
        if at is None or at > now_s:
            continue
        if r.event == "done":
            done[r.visit] = r.at_s
        elif r.event == "aborted":
            done.pop(r.visit, None)
        if r.event in ("done", "aborted") and r.at_s >= last_at:
            pointing, last_at = known[r.visit]["target"], r.at_s
        elif r.event == "out":
            out.add(r.station or r.delay_line)
        elif r.event == "back":
            out.discard(r.station or r.delay_line)
        elif r.event == "carriages":
            carriages = (r.at_s, dict(r.opd_m))
    closures = tuple(sorted((r.from_s, r.to_s) for r in records if r.event == "closed"))
    return Situation(now_s, done, closures, frozenset(out), carriages, pointing, tuple(warnings))


def prepare(plan_path: str, log_path: str, now_text: str, array_path=None, targets_path=None):
    """(array, context, origin, previous document, situation) for a replan."""
    doc = read_plan(plan_path)
    array, targets = _inputs(doc, plan_path, array_path, targets_path)
    try:
        now_s = parse_utc(now_text)
    except ValueError:
        raise InputError(
            Problem("--now", "", f"{now_text!r} is not an ISO 8601 UTC time")
        ) from None
    night = find_night(array, parse_night(doc["night"]["date"], plan_path))
    if not night.start_s <= now_s <= night.end_s:
        span = f"{iso_utc(night.start_s)} to {iso_utc(night.end_s)}"
        raise InputError(Problem("--now", "", f"{now_text} is outside the night {span}"))
    sit = read_situation(log_path, doc, plan_path, array, now_s)
    beams = array.beams(doc["configuration"], sit.out)
    if len(beams) < 2:
        raise InputError(Problem(log_path, "", f"with {sorted(sit.out)} out, fewer than two "
                                 "delay lines are left: no baseline to observe with"))  # fmt: skip
    ctx = SkyContext.prepare(array, beams, targets, night)
    return array, ctx, origin_of(ctx, doc, sit), doc, sit


def origin_of(ctx: SkyContext, doc: dict, sit: Situation) -> Start:
    t = ctx.targets
    known = {v["id"]: v for v in doc["visits"] + doc.get("done", [])}
    t_from = sit.now_s
    for a, b in sit.closures:  # a closure going on now: wait for its end
        if a <= t_from < b:
            t_from = b
    fixed, last_end, last_done = [], {}, None
    for vid, at in sit.done.items():
        v = known[vid]
        i = t.index(v["target"])
        end = at if at is not None else float(v["end_s"])
        start = end - (float(v["end_s"]) - float(v["start_s"]))
        if v["kind"] == "calibrator":
            fixed.append((Candidate(vid, i, 0, end - start, 0.0, ()), start))
        else:
            last_end[i] = max(last_end.get(i, -np.inf), end)
        if last_done is None or end > last_done[0]:
            last_done = (end, v)
    opd = None
    lines = ctx.beams.line_names
    if sit.carriages and (last_done is None or sit.carriages[0] >= last_done[0]):
        opd = sit.carriages[1]
    elif last_done is not None:
        opd = last_done[1]["opd_end_m"]
    opd_m = (
        tuple(float(opd[ln]) for ln in lines) if opd and all(ln in opd for ln in lines) else None
    )
    pointing = t.index(sit.pointing) if sit.pointing in t.names else None
    previous = tuple(
        (v["id"], float(v["start_s"])) for v in doc["visits"] if v["id"] not in sit.done
    )
    return Start(t_from, pointing, opd_m, tuple(fixed), frozenset(sit.done),
                 tuple(last_end.items()), sit.closures, previous)  # fmt: skip


def plan_diff(old: list[dict], new: list[dict], done: set[str]) -> dict:
    """Kept (same visit within a minute), moved, dropped and added visits."""
    before = {v["id"]: v for v in old if v["id"] not in done}
    after = {v["id"]: v for v in new}
    kept = [i for i in after if i in before
            and abs(after[i]["start_s"] - before[i]["start_s"]) <= KEPT_TOL_S]  # fmt: skip
    moved = [{"id": i, "from_utc": before[i]["start_utc"], "to_utc": after[i]["start_utc"]}
             for i in after if i in before and i not in kept]  # fmt: skip
    dropped = [i for i in before if i not in after]
    added = [i for i in after if i not in before]
    return {"kept": kept, "moved": moved, "dropped": dropped, "added": added}


def replan_dict(ctx, array, plan, settings, origin: Start, old: dict, sit: Situation,
                plan_path: str) -> dict:  # fmt: skip
    """The replan's document: the plan schema plus ``replanned_from``, ``done`` (with
    their logged times), ``out``, ``closures``, ``start_state`` and ``diff``."""
    from scheduler.plan_io import plan_dict

    doc = plan_dict(ctx, array, plan, settings)
    known = {v["id"]: v for v in old["visits"] + old.get("done", [])}
    done = []
    for vid, at in sorted(sit.done.items(), key=lambda kv: kv[1]):
        v = dict(known[vid])
        if at is not None:
            length = v["end_s"] - v["start_s"]
            v.update(end_s=at, start_s=at - length, end_utc=iso_utc(at),
                     start_utc=iso_utc(at - length))  # fmt: skip
        done.append(v)
    doc["replanned_from"] = {"plan": str(Path(plan_path).resolve()), "now_utc": iso_utc(sit.now_s)}
    doc["done"] = done
    doc["out"] = sorted(sit.out)
    doc["closures"] = [[iso_utc(a), iso_utc(b)] for a, b in sit.closures]
    pointing = ctx.targets.names[origin.target] if origin.target is not None else None
    lines = ctx.beams.line_names
    doc["start_state"] = {
        "utc": iso_utc(origin.t_s), "pointing": pointing,
        "opd_m": dict(zip(lines, origin.opd_m, strict=True)) if origin.opd_m else None,
    }  # fmt: skip
    doc["diff"] = plan_diff(old["visits"], doc["visits"], set(sit.done))
    return doc
