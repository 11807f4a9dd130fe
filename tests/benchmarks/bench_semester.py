"""Benchmark: semester availability and the completion Monte Carlo.

1. Availability of 1000 invented targets over 180 nights at 5-minute resolution (goal:
   at most 20 s wall on 2 cores), with the speed ratio against a per-night astropy
   AltAz loop over a subset (the same nights' altitude and delay feasibility, computed
   target by night with astropy's full transform), measured in the same run.
2. Monte Carlo: 20 realisations of the 30-night demo semester, serially and on a Dask
   LocalCluster of 2 workers (same seeds, same results).

Run: ``python tests/benchmarks/bench_semester.py``
"""

from __future__ import annotations

import time
from pathlib import Path

import numpy as np
import pandas as pd

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.astro.ephemeris import location, to_time
from scheduler.astro.night import body_tracks, find_night
from scheduler.geometry.delay import offset_span, projected_path
from scheduler.inputs.array_file import load_array
from scheduler.inputs.catalog import load_targets, parse_targets
from scheduler.inputs.semester_file import load_proposals, load_semester
from scheduler.model.semester import CalendarEntry, Semester
from scheduler.semester.availability import semester_availability
from scheduler.semester.simulate import Scenario, simulate

ROOT = Path(__file__).resolve().parents[2]
N_TARGETS, N_NIGHTS, STEP_S = 1000, 180, 300.0
SUBSET_TARGETS, SUBSET_NIGHTS = 100, 6


def invented(n: int) -> pd.DataFrame:
    rng = np.random.default_rng(5)
    return pd.DataFrame({"name": [f"bench-{k}" for k in range(n)],
                         "ra": [f"{x:.4f}" for x in rng.uniform(0, 360, n)],
                         "dec": [f"{x:.4f}" for x in rng.uniform(-85, 25, n)],
                         "duration_min": ["30"] * n})  # fmt: skip


def astropy_loop(array, targets, semester, nights):
    """Altitude and delay feasibility target by night with astropy's full transform."""
    import astropy.units as u
    from astropy.coordinates import AltAz, SkyCoord

    beams = array.beams("medium")
    tracks = body_tracks(array, nights[0], nights[-1])
    hours = np.zeros(len(targets))
    for d in nights:
        night = find_night(array, d, tracks)
        t = night.grid(STEP_S)
        frame = AltAz(obstime=to_time(t), location=location(array.site), pressure=0 * u.hPa)
        for i in range(len(targets)):
            c = SkyCoord(ra=targets.ra_rad[i] * u.rad, dec=targets.dec_rad[i] * u.rad)
            aa = c.transform_to(frame)
            alt, az = aa.alt.rad, aa.az.rad
            e, n, up = np.cos(alt) * np.sin(az), np.cos(alt) * np.cos(az), np.sin(alt)
            ok = (alt > array.limits.min_altitude_rad) & offset_span(
                beams, projected_path(beams, e, n, up)
            ).feasible()
            hours[i] += ok.sum() * STEP_S / 3600.0
    return hours


def availability() -> None:
    array = load_array(ROOT / "catalogs" / "demo_array.toml")
    targets = parse_targets(invented(N_TARGETS), "bench")
    start = load_semester(ROOT / "examples" / "demo_semester.toml", array).start
    end = start + pd.Timedelta(days=N_NIGHTS - 1).to_pytimedelta()
    sem = Semester(start, end, (CalendarEntry("medium", start, end),),
                   tuple((m, 0.7) for m in range(1, 13)), "bench")  # fmt: skip
    t0 = time.perf_counter()
    semester_availability(array, targets, sem, {(i, "medium") for i in range(N_TARGETS)}, STEP_S)
    fast = time.perf_counter() - t0
    sub = targets.subset(np.arange(SUBSET_TARGETS))
    nights = sem.nights()[:: N_NIGHTS // SUBSET_NIGHTS][:SUBSET_NIGHTS]
    t0 = time.perf_counter()
    astropy_loop(array, sub, sem, nights)
    slow = time.perf_counter() - t0
    per_fast = fast / (N_TARGETS * N_NIGHTS)
    per_slow = slow / (SUBSET_TARGETS * SUBSET_NIGHTS)
    print(f"availability: {N_TARGETS} targets x {N_NIGHTS} nights at {STEP_S / 60:.0f} min")
    print(f"  vectorised        : {fast:7.2f} s wall (goal <= 20 s)")
    print(f"  astropy loop      : {slow:7.2f} s for {SUBSET_TARGETS} targets x "
          f"{SUBSET_NIGHTS} nights")  # fmt: skip
    print(f"  ratio per target-night: {per_slow / per_fast:7.1f} x faster")


def monte_carlo() -> None:
    array = load_array(ROOT / "catalogs" / "demo_array.toml")
    targets = load_targets(ROOT / "catalogs" / "demo_targets.csv")
    sem = load_semester(ROOT / "examples" / "demo_semester_short.toml", array)
    requests = load_proposals(ROOT / "examples" / "demo_proposals.csv", targets, array)
    scn = Scenario(array, targets, sem, tuple(requests))
    t0 = time.perf_counter()
    serial = simulate(scn, 20, seed=7, workers=1)
    t_serial = time.perf_counter() - t0
    from dask.distributed import Client, LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1) as cluster, Client(cluster) as client:
        t0 = time.perf_counter()
        on_dask = simulate(scn, 20, seed=7, client=client)
        t_dask = time.perf_counter() - t0
    print(f"Monte Carlo: 20 realisations of the {len(sem.nights())}-night demo semester")
    print(f"  serial            : {t_serial:7.1f} s")
    print(f"  LocalCluster x 2  : {t_dask:7.1f} s   identical: {np.array_equal(serial, on_dask)}")


if __name__ == "__main__":
    availability()
    monte_carlo()
