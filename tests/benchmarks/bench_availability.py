"""Benchmark: semester availability, the fast path against the old per-night path.

1000 invented targets x 180 nights at 5-minute samples, one configuration of the demo
array (goal: at most 5 s wall on 2 cores).  Measured in the same run:

- new: :func:`scheduler.semester.availability.semester_availability` (Sun and Moon by
  the ERFA chain, verdicts by :func:`scheduler.geometry.limit_grid.grid_limits`);
- old: a copy of the path it replaces: Sun and Moon by astropy's ``get_body`` and
  transform to CIRS, then ``evaluate_grid(night_problem(...))`` night by night;
- the new path fed the old path's Sun and Moon tracks, which must give the same hours
  (same verdicts), and the largest difference the new tracks make (twilight edges
  move by under a second, so a sample at a window's edge may change side).

Run: ``python tests/benchmarks/bench_availability.py``
"""

from __future__ import annotations

import datetime as dt
import time
from pathlib import Path

import astropy.units as u
import numpy as np
import pandas as pd
from astropy.coordinates import CIRS, get_body

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.astro.ephemeris import location, node_times, to_time
from scheduler.astro.night import (
    MOON_NODE_S,
    SUN_NODE_S,
    NoDarkTime,
    _wrap_lon,
    body_tracks,
    find_night,
    local_noon_s,
)
from scheduler.astro.problem import night_problem
from scheduler.geometry.constraints import evaluate_grid
from scheduler.geometry.dark import DAY_S
from scheduler.inputs.array_file import load_array
from scheduler.inputs.catalog import parse_targets
from scheduler.model.array import ArrayModel, Site
from scheduler.model.frames import BodyTrack
from scheduler.model.targets import Targets
from scheduler.semester.availability import FAMILIES, family, semester_availability

ROOT = Path(__file__).resolve().parents[2]
N_TARGETS, N_NIGHTS, STEP_S = 1000, 180, 300.0
CONFIG = "medium"
FIRST = dt.date(2027, 4, 1)
GOAL_S = 5.0


class Calendar:
    """One configuration on the array every night of the semester."""

    def nights(self) -> list[dt.date]:
        return [FIRST + dt.timedelta(days=k) for k in range(N_NIGHTS)]

    def configuration_on(self, night: dt.date) -> str | None:
        return CONFIG


def invented(n: int) -> Targets:
    rng = np.random.default_rng(5)
    return parse_targets(pd.DataFrame({
        "name": [f"bench-{k}" for k in range(n)],
        "ra": [f"{x:.4f}" for x in rng.uniform(0, 360, n)],
        "dec": [f"{x:.4f}" for x in rng.uniform(-85, 25, n)],
        "duration_min": ["30"] * n,
    }), "bench")  # fmt: skip


def old_body_track(name: str, site: Site, t_start_s: float, t_end_s: float,
                   step_s: float) -> BodyTrack:  # fmt: skip
    """The Sun or Moon by astropy's get_body + transform to CIRS (the old path)."""
    t_nodes = node_times(t_start_s, t_end_s, step_s)
    times, loc = to_time(t_nodes), location(site)
    cirs = get_body(name, times, location=loc).transform_to(CIRS(obstime=times, location=loc))
    xyz = cirs.cartesian.xyz.to_value(u.one if cirs.cartesian.xyz.unit == u.one else u.m).T
    return BodyTrack(name, t_nodes, xyz / np.linalg.norm(xyz, axis=-1, keepdims=True))


def old_body_tracks(array: ArrayModel, first: dt.date,
                    last: dt.date) -> tuple[BodyTrack, BodyTrack]:  # fmt: skip
    site = _wrap_lon(array.site)
    a = local_noon_s(first, site) - 3600.0
    b = local_noon_s(last, site) + DAY_S + 3600.0
    return old_body_track("sun", site, a, b, SUN_NODE_S), old_body_track("moon", site, a, b,
                                                                         MOON_NODE_S)


def old_availability(array: ArrayModel, targets: Targets,
                     tracks: tuple[BodyTrack, BodyTrack]) -> np.ndarray:  # fmt: skip
    """Hours per target, night by night with evaluate_grid (the old loop)."""
    beams, cell_h = array.beams(CONFIG), STEP_S / 3600.0
    hours = np.zeros(len(targets))
    lost = np.zeros((len(FAMILIES), len(targets)))  # not compared: kept for a fair time
    for date in Calendar().nights():
        try:
            night = find_night(array, date, tracks)
        except NoDarkTime:
            continue
        t = night.grid(STEP_S)[:-1] + 0.5 * STEP_S
        t = t[t < night.end_s]
        ev = evaluate_grid(night_problem(array, beams, targets, night), t)
        fam = family(ev.code)
        hours += np.sum(fam == 0, axis=1) * cell_h
        up = ev.alt_rad > 0.0
        for f in range(1, len(FAMILIES)):
            lost[f] += np.sum((fam == f) & up, axis=1) * cell_h
    return hours


def main() -> None:
    array = load_array(ROOT / "catalogs" / "demo_array.toml")
    targets = invented(N_TARGETS)
    wanted = {(i, CONFIG) for i in range(N_TARGETS)}
    last = FIRST + dt.timedelta(days=N_NIGHTS - 1)
    t0 = time.perf_counter()
    av = semester_availability(array, targets, Calendar(), wanted, STEP_S)
    new_s = time.perf_counter() - t0
    t0 = time.perf_counter()
    new_tracks = body_tracks(array, FIRST, last)
    new_tracks_s = time.perf_counter() - t0
    t0 = time.perf_counter()
    old_tracks = old_body_tracks(array, FIRST, last)
    old_tracks_s = time.perf_counter() - t0
    old_hours = old_availability(array, targets, old_tracks)
    old_s = time.perf_counter() - t0
    same = semester_availability(array, targets, Calendar(), wanted, STEP_S, tracks=old_tracks)
    new_hours = np.array([av.hours[(i, CONFIG)] for i in range(N_TARGETS)])
    same_hours = np.array([same.hours[(i, CONFIG)] for i in range(N_TARGETS)])
    diff = np.abs(new_hours - old_hours)
    print(f"availability: {N_TARGETS} targets x {N_NIGHTS} nights at {STEP_S / 60:.0f} min, "
          f"configuration {CONFIG}, {av.dark_hours:.0f} dark hours")  # fmt: skip
    print(f"  new (ERFA Sun/Moon, limit grid)        : {new_s:7.2f} s wall "
          f"(goal <= {GOAL_S:.0f} s: {'met' if new_s <= GOAL_S else 'NOT met'})")
    print(f"  old (astropy Sun/Moon, evaluate_grid)  : {old_s:7.2f} s wall")
    print(f"  ratio                                  : {old_s / new_s:7.1f} x faster")
    print(f"  Sun and Moon tracks alone              : {new_tracks_s:7.2f} s new, "
          f"{old_tracks_s:.2f} s old")
    print(f"  new path on the old tracks, hours equal to the old path: "
          f"{np.allclose(same_hours, old_hours, rtol=0, atol=1e-9)}")
    print(f"  with the new tracks: {np.count_nonzero(diff > 1e-9)} of {N_TARGETS} targets "
          f"differ, by at most {diff.max():.3f} h of {old_hours.max():.1f} h "
          f"({len(new_tracks[1].t_nodes_s)} Moon nodes)")


if __name__ == "__main__":
    main()
