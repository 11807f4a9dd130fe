"""Semester availability: observable hours of targets night by night, vectorised.

For every night of the semester each wanted configuration is judged on a time grid (5
minutes by default, samples at mid-cells so that hours = samples x step) for all its
targets at once by :func:`scheduler.geometry.limit_grid.grid_limits`, which gives the
same verdicts as :func:`scheduler.geometry.constraints.evaluate_grid` and settles most
pairs by their altitude alone.  The configuration on the array that night (from the
calendar) earns the hours; the others count them as "up elsewhere".  Sun and Moon come
from one ephemeris call for the whole semester, each target's apparent place from one
call a night for every target wanted.  The sky alone is judged: brightness at each
mode's reference conditions, no wind, no weather (the weather is the simulation's).

Besides the hours, the time each family of limits takes away while the target is
above the horizon (unrefracted altitude > 0) at night is accumulated, to say what
limits a request, and the observable hours per hour of local sidereal time (LST hour of
each observable sample) feed the pressure per configuration and sidereal time.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import Protocol

import numpy as np

from scheduler.astro.night import NoDarkTime, body_tracks, find_night
from scheduler.astro.problem import night_problem
from scheduler.geometry.limit_grid import grid_limits
from scheduler.model.array import ArrayModel, Beams
from scheduler.model.frames import BodyTrack
from scheduler.model.night import Night
from scheduler.model.problem import NightProblem
from scheduler.model.reasons import FAMILY, Limit, limit_of
from scheduler.model.targets import Targets

STEP_S = 300.0
HOURS = 24  # LST bins of one hour

#: reason families, in the order of their indices (0: observable); the names are the
#: families of :data:`scheduler.model.reasons.FAMILY`, the Sun, the wind and a target's
#: own time window counting as "other"
FAMILIES = ("ok", "altitude", "horizon mask", "delay range", "Moon", "over-resolved",
            "too faint", "other")  # fmt: skip


def _family_table() -> np.ndarray:
    """The family index of each :class:`Limit` value."""
    table = np.full(max(Limit) + 1, FAMILIES.index("other"), np.int8)
    for limit, name in FAMILY.items():
        name = "ok" if limit == Limit.OK else name
        if name in FAMILIES:
            table[limit] = FAMILIES.index(name)
    return table


FAMILY_OF_LIMIT = _family_table()


class NightCalendar(Protocol):
    """What availability needs of a semester: its nights and the configuration on the
    array each night (None: none)."""

    def nights(self) -> list[dt.date]: ...

    def configuration_on(self, night: dt.date) -> str | None: ...


@dataclass
class Availability:
    """Clear-sky hours per (target index, configuration): totals, per month, per night
    and per LST hour; the hours lost per reason family while the target was above the
    horizon at night; the hours it was observable on nights another configuration was
    on the array.  Dark hours of the semester in all, per LST hour, and per (configuration
    on the array, month) and LST hour.  Hours are sums of samples x step."""

    hours: dict[tuple[int, str], float] = field(default_factory=dict)
    per_month: dict[tuple[int, str], dict[int, float]] = field(default_factory=dict)
    lost: dict[tuple[int, str], dict[str, float]] = field(default_factory=dict)
    up_elsewhere: dict[tuple[int, str], float] = field(default_factory=dict)
    per_night: dict[tuple[int, str], dict[dt.date, float]] = field(default_factory=dict)
    by_lst: dict[tuple[int, str], np.ndarray] = field(default_factory=dict)
    dark_hours: float = 0.0
    dark_by_lst: np.ndarray = field(default_factory=lambda: np.zeros(HOURS))
    dark_lst_by_month: dict[tuple[str, int], np.ndarray] = field(default_factory=dict)


def family(code: np.ndarray) -> np.ndarray:
    """Reason families of reason codes (or :class:`Limit` values) as small integers,
    indices into :data:`FAMILIES`."""
    return FAMILY_OF_LIMIT[limit_of(code)]


@dataclass(eq=False)
class _Tally:
    """Running sums (in samples) for the targets of one configuration."""

    rows: np.ndarray
    on: np.ndarray  # observable samples on nights the configuration is on
    elsewhere: np.ndarray
    month: np.ndarray  # (13, n)
    lost: np.ndarray  # (len(FAMILIES), n)
    lst: np.ndarray  # (n, 24)
    nights: list[tuple[dt.date, np.ndarray]] = field(default_factory=list)

    @classmethod
    def empty(cls, rows: np.ndarray) -> _Tally:
        n = len(rows)
        return cls(rows, np.zeros(n, int), np.zeros(n, int), np.zeros((13, n), int),
                   np.zeros((len(FAMILIES), n), int), np.zeros((n, HOURS), int))  # fmt: skip

    def add(self, limit: np.ndarray, up: np.ndarray, date: dt.date, lst_h: np.ndarray) -> None:
        """One night with the configuration on the array: verdicts ``limit`` (n, T) as
        Limit values, ``up`` (n, T), the LST hour bin of each sample ``lst_h`` (T,)."""
        fam = FAMILY_OF_LIMIT[limit]
        ok = fam == 0
        count = ok.sum(axis=1)
        self.on += count
        self.month[date.month] += count
        n = len(self.rows)
        # (family, target) counts of the samples above the horizon
        cell = fam.astype(np.intp) * n + np.arange(n)[:, None]
        self.lost += np.bincount(cell[up], minlength=len(FAMILIES) * n).reshape(-1, n)
        # samples run forward in time, so each LST bin is a run of samples (two runs
        # only in a night longer than a sidereal day: add.at adds both)
        starts = np.flatnonzero(np.diff(lst_h, prepend=-1))
        runs = np.add.reduceat(ok, starts, axis=1, dtype=int)  # (n, runs)
        np.add.at(self.lst.T, lst_h[starts], runs.T)
        self.nights.append((date, count))


def semester_availability(
    array: ArrayModel, targets: Targets, semester: NightCalendar,
    wanted: set[tuple[int, str]], step_s: float = STEP_S,
    progress: Callable[[], object] | None = None,
    tracks: tuple[BodyTrack, BodyTrack] | None = None,
) -> Availability:  # fmt: skip
    """Availability of the (target index, configuration) pairs in ``wanted`` over the
    nights of ``semester``, sampled every ``step_s`` seconds.  ``progress`` is called
    once a night; ``tracks`` (Sun, Moon) covering the semester replace the ephemeris."""
    nights = semester.nights()
    configs = sorted({c for _, c in wanted})
    rows = {c: np.array(sorted({i for i, cc in wanted if cc == c}), int) for c in configs}
    union = np.array(sorted({i for i, _ in wanted}), int)
    at = {c: np.searchsorted(union, r) for c, r in rows.items()}  # rows within the union
    everyone = targets.subset(union)
    subsets = {c: everyone.subset(i) for c, i in at.items()}
    beams = {c: array.beams(c) for c in configs}
    tally = {c: _Tally.empty(r) for c, r in rows.items()}
    if tracks is None and nights:
        tracks = body_tracks(array, nights[0], nights[-1])
    av = Availability()
    for date in nights:
        if progress is not None:
            progress()
        try:
            night = find_night(array, date, tracks)
        except NoDarkTime:
            continue
        t, lst_h = _samples(night, step_s)
        on = semester.configuration_on(date)
        _add_dark(av, on, date, lst_h, step_s)
        if not configs:
            continue
        whole = night_problem(array, beams[configs[0]], everyone, night)
        for c in configs:
            verdict = grid_limits(_for(whole, beams[c], subsets[c], at[c]), t)
            if c == on:
                tally[c].add(verdict.limit, verdict.up, date, lst_h)
            else:
                tally[c].elsewhere += verdict.ok.sum(axis=1)
    for c in configs:
        _finish(av, c, tally[c], step_s / 3600.0)
    return av


def _samples(night: Night, step_s: float) -> tuple[np.ndarray, np.ndarray]:
    """Mid-cell sample times (POSIX s) of the night's grid inside the dark interval, and
    the LST hour bin (0..23) of each."""
    t = night.grid(step_s)[:-1] + 0.5 * step_s
    t = t[t < night.end_s]
    lst_h = np.floor(np.degrees(night.lst_rad(t)) / 15.0).astype(int) % HOURS
    return t, lst_h


def _add_dark(av: Availability, on: str | None, date: dt.date, lst_h: np.ndarray,
              step_s: float) -> None:  # fmt: skip
    """Count the night's dark hours, in all, per LST hour and per configuration on the
    array and month."""
    dark = np.bincount(lst_h, minlength=HOURS) * (step_s / 3600.0)
    av.dark_hours += len(lst_h) * step_s / 3600.0
    av.dark_by_lst += dark
    if on is not None:
        key = (on, date.month)
        av.dark_lst_by_month[key] = av.dark_lst_by_month.get(key, np.zeros(HOURS)) + dark


def _for(whole: NightProblem, beams: Beams, targets: Targets, idx: np.ndarray) -> NightProblem:
    """The night problem of ``targets``, those at positions ``idx`` of ``whole``, with
    ``beams``."""
    return replace(whole, beams=beams, targets=targets,
                   ri_rad=whole.ri_rad[idx], di_rad=whole.di_rad[idx],
                   mode_index=whole.mode_index[idx], faint=whole.faint[idx])  # fmt: skip


def _finish(av: Availability, c: str, a: _Tally, cell_h: float) -> None:
    """Turn one configuration's sample counts into hours in ``av``."""
    dates = [d for d, _ in a.nights]
    counts = np.array([h for _, h in a.nights], float).reshape(len(dates), len(a.rows))
    nightly = (counts * cell_h).T.tolist()
    lost = (a.lost * cell_h).T.tolist()
    for k, i in enumerate(a.rows):
        key = (int(i), c)
        av.hours[key] = float(a.on[k] * cell_h)
        av.up_elsewhere[key] = float(a.elsewhere[k] * cell_h)
        av.per_month[key] = {m: float(a.month[m, k] * cell_h) for m in range(1, 13)
                             if a.month[m, k] > 0}  # fmt: skip
        av.lost[key] = dict(zip(FAMILIES[1:], lost[k][1:], strict=True))
        av.per_night[key] = dict(zip(dates, nightly[k], strict=True))
        av.by_lst[key] = a.lst[k] * cell_h
