"""The inputs of the night timeline view, built from a finished plan.

Everything the view shows is prepared here: the strip's spans (visits, the transition
before each visit, idle time), the hour marks with their sidereal times, one row per
visit, the summary items and the unscheduled science targets grouped by reason.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from scheduler.model.plan import LeftOut, Plan, PlanSummary
from scheduler.model.problem import NightProblem
from scheduler.model.times import hhmm, hours_label, parse_utc
from scheduler.views.timeline_view import NightStrip, TimelineView, VisitRow


def timeline_view(ctx: NightProblem, plan: Plan, doc: dict[str, Any]) -> TimelineView:
    """The timeline of ``plan``; ``doc`` is its plan document (:func:`plan_io.plan_dict`),
    which supplies the carriage positions and the summary."""
    night, t = ctx.night, ctx.targets
    lines = tuple(ctx.beams.line_names)
    rows = _done_rows(ctx, doc, lines)
    first = len(rows) + 1
    numbers = {v.id: first + k for k, v in enumerate(plan.visits)}
    for k, (v, d) in enumerate(zip(plan.visits, doc["visits"], strict=True)):
        rows.append(VisitRow(
            number=first + k, utc_start=hhmm(v.start_s), utc_end=hhmm(v.end_s),
            lst_start=hours_label(float(night.lst_rad(v.start_s))), target=t.names[v.target],
            kind=t.kind(v.target), program=t.program[v.target],
            alt_deg=(float(d["altitude_deg"][0]), float(d["altitude_deg"][1])),
            slew_s=v.slew_s, carriage_s=v.carriage_s, acquisition_s=v.acquisition_s,
            gap_s=v.transition_s, opd_start_m=tuple(float(d["opd_start_m"][ln]) for ln in lines),
            serves=tuple(numbers[c] for c in v.calibrates if c in numbers),
            setup_s=v.setup_s, weak=len(v.weak_baselines),
        ))  # fmt: skip
    strip = NightStrip(night.start_s, night.end_s, _hour_marks(ctx), _spans(ctx, plan, doc))
    title = (
        f"Night of {night.date} - configuration {ctx.beams.configuration} - dark "
        f"{hhmm(night.start_s)} to {hhmm(night.end_s)} UTC ({night.duration_s / 3600.0:.1f} h)"
    )
    backups = tuple((hhmm(h), names) for h, names in plan.backups)
    return TimelineView(title, strip, rows, lines, _summary(plan.summary, plan),
                        _grouped(plan.unscheduled), _notes(doc), backups)  # fmt: skip


def _done_rows(ctx: NightProblem, doc: dict[str, Any], lines: tuple[str, ...]) -> list[VisitRow]:
    """A replan's done visits at their logged times, first in the table."""
    rows = []
    for k, d in enumerate(doc.get("done", [])):
        start, end = parse_utc(d["start_utc"]), parse_utc(d["end_utc"])
        rows.append(VisitRow(
            number=k + 1, utc_start=hhmm(start), utc_end=hhmm(end),
            lst_start=hours_label(float(ctx.night.lst_rad(start))), target=d["target"],
            kind=d["kind"], program=d["program"],
            alt_deg=(float(d["altitude_deg"][0]), float(d["altitude_deg"][1])),
            slew_s=float("nan"), carriage_s=float("nan"), acquisition_s=float("nan"),
            gap_s=float("nan"), opd_start_m=tuple(float(d["opd_start_m"].get(ln, float("nan")))
                                                  for ln in lines),
            serves=(), done=True,
        ))  # fmt: skip
    return rows


def _notes(doc: dict[str, Any]) -> tuple[str, ...]:
    """What a replan started from: when, what is out, the closures."""
    if "replanned_from" not in doc:
        return ()
    notes = [f"replanned at {doc['replanned_from']['now_utc'][11:16]} UTC; "
             f"{len(doc.get('done', []))} visits done before"]
    if doc.get("out"):
        notes.append("out: " + ", ".join(doc["out"]))
    if doc.get("closures"):
        notes.append("closed: " + ", ".join(f"{a[11:16]}–{b[11:16]}" for a, b in doc["closures"]))
    return tuple(notes)


