"""The ``opdplan windows --json`` document: each target's windows tonight with the event
that opens and the one that closes each, what limits it most, and the profile of its
tightest margin through the night.

*Limited by*: :func:`~scheduler.model.reasons.most_limiting`, the rule shared with the
unscheduled list and ``fit``.  *Margin*: every :data:`MARGIN_STEP_S` over the dark
hours, while the target is observable, the carriage headroom in metres of optical path
(with K centred, how far every carriage is from an end of its range) when a carriage
limit shuts it at some time tonight, else the degrees above the altitude limit; null
where it is not observable.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from scheduler.geometry.bodies import moon_illumination
from scheduler.geometry.constraints import evaluate_grid
from scheduler.geometry.windows import TargetWindows
from scheduler.model.problem import NightProblem
from scheduler.model.reasons import Limit, edge_words, limit_of, short_words, words
from scheduler.model.times import hours_label, iso_utc

MARGIN_STEP_S = 600.0


def windows_document(problem: NightProblem, windows: list[TargetWindows]) -> dict[str, Any]:
    """The document (every earlier key kept; ``program``, ``windows``, ``limited_by``
    and ``margin`` added per target)."""
    night, beams, lim = problem.night, problem.beams, problem.limits
    t = night.grid(MARGIN_STEP_S)
    ev = evaluate_grid(problem, t)
    alt_deg = np.degrees(ev.alt_rad - lim.min_altitude_rad)
    room_m = 0.5 * ev.span.width_m
    moon = float(moon_illumination(night, 0.5 * (night.start_s + night.end_s)))
    return {
        "night": {"date": night.date.isoformat(), "start_utc": iso_utc(night.start_s),
                  "end_utc": iso_utc(night.end_s),
                  "start_lst": hours_label(float(night.lst_rad(night.start_s))),
                  "end_lst": hours_label(float(night.lst_rad(night.end_s))),
                  "moon_illuminated": round(moon, 3)},
        "configuration": beams.configuration,
        "margin_step_min": MARGIN_STEP_S / 60.0,
        "targets": [
            {"name": w.name, "kind": str(problem.targets.kind(i)),
             "program": problem.targets.program[i],
             "observable": [[iso_utc(a), iso_utc(b)] for a, b in w.observable],
             "excluded": [{"start_utc": iso_utc(a), "end_utc": iso_utc(b),
                           "reason": words(c, beams, lim)} for a, b, c in w.excluded],
             "hours": round(w.hours, 4),
             "windows": _windows(problem, w),
             "limited_by": None if not w.excluded else words(w.main_reason(), beams, lim),
             "limited_by_short": None if not w.excluded else short_words(w.main_reason(),
                                                                         beams),
             "margin": _margin(w, ev.ok[i], alt_deg[i], room_m[i])}
            for i, w in enumerate(windows)
        ],
    }  # fmt: skip


def _edges(w: TargetWindows, a: float, b: float) -> tuple[int, int]:
    """Reason codes just before ``a`` and just after ``b`` (OK: the night's own end)."""
    before = next((c for s, e, c in w.excluded if abs(e - a) < 1e-6), int(Limit.OK))
    after = next((c for s, e, c in w.excluded if abs(s - b) < 1e-6), int(Limit.OK))
    return before, after


def _windows(problem: NightProblem, w: TargetWindows) -> list[dict[str, Any]]:
    night, beams, lim = problem.night, problem.beams, problem.limits
    out = []
    for a, b in w.observable:
        before, after = _edges(w, a, b)
        out.append({
            "start_utc": iso_utc(a), "end_utc": iso_utc(b),
            "start_lst": hours_label(float(night.lst_rad(a))),
            "end_lst": hours_label(float(night.lst_rad(b))), "hours": round((b - a) / 3600, 4),
            "opens": edge_words(before, beams, lim, True),
            "closes": edge_words(after, beams, lim, False),
            "opens_short": edge_words(before, beams, lim, True, short=True),
            "closes_short": edge_words(after, beams, lim, False, short=True),
        })  # fmt: skip
    return out


def _margin(w: TargetWindows, ok: np.ndarray, alt_deg: np.ndarray,
            room_m: np.ndarray) -> dict[str, Any]:  # fmt: skip
    delay = any(int(limit_of(c)) == Limit.DELAY for _, _, c in w.excluded)
    values = room_m if delay else alt_deg
    return {"unit": "m" if delay else "deg",
            "values": [round(float(v), 2) if k else None for v, k in zip(values, ok,
                                                                         strict=True)]}  # fmt: skip
