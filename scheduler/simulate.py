"""Completion odds: a seeded Monte Carlo over the semester's weather.

In each realisation every night is usable with the probability of its month's usable
fraction (a night is kept or lost whole; partial nights are not modelled), and on each
usable night the greedy night queue runs over what is still requested with the
configuration on the array that night, carrying completed visits forward.  Each request
needs ``ceil(hours / visit length)`` visits of its target.  Realisation ``k`` draws
from ``numpy.random.default_rng([seed, k])``, so the same seed gives the same results
whichever machine or worker runs it: serially, on local processes, or on a Dask
cluster (``dask.distributed``).
"""

from __future__ import annotations

import math
import os
import uuid
from dataclasses import dataclass, field

import numpy as np

from scheduler.catalog import Targets
from scheduler.constraints import SkyContext
from scheduler.greedy import greedy_sequence
from scheduler.model import ArrayModel
from scheduler.night import NoDarkTime, body_tracks, find_night
from scheduler.plan_model import PlanSettings
from scheduler.planner import queue_inputs
from scheduler.semester import Request, Semester


@dataclass(frozen=True)
class Scenario:
    """Everything a realisation needs (small enough to send to a worker)."""

    array: ArrayModel
    targets: Targets
    semester: Semester
    requests: tuple[Request, ...]
    settings: PlanSettings = PlanSettings()
    #: names this scenario across processes, so that a worker computes each night once
    token: str = field(default_factory=lambda: uuid.uuid4().hex)


_NIGHTS: dict = {}  # per process: (scenario token, date, configuration) -> night data


def _night(scn: Scenario, date, cfg: str):
    key = (scn.token, date, cfg)
    if key not in _NIGHTS:
        if len(_NIGHTS) > 4096:
            _NIGHTS.clear()
        tracks = body_tracks(scn.array, date, date)
        try:
            night = find_night(scn.array, date, tracks)
        except NoDarkTime:
            _NIGHTS[key] = None
            return None
        ctx = SkyContext.prepare(scn.array, scn.array.beams(cfg), scn.targets, night)
        _, suits, cands, tr = queue_inputs(ctx, scn.settings)
        _NIGHTS[key] = (night, suits, cands, tr)
    return _NIGHTS[key]


def run_realisation(scn: Scenario, k: int, seed: int) -> np.ndarray:
    """Hours completed per request in realisation ``k``."""
    rng = np.random.default_rng([seed, k])
    t = scn.targets
    need = np.array([math.ceil(r.hours * 3600.0 / t.duration_s[r.target] - 1e-9)
                     for r in scn.requests])  # fmt: skip
    done = np.zeros(len(scn.requests))
    for date in scn.semester.nights():
        usable = rng.random() < scn.semester.usable(date)  # drawn for every night, in order
        cfg = scn.semester.configuration_on(date)
        if not usable or cfg is None:
            continue
        open_rows = [j for j, r in enumerate(scn.requests)
                     if r.configuration == cfg and need[j] > 0]  # fmt: skip
        if not open_rows:
            continue
        data = _night(scn, date, cfg)
        if data is None:
            continue
        night, suits, cands, tr = data
        wanted = {scn.requests[j].target for j in open_rows}
        pool = [c for c in cands if c.value == 0 or (c.target in wanted and c.number == 1)]
        seq = greedy_sequence(pool, t, suits, tr, scn.settings, night.start_s, night.end_s)
        for cand, _ in seq:
            if cand.value == 0:
                continue
            for j in open_rows:
                if scn.requests[j].target == cand.target and need[j] > 0:
                    need[j] -= 1
                    done[j] += t.duration_s[cand.target] / 3600.0
                    break
    return done


def simulate(
    scn: Scenario,
    realisations: int,
    seed: int,
    cluster: str | None = None,
    client=None,
    workers: int | None = None,
    progress=None,
) -> np.ndarray:
    """Hours done per (realisation, request): on a Dask cluster (``cluster`` address or
    a ``client``), else on local processes (``workers``, default the CPU count; 1 runs
    in this process)."""
    ks = list(range(realisations))
    if cluster is not None or client is not None:
        from dask.distributed import Client, as_completed

        own = client is None
        client = client or Client(cluster)
        try:
            futures = client.map(run_realisation, [scn] * len(ks), ks, [seed] * len(ks),
                                 pure=False)  # fmt: skip
            index = {f.key: k for f, k in zip(futures, ks, strict=True)}
            out = {}
            for f in as_completed(futures):
                out[index[f.key]] = f.result()
                if progress:
                    progress()
            return np.array([out[k] for k in ks])
        finally:
            if own:
                client.close()
    workers = workers or os.cpu_count() or 1
    if workers == 1 or realisations == 1:
        rows = []
        for k in ks:
            rows.append(run_realisation(scn, k, seed))
            if progress:
                progress()
        return np.array(rows)
    from concurrent.futures import ProcessPoolExecutor

    with ProcessPoolExecutor(max_workers=workers) as pool:
        futures = [pool.submit(run_realisation, scn, k, seed) for k in ks]
        rows = []
        for f in futures:
            rows.append(f.result())
            if progress:
                progress()
    return np.array(rows)


def odds(scn: Scenario, done: np.ndarray) -> list[dict]:
    """Per program: the probability that every row completes, and expected hours."""
    programs: dict[str, list[int]] = {}
    for j, r in enumerate(scn.requests):
        programs.setdefault(r.program, []).append(j)
    out = []
    asked = np.array([r.hours for r in scn.requests])
    for name, js in programs.items():
        complete = np.all(done[:, js] >= asked[js] - 1e-9, axis=1)
        out.append({"program": name, "completion_probability": round(float(complete.mean()), 4),
                    "expected_hours": round(float(done[:, js].sum(axis=1).mean()), 3),
                    "requested_hours": round(float(asked[js].sum()), 3)})  # fmt: skip
    return out
