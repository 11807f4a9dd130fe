"""Semester availability: observable hours of targets night by night, vectorised.

For every night of the semester the configuration on the array that night (from the
calendar) is evaluated on a time grid (5 minutes by default) for all targets at once
with the matrix fast path; a target's hours are its observable samples times the step.
Sun and Moon come from one astropy call for the whole semester.  Besides the hours, the
time each constraint takes away while the target is otherwise up is accumulated, to
say what limits a request.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from scheduler.astro.night import NoDarkTime, body_tracks, find_night
from scheduler.astro.problem import night_problem
from scheduler.geometry.constraints import evaluate_grid
from scheduler.model.array import ArrayModel
from scheduler.model.reasons import Limit, limit_of
from scheduler.model.semester import Semester
from scheduler.model.targets import Targets

STEP_S = 300.0


@dataclass
class Availability:
    """Hours per (target index, configuration): totals, per month, per night; time lost
    per reason family while the target was above the horizon at night."""

    hours: dict = field(default_factory=dict)  # (i, cfg) -> hours
    per_month: dict = field(default_factory=dict)  # (i, cfg) -> {month: hours}
    expected: dict = field(default_factory=dict)  # (i, cfg) -> weather-weighted hours
    lost: dict = field(default_factory=dict)  # (i, cfg) -> {family: hours}
    up_elsewhere: dict = field(default_factory=dict)  # (i, cfg) -> hours up on other nights
    per_night: dict = field(default_factory=dict)  # (i, cfg) -> {date: hours}
    dark_hours: float = 0.0
    dark_by_lst: np.ndarray = field(default_factory=lambda: np.zeros(24))


def family(code: np.ndarray) -> np.ndarray:
    """Reason families as small integers (indices into :data:`FAMILIES`): 0 ok,
    1 altitude, 2 horizon, 3 delay, 4 Moon, 5 other."""
    lim = limit_of(code)
    out = np.full(lim.shape, 5)
    out[lim == Limit.OK] = 0
    out[(lim == Limit.LOW) | (lim == Limit.HIGH)] = 1
    out[lim == Limit.HORIZON] = 2
    out[lim == Limit.DELAY] = 3
    out[lim == Limit.MOON] = 4
    return out


FAMILIES = ("ok", "altitude", "horizon mask", "delay range", "Moon", "other")


def semester_availability(array: ArrayModel, targets: Targets, semester: Semester,
                          wanted: set[tuple[int, str]], step_s: float = STEP_S,
                          progress=None) -> Availability:  # fmt: skip
    """Availability of the (target, configuration) pairs in ``wanted``."""
    configs = sorted({c for _, c in wanted})
    rows = {c: np.array(sorted({i for i, cc in wanted if cc == c})) for c in configs}
    acc: dict[str, dict[str, Any]] = {c: {"hours": np.zeros(len(r)), "expected": np.zeros(len(r)),
               "elsewhere": np.zeros(len(r)), "month": np.zeros((13, len(r))),
               "lost": np.zeros((len(FAMILIES), len(r))), "nights": []}
           for c, r in rows.items()}  # fmt: skip
    subsets = {c: targets.subset(r) for c, r in rows.items()}
    beams = {c: array.beams(c) for c in configs}
    tracks = body_tracks(array, semester.start, semester.end)
    av = Availability()
    cell_h = step_s / 3600.0
    for night_date in semester.nights():
        if progress:
            progress()
        try:
            night = find_night(array, night_date, tracks)
        except NoDarkTime:
            continue
        t = night.grid(step_s)[:-1] + 0.5 * step_s  # sample mid-cells, so hours = n * step
        t = t[t < night.end_s]
        av.dark_hours += len(t) * cell_h
        lst_h = np.floor(np.degrees(night.lst_rad(t)) / 15.0).astype(int) % 24
        av.dark_by_lst += np.bincount(lst_h, minlength=24) * cell_h
        on = semester.configuration_on(night_date)
        for c in configs:
            ev = evaluate_grid(night_problem(array, beams[c], subsets[c], night), t)
            fam = family(ev.code)
            ok_h = np.sum(fam == 0, axis=1) * cell_h
            a = acc[c]
            if c != on:
                a["elsewhere"] += ok_h
                continue
            a["hours"] += ok_h
            a["expected"] += ok_h * semester.usable(night_date)
            a["month"][night_date.month] += ok_h
            up = ev.alt_rad > 0.0
            for f in range(1, len(FAMILIES)):
                a["lost"][f] += np.sum((fam == f) & up, axis=1) * cell_h
            a["nights"].append((night_date, ok_h))
    for c, r in rows.items():
        a = acc[c]
        for k, i in enumerate(r):
            key = (int(i), c)
            av.hours[key] = float(a["hours"][k])
            av.expected[key] = float(a["expected"][k])
            av.up_elsewhere[key] = float(a["elsewhere"][k])
            av.per_month[key] = {m: float(a["month"][m, k]) for m in range(1, 13)
                                 if a["month"][m, k] > 0}  # fmt: skip
            av.lost[key] = {FAMILIES[f]: float(a["lost"][f, k]) for f in range(1, len(FAMILIES))}
            av.per_night[key] = {d: float(h[k]) for d, h in a["nights"]}
    return av
