"""Running the semester's realisations: serially, on local processes, or on an existing
Dask cluster, with the same results for the same seed.

Two stages.  First every night is prepared once (:mod:`scheduler.semester.nights`):
into files of a temporary folder (serially or on local processes), or held on the
Dask cluster's workers.  Then the realisations run in chunks, each chunk reading the
nights one after the other and playing every realisation of the chunk on each
(:func:`scheduler.semester.realise.run_realisations`), so a chunk holds one night at a
time and its realisations share that night's remembered transitions.  Realisation
``k`` draws from ``numpy.random.default_rng([seed, k])`` and the nights are the same
objects everywhere, so neither the executor nor the chunking changes a number.
"""

from __future__ import annotations

import math
import os
import signal
import tempfile
from collections.abc import Callable, Iterator
from concurrent.futures import Future, ProcessPoolExecutor
from pathlib import Path
from typing import Any

import numpy as np

from scheduler.astro.night import body_tracks
from scheduler.model.errors import InputError, Problem
from scheduler.semester.nights import PreparedNight, Tracks, prepare_night, read_night, write_night
from scheduler.semester.pool import Scenario
from scheduler.semester.realise import Outcome, advance, outcome, run_realisations, start_chunk

#: called with (stage, done, total): stage "nights" while preparing, then "realisations"
Progress = Callable[[str, int, int], None]
CHUNKS_PER_WORKER = 4  # enough to show progress and balance the load, few enough to share
BLOCKS_PER_WORKER = 2  # blocks of nights per Dask worker (a pipeline of chunks through them)
CONNECT_TIMEOUT_S = 8.0  # an unreachable Dask scheduler is reported within this


def chunks(realisations: int, workers: int) -> list[list[int]]:
    """Realisation numbers split into consecutive chunks."""
    size = max(1, math.ceil(realisations / (CHUNKS_PER_WORKER * max(workers, 1))))
    return [list(range(a, min(a + size, realisations))) for a in range(0, realisations, size)]


def _numbers(scn: Scenario) -> list[int]:
    nights = scn.semester.nights()
    return [k for k, d in enumerate(nights) if scn.semester.configuration_on(d) is not None]


def _tracks(scn: Scenario) -> Tracks:
    return body_tracks(scn.array, scn.semester.start, scn.semester.end)


def _files(paths: list[Path]) -> Iterator[PreparedNight]:
    for path in paths:
        yield read_night(path)


def run_from_files(scn: Scenario, ks: list[int], seed: int, paths: list[Path]) -> Outcome:
    """A chunk of realisations over nights written to ``paths`` (in the semester's order)."""
    return run_realisations(scn, ks, seed, _files(paths))


def _report(progress: Progress | None, stage: str, done: int, total: int) -> None:
    if progress is not None:
        progress(stage, done, total)


def _ignore_sigint() -> None:
    """Workers leave Ctrl-C to the parent, which cancels them and stops cleanly."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _gather(futures: list[Future], stage: str, progress: Progress | None) -> list[Any]:
    """Results in submission order, reporting each completion."""
    from concurrent.futures import as_completed

    index = {f: n for n, f in enumerate(futures)}
    out: list[Any] = [None] * len(futures)
    for done, f in enumerate(as_completed(futures), start=1):
        out[index[f]] = f.result()
        _report(progress, stage, done, len(futures))
    return out


def _local(scn: Scenario, realisations: int, seed: int, workers: int, folder: Path,
           progress: Progress | None) -> Outcome:  # fmt: skip
    """Both stages on this process (``workers`` 1) or on local processes."""
    numbers, tracks = _numbers(scn), _tracks(scn)
    parts = chunks(realisations, workers)
    if workers <= 1:
        paths = []
        for n, k in enumerate(numbers, start=1):
            paths.append(write_night(folder, scn, k, tracks))
            _report(progress, "nights", n, len(numbers))
        kept = [p for p in paths if p is not None]
        outs = []
        for n, ks in enumerate(parts, start=1):
            outs.append(run_from_files(scn, ks, seed, kept))
            _report(progress, "realisations", n, len(parts))
        return Outcome.joined(outs)
    pool = ProcessPoolExecutor(max_workers=workers, initializer=_ignore_sigint)
    try:
        made = _gather([pool.submit(write_night, folder, scn, k, tracks) for k in numbers],
                       "nights", progress)  # fmt: skip
        kept = [p for p in made if p is not None]
        outs = _gather([pool.submit(run_from_files, scn, ks, seed, kept) for ks in parts],
                       "realisations", progress)  # fmt: skip
    except BaseException:
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown()
    return Outcome.joined(outs)


def blocks(numbers: list[int], weights: list[float], workers: int) -> list[list[int]]:
    """Nights split into consecutive blocks, :data:`BLOCKS_PER_WORKER` per worker, of
    about equal total ``weights`` (the expected work of each night)."""
    count = max(1, min(len(numbers), BLOCKS_PER_WORKER * max(workers, 1)))
    cum = np.cumsum(np.asarray(weights, float))
    cuts = np.searchsorted(cum, cum[-1] * np.arange(1, count) / count, side="right") if len(
        cum) else np.array([], int)
    edges = [0, *sorted(set(int(c) for c in cuts)), len(numbers)]
    return [numbers[a:b] for a, b in zip(edges[:-1], edges[1:], strict=True) if b > a]


def _weights(scn: Scenario, numbers: list[int]) -> list[float]:
    """A night's expected work: one plus the requests for its configuration."""
    nights = scn.semester.nights()
    per: dict[str, int] = {}
    for r in scn.requests:
        per[r.configuration] = per.get(r.configuration, 0) + 1
    return [1.0 + per.get(scn.semester.configuration_on(nights[k]) or "", 0) for k in numbers]


