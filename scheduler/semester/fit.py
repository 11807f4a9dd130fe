"""Will the proposals fit?  Verdicts per request and per program, and sky pressure.

A request fits when its weather-weighted available hours are at least ``FIT_MARGIN``
times what it asks; it is tight when they cover the request but not with that margin;
otherwise it does not fit, and the reason is the constraint that took the most time
from its target while it was up at night (or that its configuration is not offered
while the target is up).  A program takes the worst verdict of its rows.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.model.semester import Request, Semester
from scheduler.model.targets import Targets
from scheduler.semester.availability import Availability

FIT_MARGIN = 1.5
ORDER = {"fits": 0, "tight": 1, "does not fit": 2}


@dataclass(frozen=True)
class RowVerdict:
    request: Request
    available_hours: float
    expected_hours: float
    verdict: str
    reason: str
    best_weeks: tuple[str, ...]


def verdict_of(requested: float, expected: float) -> str:
    if expected >= FIT_MARGIN * requested:
        return "fits"
    return "tight" if expected >= requested else "does not fit"


def judge(requests: list[Request], av: Availability) -> list[RowVerdict]:
    out = []
    for r in requests:
        key = (r.target, r.configuration)
        hours, expected = av.hours[key], av.expected[key]
        verdict = verdict_of(r.hours, expected)
        reason = "-"
        if verdict != "fits":
            lost = av.lost[key]
            if hours == 0 and av.up_elsewhere[key] > 0:
                reason = f"configuration {r.configuration} not offered while the target is up"
            elif any(v > 0 for v in lost.values()):
                reason = f"{max(lost, key=lost.get)} limits it most"
            else:
                reason = "too few nights with the configuration"
        weeks: dict[str, float] = {}
        for day, h in av.per_night[key].items():
            year, week, _ = day.isocalendar()
            weeks[f"{year}-W{week:02d}"] = weeks.get(f"{year}-W{week:02d}", 0.0) + h
        best = tuple(w for w, h in sorted(weeks.items(), key=lambda kv: -kv[1])[:2] if h > 0)
        out.append(RowVerdict(r, hours, expected, verdict, reason, best))
    return out


def by_program(rows: list[RowVerdict]) -> list[dict]:
    programs: dict[str, list[RowVerdict]] = {}
    for row in rows:
        programs.setdefault(row.request.program, []).append(row)
    out = []
    for name, items in programs.items():
        worst = max(items, key=lambda x: ORDER[x.verdict])
        out.append({
            "program": name,
            "requested_hours": round(sum(x.request.hours for x in items), 3),
            "available_hours": round(sum(x.available_hours for x in items), 3),
            "expected_hours": round(sum(x.expected_hours for x in items), 3),
            "verdict": worst.verdict,
            "reason": worst.reason if worst.verdict != "fits" else "-",
        })  # fmt: skip
    return out


def pressure(requests: list[Request], targets: Targets, av: Availability,
             semester: Semester) -> list[dict]:  # fmt: skip
    """Requested hours per hour of right ascension against the semester's dark hours
    with the local sidereal time in that hour (a target is best placed around its
    transit, when LST equals its RA), and the same weighted by the weather."""
    asked = np.zeros(24)
    for r in requests:
        asked[int(np.degrees(targets.ra_rad[r.target]) // 15.0) % 24] += r.hours
    usable = float(np.mean([f for _, f in semester.usable_fraction]))
    return [
        {"ra_hours": k, "requested_hours": round(float(asked[k]), 3),
         "dark_hours": round(float(av.dark_by_lst[k]), 3),
         "usable_dark_hours": round(float(av.dark_by_lst[k]) * usable, 3),
         "ratio": round(float(asked[k] / av.dark_by_lst[k]), 4) if av.dark_by_lst[k] else None}
        for k in range(24)
    ]  # fmt: skip
