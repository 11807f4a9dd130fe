"""Each night of the semester prepared once for every realisation (:class:`PreparedNight`).

A night's queue problem (windows, candidates, calibrator suitability, grid transitions)
depends on the date and the configuration on the array, not on the weather: it is built
once per night, with every target taken as bright enough, and shared by all
realisations, which then keep only the targets bright enough under their own drawn
conditions and the candidate visits outside their drawn losses
(:mod:`scheduler.semester.realise`).  Only the pool's targets that can be visited that
night are kept, and the Sun and Moon tracks are cut to the night, so a prepared night
is small to keep, to write to a file and to send to a worker.  The greedy queue runs
once over the whole night while it is prepared, so that the transitions it remembers
travel with the night and the realisations mostly read them.
"""

from __future__ import annotations

import datetime as dt
import pickle
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from scheduler.astro.night import NoDarkTime, find_night
from scheduler.astro.problem import night_problem
from scheduler.geometry.windows import observable_windows
from scheduler.model.frames import BodyTrack
from scheduler.queue.greedy import greedy_sequence
from scheduler.queue.grid import GridTransitions
from scheduler.queue.prepare import QueueInputs, prepare_queue
from scheduler.semester.pool import Scenario

Tracks = tuple[BodyTrack, BodyTrack]


@dataclass(frozen=True, eq=False)
class PreparedNight:
    """Night ``number`` of the semester (its position in ``Semester.nights()``): the
    queue over the pool targets that can be visited (``pool_index`` maps its targets to
    the pool's), and the dark interval (POSIX s)."""

    number: int
    date: dt.date
    configuration: str
    queue: QueueInputs
    pool_index: np.ndarray

    @property
    def start_s(self) -> float:
        return self.queue.problem.night.start_s

    @property
    def end_s(self) -> float:
        return self.queue.problem.night.end_s


def prepare_night(scn: Scenario, number: int, tracks: Tracks) -> PreparedNight | None:
    """Night ``number``'s queue (None: no configuration, no dark time, or nothing of the
    pool can be visited)."""
    date = scn.semester.nights()[number]
    cfg = scn.semester.configuration_on(date)
    if cfg is None:
        return None
    try:
        night = find_night(scn.array, date, tracks).trimmed()
    except NoDarkTime:
        return None
    beams = scn.array.beams(cfg)
    whole = night_problem(scn.array, beams, scn.targets, night).ignoring_brightness()
    t = scn.targets
    keep = np.array([i for i, w in enumerate(observable_windows(whole))
                     if w.start_windows(float(t.duration_s[i]))], int)  # fmt: skip
    if len(keep) == 0 or not np.any(t.is_science[keep]):
        return None
    queue = prepare_queue(whole.subset(keep), scn.settings)
    tr = queue.transitions
    small = GridTransitions(tr.g.compact(), tr.beams, tr.over, tr.pad, tr.setup)
    queue = replace(queue, transitions=small)
    greedy_sequence(queue)  # warms the remembered transitions every realisation will ask
    return PreparedNight(number, date, cfg, queue, keep)


def write_night(folder: Path, scn: Scenario, number: int, tracks: Tracks) -> Path | None:
    """Prepare night ``number`` into a file of ``folder`` (written whole, then renamed);
    its path, or None when the night has nothing to prepare."""
    night = prepare_night(scn, number, tracks)
    if night is None:
        return None
    path = folder / f"night-{number:04d}.pickle"
    part = path.with_suffix(".part")
    part.write_bytes(pickle.dumps(night, protocol=pickle.HIGHEST_PROTOCOL))
    part.replace(path)
    return path


def read_night(path: Path) -> PreparedNight:
    """A night written by :func:`write_night` (files of this run only)."""
    night = pickle.loads(path.read_bytes())
    assert isinstance(night, PreparedNight)
    return night
