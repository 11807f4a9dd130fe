"""Realisations of the semester: every night, with its drawn weather and conditions, the
greedy queue over what is still requested, completed visits carried forward.

On each prepared night (:mod:`scheduler.semester.nights`) of realisation ``k``:

- a night lost whole is skipped; a partial loss closes its stretch of the dark time
  (no visit may overlap it);
- targets too faint for their mode under the night's drawn seeing and coherence time
  are left out (science and calibrators alike);
- the greedy queue (:mod:`scheduler.queue.greedy`) runs over the requests still open
  for the configuration on the array, each target at most its catalog ``visits`` times
  a night and no more than its requests still need;
- a science visit completes ``duration`` hours of the highest-ranked open request of its
  target, and is *charged* its own time, the transition before it (the queue's
  estimate, capped by the actual gap so waiting is not charged) and an equal share of
  each calibrator visit next to it in the sequence (its time and transition split
  between the science visits on either side);
- *opportunities* count, per request, the nights its target could have had a visit
  (a start window, and a suitable calibrator visit when it needs one, on a night with
  its configuration; at most the catalog's ``visits`` a night): *clear* ignoring the
  weather and conditions, *open* outside the drawn losses, *bright* also bright enough
  (target and calibrator) under the drawn conditions.  Set against the visits a request
  needs, they tell a shortfall from the sky, the weather or the conditions apart from
  one lost to higher-ranked requests (:mod:`scheduler.semester.verdicts`).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass

import numpy as np

from scheduler.model.brightness import faint_codes_of, mode_indices
from scheduler.model.plan import Candidate
from scheduler.queue.greedy import Sequence, greedy_sequence
from scheduler.queue.restart import allowed_starts
from scheduler.semester.nights import PreparedNight
from scheduler.semester.pool import Scenario
from scheduler.semester.weather import SemesterWeather, draw_weather, realisation_rng

#: per request: hours done and charged; visit opportunities clear, open and bright
FIELDS = ("done", "charged", "clear", "open", "bright")


@dataclass(frozen=True, eq=False)
class Outcome:
    """Realisations ``ks`` (in order): ``hours[r, f, j]`` the hours of field
    ``FIELDS[f]`` of request j in realisation r; ``by_configuration[r, c]`` the (science,
    charged) hours of configuration ``configurations[c]``."""

    ks: tuple[int, ...]
    hours: np.ndarray
    configurations: tuple[str, ...]
    by_configuration: np.ndarray

    @staticmethod
    def joined(parts: list[Outcome]) -> Outcome:
        parts = sorted(parts, key=lambda p: p.ks[0] if p.ks else -1)
        return Outcome(tuple(k for p in parts for k in p.ks),
                       np.concatenate([p.hours for p in parts]), parts[0].configurations,
                       np.concatenate([p.by_configuration for p in parts]))  # fmt: skip


def configurations(scn: Scenario) -> tuple[str, ...]:
    return tuple(sorted({e.configuration for e in scn.semester.calendar}))


@dataclass
class _Run:
    """One realisation's running state."""

    weather: SemesterWeather
    need: np.ndarray  # visits still needed per request
    hours: np.ndarray  # (len(FIELDS), R)
    by_cfg: np.ndarray  # (C, 2)


@dataclass(frozen=True, eq=False)
class Chunk:
    """Realisations ``ks`` part-way through the semester (small: sent between workers)."""

    ks: tuple[int, ...]
    runs: tuple[_Run, ...]


def start_chunk(scn: Scenario, ks: list[int], seed: int) -> Chunk:
    """Realisations ``ks`` before the first night: their weather drawn, nothing done."""
    n = len(configurations(scn))
    return Chunk(tuple(ks), tuple(
        _Run(draw_weather(scn.semester, realisation_rng(seed, k)), scn.need_visits(),
             np.zeros((len(FIELDS), len(scn.requests))), np.zeros((n, 2))) for k in ks))


def advance(scn: Scenario, chunk: Chunk, nights: Iterable[PreparedNight | None]) -> Chunk:
    """``chunk`` played over ``nights`` (in the semester's order; None: skipped), in
    lockstep so that each night is read once and its remembered transitions serve every
    realisation.  The chunk's state is updated in place and returned."""
    cfgs = configurations(scn)
    modes = mode_indices(scn.targets, scn.array)
    for night in nights:
        if night is None:
            continue
        c = cfgs.index(night.configuration)
        for run in chunk.runs:
            _tonight(scn, night, run, modes, c)
    return chunk


def outcome(scn: Scenario, chunk: Chunk) -> Outcome:
    cfgs, n = configurations(scn), len(chunk.ks)
    return Outcome(chunk.ks, np.array([r.hours for r in chunk.runs]).reshape(n, len(FIELDS), -1),
                   cfgs, np.array([r.by_cfg for r in chunk.runs]).reshape(n, len(cfgs), 2))


def run_realisations(scn: Scenario, ks: list[int], seed: int,
                     nights: Iterable[PreparedNight | None]) -> Outcome:  # fmt: skip
    """Realisations ``ks`` over all ``nights`` (see :func:`advance`)."""
    return outcome(scn, advance(scn, start_chunk(scn, ks, seed), nights))


