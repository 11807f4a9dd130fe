"""Exact times and carriage paths for a sequence, compacted, with brackets repaired.

The sequencers work with grid estimates; here every transition is recomputed with the
exact fast-path geometry at the exact instants, each visit starts as early as its
predecessor, its windows and its visit separation allow (compaction), and the common
constant K is chosen per transition by the exact minimax move.  Science visits whose
calibrator brackets no longer hold, and calibrators that serve nobody, are dropped and
the sequence is timed again.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from scheduler.geometry.constraints import Evaluation, evaluate
from scheduler.geometry.reposition import minimax_move
from scheduler.geometry.transitions import Transition, slew_time_s, transition
from scheduler.model.plan import Candidate, Start
from scheduler.model.problem import NightProblem
from scheduler.queue.prepare import QueueInputs

TIME_PAD_S = 1.0  # seconds added to each exact transition, against rounding

Sequence = list[tuple[Candidate, float]]
Timed = list[tuple[Candidate, float, Transition | None]]  # (candidate, start, transition)
Brackets = dict[str, tuple[str, str] | None]  # science visit id -> (before, after) ids


def state_at(problem: NightProblem, i: int, t: float) -> tuple[Evaluation, float, float]:
    """Geometry of target ``i`` at ``t`` and the K span with the delay margin applied."""
    ev = evaluate(problem, np.array([i]), np.array([t]))
    m = problem.margins.delay_m
    return ev, float(ev.span.low_m[0]) + m, float(ev.span.high_m[0]) - m


def exact_transition(problem: NightProblem, ia: int, ta: float, ib: int, tb: float) -> Transition:
    """From target ``ia`` at the end ``ta`` of its visit to ``ib`` starting at ``tb``."""
    ea, la, ha = state_at(problem, ia, ta)
    eb, lb, hb = state_at(problem, ib, tb)
    return transition(problem.beams, problem.overheads, ea.alt_rad[0], ea.az_rad[0],
                      ea.pds_m[:, 0], la, ha, eb.alt_rad[0], eb.az_rad[0], eb.pds_m[:, 0], lb,
                      hb, setup_s=mode_setup_s(problem, ia, ib))  # fmt: skip


def mode_setup_s(problem: NightProblem, ia: int | None, ib: int) -> float:
    """Set-up seconds of target ``ib``'s mode after target ``ia`` (unknown: charged)."""
    if ia is not None and problem.mode_index[ia] == problem.mode_index[ib]:
        return 0.0
    return problem.mode_of(ib).setup_s if len(problem.modes) > 1 else 0.0


def from_origin(problem: NightProblem, origin: Start, ib: int, tb: float) -> Transition:
    """The first transition of a restarted queue: from where the telescopes point and
    the carriages stand at ``origin.t_s`` to target ``ib`` at ``tb``.  ``dk_m`` holds
    the common constant K chosen for the first visit (the minimax move from the logged
    carriage paths).  An unknown pointing costs the worst slew, half a turn; a line
    whose carriage position is unknown (NaN) is assumed to cross its whole range."""
    over, beams = problem.overheads, problem.beams
    eb, lb, hb = state_at(problem, ib, tb)
    if origin.target is None:
        slew = np.pi / over.slew_rate_rad_s + over.settle_s
    else:
        ea, _, _ = state_at(problem, origin.target, origin.t_s)
        slew = float(slew_time_s(ea.alt_rad[0], ea.az_rad[0], eb.alt_rad[0], eb.az_rad[0], over))
    if origin.opd_m is None:
        k, carriage = 0.5 * (lb + hb), float(np.max((beams.opd_max_m - beams.opd_min_m)
                                                    / beams.rate_m_s)) + over.settle_s
    else:  # line i then adds K + g_i: choose K in the span to move least
        opd = np.asarray(origin.opd_m, float)
        known = ~np.isnan(opd)
        g = (eb.pds_m[:, 0] - beams.path_m - opd)[known]
        k, move = minimax_move(g, beams.rate_m_s[known], lb, max(lb, hb))
        blind = (beams.opd_max_m - beams.opd_min_m)[~known] / beams.rate_m_s[~known]
        carriage = max(float(move), float(np.max(blind, initial=0.0))) + over.settle_s
    return Transition(np.asarray(slew), np.asarray(carriage), np.asarray(over.acquisition_s),
                      np.asarray(float(k)), mode_setup_s(problem, origin.target, ib))  # fmt: skip


