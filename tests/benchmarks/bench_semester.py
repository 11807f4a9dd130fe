"""Benchmark: the committee's simulation on the fictional six-month demo semester.

Goals (2 cores): preparing the semester's nights in at most 30 s; 100 weather
realisations in at most 120 s and 1 GB on the local cores; a Dask LocalCluster of two
worker processes at least 1.7x faster than one worker on the same work, with the same
numbers.  (Availability of 1000 targets x 180 nights: ``bench_availability.py``.)

Run: ``python tests/benchmarks/bench_semester.py [--realisations N]``
"""

from __future__ import annotations

import argparse
import resource
import time
from pathlib import Path

import numpy as np

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.astro.night import body_tracks
from scheduler.inputs.array_file import load_array
from scheduler.inputs.catalog import load_targets
from scheduler.inputs.semester_file import load_proposals, load_semester
from scheduler.semester.nights import prepare_night
from scheduler.semester.pool import Scenario, build_scenario
from scheduler.semester.realise import Outcome
from scheduler.semester.simulate import simulate

ROOT = Path(__file__).resolve().parents[2]


def demo(semester: str = "demo_semester.toml") -> Scenario:
    array = load_array(ROOT / "catalogs" / "demo_array.toml")
    targets = load_targets(ROOT / "catalogs" / "demo_targets.csv")
    sem = load_semester(ROOT / "examples" / semester, array)
    requests = load_proposals(ROOT / "examples" / "demo_proposals.csv", targets, array)
    return build_scenario(array, targets, sem, requests)


def preparation(scn: Scenario) -> float:
    """Seconds to prepare every night in this process (tracks included)."""
    t0 = time.perf_counter()
    tracks = body_tracks(scn.array, scn.semester.start, scn.semester.end)
    kept = sum(prepare_night(scn, k, tracks) is not None for k in range(len(scn.semester.nights())))
    wall = time.perf_counter() - t0
    print(f"preparation: {kept} of {len(scn.semester.nights())} nights in {wall:6.1f} s "
          f"(goal <= 30 s): {'met' if wall <= 30 else 'MISSED'}")  # fmt: skip
    return wall


def peak_mb() -> float:
    """Peak resident memory of this process and, separately, of its largest child."""
    own = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    child = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    return (own + 2 * child) / 1024.0  # this process and two workers at their peak


def local(scn: Scenario, n: int) -> Outcome:
    t0 = time.perf_counter()
    out = simulate(scn, n, seed=7, workers=2)
    wall = time.perf_counter() - t0
    mb = peak_mb()
    print(f"{n} realisations on 2 local processes: {wall:6.1f} s (goal <= 120 s: "
          f"{'met' if wall <= 120 else 'MISSED'}), memory bound {mb:5.0f} MB (goal <= 1024:"
          f" {'met' if mb <= 1024 else 'MISSED'})")  # fmt: skip
    return out


def on_cluster(scn: Scenario, n: int, workers: int) -> tuple[Outcome, float]:
    from dask.distributed import Client, LocalCluster

    with LocalCluster(n_workers=workers, threads_per_worker=1, processes=True,
                      dashboard_address=None) as cluster, Client(cluster) as client:  # fmt: skip
        t0 = time.perf_counter()
        out = simulate(scn, n, seed=7, client=client)
        return out, time.perf_counter() - t0


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--realisations", type=int, default=100)
    args = parser.parse_args()
    scn = demo()
    print(f"demo semester: {len(scn.semester.nights())} nights, {len(scn.requests)} requests, "
          f"pool of {len(scn.targets)} targets")  # fmt: skip
    preparation(scn)
    ref = local(scn, args.realisations)
    one, t1 = on_cluster(scn, args.realisations, 1)
    two, t2 = on_cluster(scn, args.realisations, 2)
    same = np.array_equal(ref.hours, one.hours) and np.array_equal(ref.hours, two.hours)
    print(f"LocalCluster, 1 worker : {t1:6.1f} s")
    print(f"LocalCluster, 2 workers: {t2:6.1f} s   speed-up {t1 / t2:4.2f}x (goal >= 1.7: "
          f"{'met' if t1 / t2 >= 1.7 else 'MISSED'})")  # fmt: skip
    print(f"identical numbers on local processes and both clusters: {same}")


if __name__ == "__main__":
    main()