def _closures(night: PreparedNight, w: SemesterWeather) -> tuple[tuple[float, float], ...]:
    k = night.number
    if w.lost_to[k] <= w.lost_from[k]:
        return ()
    span = night.end_s - night.start_s
    return ((night.start_s + span * float(w.lost_from[k]),
             night.start_s + span * float(w.lost_to[k])),)  # fmt: skip


def _tonight(scn: Scenario, night: PreparedNight, run: _Run, modes: np.ndarray, c: int) -> None:
    w, k = run.weather, night.number
    local = {int(p): i for i, p in enumerate(night.pool_index)}
    rows = [j for j, r in enumerate(scn.requests)
            if r.configuration == night.configuration and r.target in local]  # fmt: skip
    if not rows:
        return
    closures = _closures(night, w) if w.clear[k] else ((night.start_s, night.end_s),)
    faint = faint_codes_of(scn.targets, scn.array.modes, modes, w.conditions(scn.semester, k)) != 0
    open_ = _outside(night.queue.candidates, closures)
    bright = [x for x in open_ if not faint[night.pool_index[x.target]]]
    for f, cands in ((2, night.queue.candidates), (3, open_), (4, bright)):
        _opportunities(scn, night, run, rows, local, cands, f)
    wanted: dict[int, int] = {}
    for j in rows:
        p = scn.requests[j].target
        if run.need[j] > 0:
            wanted[local[p]] = wanted.get(local[p], 0) + int(run.need[j])
    todo = [x for x in bright if not x.is_science or x.number <= wanted.get(x.target, 0)]
    if any(x.is_science for x in todo):
        _account(scn, night, run, rows, greedy_sequence(night.queue.with_candidates(todo)), c)


def _outside(cands: tuple[Candidate, ...],
             closures: tuple[tuple[float, float], ...]) -> list[Candidate]:  # fmt: skip
    """The candidates with start windows cut clear of the losses (none left: dropped)."""
    if not closures:
        return list(cands)
    out = []
    for cand in cands:
        starts = allowed_starts(cand.starts, -np.inf, closures, cand.duration_s)
        if starts:
            out.append(cand.with_starts(starts))
    return out


def _opportunities(scn: Scenario, night: PreparedNight, run: _Run, rows: list[int],
                   local: dict[int, int], cands: list[Candidate] | tuple[Candidate, ...],
                   field: int) -> None:  # fmt: skip
    """Add tonight's visit opportunities among ``cands`` to ``field`` of each request:
    its target's visits a night when it has a candidate, and a suitable calibrator has
    one too when it needs one."""
    q = night.queue
    t = q.problem.targets
    present = {x.target for x in cands}
    for j in rows:
        i = local[scn.requests[j].target]
        if i not in present:
            continue
        if t.needs_calibrator[i] and not any(int(x) in present for x in np.flatnonzero(q.suits[i])):
            continue
        run.hours[field, j] += float(t.visits[i])


def _charges(night: PreparedNight, seq: Sequence) -> list[float]:
    """Seconds charged to each visit of ``seq`` before calibrators are shared out: its
    own time and the transition before it (capped by the gap)."""
    tr, acq = night.queue.transitions, night.queue.problem.overheads.acquisition_s
    out, prev = [], None
    for cand, start in seq:
        if prev is None:
            lead = acq
        else:
            lead = min(start - prev[1], tr.seconds(prev[0], prev[1], cand.target, start)[0])
        out.append(cand.duration_s + max(lead, 0.0))
        prev = (cand.target, start + cand.duration_s)
    return out


def _shared(seq: Sequence, own: list[float]) -> list[float]:
    """Each science visit's charge with an equal share of the calibrator visits beside
    it (a calibrator is split between the nearest science visits before and after)."""
    total = [own[n] if c.is_science else 0.0 for n, (c, _) in enumerate(seq)]
    sci = [n for n, (c, _) in enumerate(seq) if c.is_science]
    for n, (c, _) in enumerate(seq):
        if c.is_science:
            continue
        before = [m for m in sci if m < n][-1:]
        after = [m for m in sci if m > n][:1]
        sides = before + after
        for m in sides:
            total[m] += own[n] / len(sides)
    return total


def _account(scn: Scenario, night: PreparedNight, run: _Run, rows: list[int], seq: Sequence,
             c: int) -> None:  # fmt: skip
    """Completed visits to the highest-ranked open requests of their targets."""
    charged = _shared(seq, _charges(night, seq))
    order = sorted(rows, key=lambda j: (-scn.requests[j].priority, j))
    for (cand, _), cost in zip(seq, charged, strict=True):
        if not cand.is_science:
            continue
        p = int(night.pool_index[cand.target])
        j = next((j for j in order if scn.requests[j].target == p and run.need[j] > 0), None)
        if j is None:
            continue
        run.need[j] -= 1
        run.hours[0, j] += cand.duration_s / 3600.0
        run.hours[1, j] += cost / 3600.0
        run.by_cfg[c] += (cand.duration_s / 3600.0, cost / 3600.0)


NightSource = Callable[[], Iterable[PreparedNight]]