def _fit(cand: Candidate, earliest_s: float, after_s: float,
         transition_at: Callable[[float], Transition]) -> tuple[float | None, Transition | None]:
    """The first start of ``cand`` from ``earliest_s`` that leaves the whole transition
    (``transition_at(start)``, measured from ``after_s``) before it: (start, transition),
    start None if there is none."""
    start = cand.earliest_start(earliest_s)
    for attempt in range(6):
        if start is None:
            return None, None
        tr = transition_at(start)
        need = after_s + float(tr.total_s) + TIME_PAD_S
        if need <= start:
            return start, tr
        start = cand.earliest_start(need + attempt * TIME_PAD_S)
    return None, None


def time_sequence(problem: NightProblem, seq: Sequence, compact: bool = True,
                  origin: Start | None = None) -> Timed:  # fmt: skip
    """Exact start of each visit: [(candidate, start, transition or None)]; visits that
    no longer fit in their windows are left out.  With ``origin`` the queue starts from
    that state (a replan) instead of the start of the night."""
    out: Timed = []
    prev: tuple[Candidate, float] | None = None
    last_end: dict[int, float] = dict(origin.last_end) if origin else {}
    acq = problem.overheads.acquisition_s
    for cand, hint in seq:
        ready = last_end.get(cand.target, -np.inf) + problem.targets.min_separation_s[cand.target]
        lo = ready if compact else max(ready, hint)
        start: float | None
        tr: Transition | None
        if prev is None and origin is not None:
            start, tr = _fit(cand, max(lo, origin.t_s + acq), origin.t_s,
                             lambda t, b=cand.target: from_origin(problem, origin, b, t))  # type: ignore[misc]  # fmt: skip
        elif prev is None:
            start, tr = cand.earliest_start(max(lo, problem.night.start_s + acq)), None
        else:
            pc, pend = prev
            start, tr = _fit(cand, max(lo, pend + acq), pend,
                             lambda t, a=pc.target, e=pend, b=cand.target:  # type: ignore[misc]
                             exact_transition(problem, a, e, b, t))  # fmt: skip
        if start is None:
            continue
        out.append((cand, start, tr))
        prev = (cand, start + cand.duration_s)
        last_end[cand.target] = start + cand.duration_s
    return out


def brackets(timed: Timed | list[tuple[Candidate, float, None]], q: QueueInputs,
             fixed: tuple[tuple[Candidate, float], ...] = ()) -> Brackets:  # fmt: skip
    """For each science visit that needs calibrators: the (before, after) calibrator
    visit ids, nearest in time, or None if either is missing.  ``fixed`` adds
    calibrator visits already done, as (candidate, start)."""
    out: Brackets = {}
    gap_s, suits = q.settings.calibrator_gap_s, q.suits
    cals = [(c, st) for c, st, _ in timed if not c.is_science] + list(fixed)
    for c, st, _ in timed:
        if not c.is_science or not q.problem.targets.needs_calibrator[c.target]:
            continue
        end = st + c.duration_s
        before = [(st - (cs + k.duration_s), k.id) for k, cs in cals
                  if suits[c.target, k.target] and 0 <= st - (cs + k.duration_s) <= gap_s]
        after = [(cs - end, k.id) for k, cs in cals
                 if suits[c.target, k.target] and 0 <= cs - end <= gap_s]  # fmt: skip
        out[c.id] = (min(before)[1], min(after)[1]) if before and after else None
    return out


def settle_sequence(q: QueueInputs, seq: Sequence, compact: bool = True,
                    origin: Start | None = None) -> tuple[Timed, Brackets]:  # fmt: skip
    """Time exactly, then drop broken brackets and idle calibrators until stable.

    Compaction can pull a calibrator so early that it no longer brackets its science
    visit; the sequence is therefore also timed without compaction (each visit no
    earlier than its hint) and the better of the two kept."""
    best = _settle(q, seq, compact, origin)
    if compact:
        plain = _settle(q, seq, False, origin)
        if _value(q, plain[0], origin) > _value(q, best[0], origin):
            best = plain
    return best


def _value(q: QueueInputs, timed: Timed, origin: Start | None) -> float:
    done = dict(origin.done_count) if origin else None
    return q.rule.of_targets((c.target for c, _, _ in timed if c.is_science), done)


def _settle(q: QueueInputs, seq: Sequence, compact: bool,
            origin: Start | None) -> tuple[Timed, Brackets]:  # fmt: skip
    seq = list(seq)
    fixed = origin.fixed if origin else ()
    timed: Timed = []
    br: Brackets = {}
    for _ in range(len(seq) + 1):
        timed = time_sequence(q.problem, seq, compact, origin)
        br = brackets(timed, q, fixed)
        used = {cid for pair in br.values() if pair for cid in pair}
        keep = {c.id for c, _, _ in timed if c.is_science and br.get(c.id, ()) is not None}
        keep |= {c.id for c, _, _ in timed if not c.is_science and c.id in used}
        if len(keep) == len(timed):
            return timed, br
        seq = [(c, st) for c, st, _ in timed if c.id in keep]
    return timed, br
