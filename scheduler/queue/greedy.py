"""The greedy dispatcher: what a planner does by hand.

From the start of the night, repeatedly take the highest-priority science visit that
can start soon, with a calibrator before it (unless one observed recently suits it) and
one after it.  Transitions come from the one-minute geometry grid.  The result is a
sequence with tentative start times: the baseline for tests and benchmarks and the warm
start of the optimiser.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from scheduler.model.plan import Candidate, Start
from scheduler.queue.grid import GridTransitions
from scheduler.queue.prepare import QueueInputs

MAX_WAIT_S = 1800.0  # a block must begin (its first visit) within this of the cursor
IDLE_STEP_S = 300.0

Sequence = list[tuple[Candidate, float]]  # (candidate, start POSIX s)
Block = list[tuple[Candidate, float, float]]  # (candidate, start, end)


def start_after(tr: GridTransitions, prev: tuple[int, float] | None, cand: Candidate,
                ready_s: float) -> float | None:  # fmt: skip
    """Earliest start of ``cand`` after ``prev`` = (target, end_s) or None, not before
    ``ready_s``.  None when it has no start window left."""
    if prev is None:
        return cand.earliest_start(ready_s)
    ia, ta = prev
    s = cand.earliest_start(max(ready_s, ta + tr.over.acquisition_s))
    for _ in range(3):
        if s is None:
            return None
        need = ta + tr.seconds(ia, ta, cand.target, s)[0]
        if need <= s:
            return s
        s = cand.earliest_start(need)
    return s


@dataclass
class _State:
    """The dispatcher's running state."""

    cursor: float
    prev: tuple[int, float] | None
    copies: dict[int, list[Candidate]]  # calibrator target -> copies left
    next_number: dict[int, int]  # science target -> next visit number to schedule
    last_end: dict[int, float]  # science target -> end of its last visit
    cal_log: list[tuple[int, float]]  # (calibrator target, end) observed so far
    seq: Sequence = field(default_factory=list)


def _initial(q: QueueInputs, science: list[Candidate], origin: Start | None) -> _State:
    copies: dict[int, list[Candidate]] = {}
    for c in q.candidates:
        if not c.is_science:
            copies.setdefault(c.target, []).append(c)
    nxt: dict[int, int] = {}
    for c in science:
        nxt[c.target] = min(nxt.get(c.target, c.number), c.number)
    state = _State(q.problem.night.start_s, None, copies, nxt, {}, [])
    if origin is not None:
        state.last_end = dict(origin.last_end)
        state.cal_log = [(c.target, st + c.duration_s) for c, st in origin.fixed]
        state.cursor = origin.t_s
        if origin.target is not None:
            state.prev = (origin.target, origin.t_s)
        else:  # pointing unknown: allow half a turn of slew before the first acquisition
            over = q.transitions.over
            state.cursor += np.pi / over.slew_rate_rad_s + over.settle_s
    return state


def greedy_sequence(q: QueueInputs, origin: Start | None = None) -> Sequence:
    """A sequence of (candidate, start) chosen greedily by priority; with ``origin`` it
    starts from that state (a replan) instead of the start of the night, and the
    time-critical targets its previous plan had come before any priority (README,
    *Replanning*)."""
    targets, end_s = q.problem.targets, q.problem.night.end_s
    rank = targets.priority * targets.value_weight
    keep = kept_critical(q, origin)
    science = sorted((c for c in q.candidates if c.is_science),
                     key=lambda c: (c.target not in keep, -rank[c.target], c.number))
    st = _initial(q, science, origin)
    lead = q.settings.calibrator_gap_s + max(
        [c.duration_s for c in q.candidates if not c.is_science], default=0.0)
    while st.cursor < end_s:
        best, soonest = None, np.inf
        for c in science:
            if c.number != st.next_number.get(c.target):
                continue
            sep = targets.min_separation_s[c.target]
            ready = max(st.cursor, st.last_end.get(c.target, -np.inf) + sep)
            first = c.earliest_start(ready)
            if first is None:
                continue
            soonest = min(soonest, first)
            block = _block(q, c, ready, st)
            if block is None or block[-1][1] > end_s or block[0][1] - st.cursor > MAX_WAIT_S:
                continue
            best = block
            break  # science is sorted by priority: the first feasible block wins
        if best is None:
            st.cursor += _idle_steps(st.cursor, soonest - lead - MAX_WAIT_S) * IDLE_STEP_S
            continue
        _take(best, st)
    return st.seq


