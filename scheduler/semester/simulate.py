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

import datetime as dt
import math
import os
import signal
import uuid
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from scheduler.astro.night import NoDarkTime, body_tracks, find_night
from scheduler.astro.problem import night_problem
from scheduler.model.array import ArrayModel
from scheduler.model.errors import InputError, Problem
from scheduler.model.plan import PlanSettings
from scheduler.model.semester import Request, Semester
from scheduler.model.targets import Targets
from scheduler.queue.greedy import greedy_sequence
from scheduler.queue.prepare import QueueInputs, prepare_queue


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


_NIGHTS: dict[tuple[str, dt.date, str], QueueInputs | None] = {}  # per process


def _night(scn: Scenario, date: dt.date, cfg: str) -> QueueInputs | None:
    """The queue inputs of one night and configuration, computed once per process."""
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
        problem = night_problem(scn.array, scn.array.beams(cfg), scn.targets, night)
        _NIGHTS[key] = prepare_queue(problem, scn.settings)
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
        q = _night(scn, date, cfg) if open_rows else None
        if q is None:
            continue
        wanted = {scn.requests[j].target for j in open_rows}
        pool = [c for c in q.candidates
                if not c.is_science or (c.target in wanted and c.number == 1)]  # fmt: skip
        for cand, _ in greedy_sequence(q.with_candidates(pool)):
            if not cand.is_science:
                continue
            for j in open_rows:
                if scn.requests[j].target == cand.target and need[j] > 0:
                    need[j] -= 1
                    done[j] += t.duration_s[cand.target] / 3600.0
                    break
    return done


CONNECT_TIMEOUT_S = 8.0  # an unreachable Dask scheduler is reported within this


def connect(address: str) -> Any:
    """A Dask client of the scheduler at ``address``; InputError in one line when it
    cannot be reached within :data:`CONNECT_TIMEOUT_S`."""
    try:
        from dask.distributed import Client
    except ImportError:
        raise InputError(Problem("--cluster", "", "needs Dask: pip install '.[cluster]'")) from None
    try:
        return Client(address, timeout=CONNECT_TIMEOUT_S)
    except (OSError, TimeoutError, ValueError) as exc:
        first = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise InputError(Problem("--cluster", "", f"cannot reach the Dask scheduler at "
                                 f"{address!r} within {CONNECT_TIMEOUT_S:.0f} s: {first}")
                         ) from None  # fmt: skip


def _ignore_sigint() -> None:
    """Workers leave Ctrl-C to the parent, which cancels them and stops cleanly."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _on_dask(scn: Scenario, ks: list[int], seed: int, client: Any,
             progress: Callable[[], None] | None) -> np.ndarray:  # fmt: skip
    from dask.distributed import as_completed

    futures = client.map(run_realisation, [scn] * len(ks), ks, [seed] * len(ks), pure=False)
    index = {f.key: k for f, k in zip(futures, ks, strict=True)}
    out = {}
    try:
        for f in as_completed(futures):
            out[index[f.key]] = f.result()
            if progress:
                progress()
    except BaseException:
        client.cancel(futures)
        raise
    return np.array([out[k] for k in ks])


def _on_processes(scn: Scenario, ks: list[int], seed: int, workers: int,
                  progress: Callable[[], None] | None) -> np.ndarray:  # fmt: skip
    from concurrent.futures import ProcessPoolExecutor

    pool = ProcessPoolExecutor(max_workers=workers, initializer=_ignore_sigint)
    try:
        futures = [pool.submit(run_realisation, scn, k, seed) for k in ks]
        rows = []
        for f in futures:
            rows.append(f.result())
            if progress:
                progress()
    except BaseException:
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown()
    return np.array(rows)


def simulate(scn: Scenario, realisations: int, seed: int, client: Any = None,
             workers: int | None = None,
             progress: Callable[[], None] | None = None) -> np.ndarray:  # fmt: skip
    """Hours done per (realisation, request): on a Dask cluster when given a ``client``
    (see :func:`connect`), else on local processes (``workers``, default the CPU count;
    1 runs in this process)."""
    ks = list(range(realisations))
    if client is not None:
        return _on_dask(scn, ks, seed, client, progress)
    workers = workers or os.cpu_count() or 1
    if workers > 1 and realisations > 1:
        return _on_processes(scn, ks, seed, workers, progress)
    rows = []
    for k in ks:
        rows.append(run_realisation(scn, k, seed))
        if progress:
            progress()
    return np.array(rows)


def odds(scn: Scenario, done: np.ndarray) -> list[dict[str, Any]]:
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