def _hour_marks(ctx: NightProblem) -> tuple[tuple[float, str, str], ...]:
    """(time, UTC label, LST label) at every full UTC hour inside the night."""
    night = ctx.night
    first = np.ceil(night.start_s / 3600.0) * 3600.0
    hours = np.arange(first, night.end_s, 3600.0)
    return tuple((float(h), hhmm(h), hours_label(float(night.lst_rad(h)))) for h in hours)


def _past(doc: dict[str, Any]) -> list[tuple[float, float, str]]:
    """A replan's done visits and closures as spans (they win over the plan's)."""
    spans = [(parse_utc(d["start_utc"]), parse_utc(d["end_utc"]), "done")
             for d in doc.get("done", [])]  # fmt: skip
    spans += [(parse_utc(a), parse_utc(b), "closed") for a, b in doc.get("closures", [])]
    return spans


def _spans(ctx: NightProblem, plan: Plan,
           doc: dict[str, Any]) -> tuple[tuple[float, float, str], ...]:  # fmt: skip
    """The night cut into (start, end, kind) spans: ``science`` and ``calibrator``
    visits, the ``transition`` before each visit (the longer of slew and carriage move,
    then acquisition, right after the previous visit; for the first visit its
    acquisition) and ``idle`` time in between; for a replan also the ``done`` visits and
    the ``closed`` stretches."""
    out = _past(doc)
    cursor = ctx.night.start_s
    if "start_state" in doc:
        cursor = max(cursor, parse_utc(doc["start_state"]["utc"]))
        out.append((ctx.night.start_s, cursor, "idle"))
    for k, v in enumerate(plan.visits):
        need = max(v.slew_s, v.carriage_s) + v.acquisition_s
        if k == 0:
            t0, t1 = max(cursor, v.start_s - need), v.start_s
            if t0 > cursor:
                out.append((cursor, t0, "idle"))
        else:
            t0, t1 = cursor, min(v.start_s, cursor + need)
        out.append((t0, t1, "transition"))
        if t1 < v.start_s:
            out.append((t1, v.start_s, "idle"))
        out.append((v.start_s, v.end_s, str(v.kind)))
        cursor = v.end_s
    if cursor < ctx.night.end_s:
        out.append((cursor, ctx.night.end_s, "idle"))
    return tuple((float(a), float(b), kind) for a, b, kind in out if b > a)


def _summary(s: PlanSummary, plan: Plan) -> tuple[tuple[str, str], ...]:
    """(label, value) pairs, in reading order."""
    science = sum(1 for v in plan.visits if v.is_science)
    items = [
        ("visits", f"{len(plan.visits)} ({science} science)"),
        ("science", f"{s.science_hours:.2f} h"),
        ("value", f"{s.weighted_value:.2f}"),
        ("greedy", f"{s.greedy_value:.2f}"),
    ]
    if s.bound is not None:
        status = "proven" if s.bound_status == "proven" else "at time limit"
        items.append(("bound", f"{s.bound:.2f} ({status})"))
        if s.gap is not None:
            items.append(("gap", f"{s.gap:.1%}"))
    items.append(("idle carriage", f"{s.idle_carriage_s:.0f} s"))
    items.append(("carriage wait", f"{s.carriage_wait_s:.0f} s"))
    items.append(("solver", s.solver))
    if s.verified:
        items.append(("verified", "yes"))
    return tuple(items)


def _grouped(unscheduled: tuple[LeftOut, ...]) -> tuple[tuple[str, tuple[str, ...]], ...]:
    """(reason, targets with their own figures) in order of first appearance."""
    groups: dict[str, list[str]] = {}
    for u in unscheduled:
        groups.setdefault(u.reason, []).append(f"{u.target} ({u.detail})" if u.detail
                                               else u.target)  # fmt: skip
    return tuple((why, tuple(names)) for why, names in groups.items())