def _on_dask(scn: Scenario, realisations: int, seed: int, client: Any,
             progress: Progress | None) -> Outcome:  # fmt: skip
    """Both stages on a Dask cluster.  Each block of nights is prepared on one worker
    and stays there; every chunk of realisations walks the blocks in order, its small
    state moving from worker to worker (a pipeline: chunks follow each other through
    the blocks), so no prepared night ever travels."""
    from dask.distributed import as_completed

    names = sorted(client.scheduler_info().get("workers", {}))
    shared = client.scatter(scn, broadcast=True)
    tracks = client.scatter(_tracks(scn), broadcast=True)
    numbers = _numbers(scn)
    parts = blocks(numbers, _weights(scn, numbers), len(names))
    home = [[names[b % len(names)]] if names else None for b in range(len(parts))]
    held = [client.map(prepare_night, [shared] * len(p), p, [tracks] * len(p), pure=False,
                       workers=home[b], allow_other_workers=False)
            for b, p in enumerate(parts)]  # fmt: skip
    prepared: list[Any] = [f for block in held for f in block]
    # everything is submitted at once: a chunk starts on a block as soon as its nights
    # are ready, while other blocks are still being prepared
    finals = [_pipeline(client, shared, ks, seed, held, home)
              for ks in chunks(realisations, max(len(names), 1))]  # fmt: skip
    final_keys = {f.key for f in finals}
    counts = {"nights": 0, "realisations": 0}
    totals = {"nights": len(prepared), "realisations": len(finals)}
    outs = []
    try:
        for f in as_completed(prepared + finals):
            stage = "realisations" if f.key in final_keys else "nights"
            if stage == "realisations":
                outs.append(f.result())
            counts[stage] += 1
            _report(progress, stage, counts[stage], totals[stage])
    except BaseException:
        client.cancel(prepared + finals)
        raise
    return Outcome.joined(outs)


def _pipeline(client: Any, scn: Any, ks: list[int], seed: int, held: list[list[Any]],
              home: list[Any]) -> Any:  # fmt: skip
    """The future of one chunk's outcome: its state passed along the blocks' workers."""
    state = client.submit(start_chunk, scn, ks, seed, pure=False)
    for block, where in zip(held, home, strict=True):
        state = client.submit(advance, scn, state, block, pure=False, workers=where,
                              allow_other_workers=False)  # fmt: skip
    return client.submit(outcome, scn, state, pure=False)


def simulate(scn: Scenario, realisations: int, seed: int, client: Any = None,
             workers: int | None = None, progress: Progress | None = None,
             folder: Path | None = None) -> Outcome:  # fmt: skip
    """Every realisation's hours (:class:`~scheduler.semester.realise.Outcome`): on a
    Dask cluster when given a ``client`` (see :func:`connect`), else on ``workers``
    local processes (default: the CPU count; 1 runs in this process).  Prepared nights
    go to a temporary folder inside ``folder`` (default: the system's), removed after."""
    if client is not None:
        return _on_dask(scn, realisations, seed, client, progress)
    workers = workers or os.cpu_count() or 1
    with tempfile.TemporaryDirectory(prefix="opdplan-nights-", dir=folder) as tmp:
        return _local(scn, realisations, seed, workers, Path(tmp), progress)


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