def kept_critical(q: QueueInputs, origin: Start | None) -> set[int]:
    """Time-critical science targets a replan's previous plan had planned."""
    if origin is None or not origin.previous:
        return set()
    by_id = {c.id: c.target for c in q.candidates}
    t = q.problem.targets
    return {by_id[i] for i, _ in origin.previous
            if i in by_id and t.is_science[by_id[i]] and t.is_time_critical(by_id[i])}


def _idle_steps(cursor: float, nothing_before: float) -> float:
    """Idle steps to take when no block fits: one, or as many whole steps as stay before
    ``nothing_before`` (no block can begin within the wait allowed of an earlier cursor:
    a block opens at most a calibrator gap and a calibrator visit before its science
    visit, which starts no earlier than now).  Whole steps keep the cursor where single
    steps would have put it, so the sequence is the same, only found sooner."""
    if not np.isfinite(nothing_before):
        return np.inf
    return max(1.0, float(np.floor((nothing_before - cursor) / IDLE_STEP_S)))


def _take(block: Block, st: _State) -> None:
    for cand, start, end in block:
        st.seq.append((cand, start))
        if cand.is_science:
            st.next_number[cand.target] = cand.number + 1
            st.last_end[cand.target] = end
        else:
            st.copies[cand.target].remove(cand)
            st.cal_log.append((cand.target, end))
        st.prev = (cand.target, end)
    st.cursor = block[-1][2]


def _opening(q: QueueInputs, c: Candidate, ready: float, st: _State,
             cals: list[int]) -> tuple[Candidate, float, float] | None:  # fmt: skip
    """The calibrator visit that opens ``c``'s bracket soonest: (cal, cal start, science
    start), None when none fits within the gap."""
    tr, gap = q.transitions, q.settings.calibrator_gap_s
    best = None
    for j in cals:
        cal = st.copies[j][0]
        cs = start_after(tr, st.prev, cal, ready)
        if cs is None:
            continue
        ss = start_after(tr, (j, cs + cal.duration_s), c, cs + cal.duration_s)
        if ss is None or ss - (cs + cal.duration_s) > gap:
            continue
        if best is None or ss < best[2]:
            best = (cal, cs, ss)
    return best


def _closing(q: QueueInputs, c: Candidate, end: float, st: _State, cals: list[int],
             block: Block) -> tuple[Candidate, float, float] | None:  # fmt: skip
    tr, gap = q.transitions, q.settings.calibrator_gap_s
    after = None
    for j in cals:
        pool = [x for x in st.copies[j] if all(x is not b[0] for b in block)]
        if not pool:
            continue
        cs = start_after(tr, (c.target, end), pool[0], end)
        if cs is not None and cs - end <= gap and (after is None or cs < after[1]):
            after = (pool[0], cs, cs + pool[0].duration_s)
    return after


def _block(q: QueueInputs, c: Candidate, ready: float, st: _State) -> Block | None:
    """An optional opening calibrator, the science visit and its closing calibrator;
    None if it cannot be done."""
    direct = start_after(q.transitions, st.prev, c, ready)
    if direct is None:
        return None
    if not q.problem.targets.needs_calibrator[c.target]:
        return [(c, direct, direct + c.duration_s)]
    suits = q.suits[c.target]
    cals = [int(j) for j in np.flatnonzero(suits) if st.copies.get(int(j))]
    gap = q.settings.calibrator_gap_s
    block: Block = []
    if any(suits[j] and direct - end <= gap for j, end in st.cal_log):
        sci = direct
    else:
        opening = _opening(q, c, ready, st, cals)
        if opening is None:
            return None
        cal, cs, sci = opening
        block.append((cal, cs, cs + cal.duration_s))
    end = sci + c.duration_s
    block.append((c, sci, end))
    after = _closing(q, c, end, st, cals, block)
    if after is None:
        return None
    block.append(after)
    return block
