"""The greedy dispatcher: what a planner does by hand.

From the start of the night, repeatedly take the highest-priority science visit that
can start soon, with a calibrator before it (unless one observed recently suits it) and
one after it.  Transitions come from the one-minute geometry grid.  The result is a
sequence with tentative start times: the baseline for tests and benchmarks and the warm
start of the optimiser.
"""

from __future__ import annotations

import numpy as np

from scheduler.geometry_grid import GeometryGrid
from scheduler.model import Beams, Overheads
from scheduler.plan_model import Candidate, PlanSettings, Start
from scheduler.transitions import transition

MAX_WAIT_S = 1800.0  # a block must begin (its first visit) within this of the cursor
IDLE_STEP_S = 300.0


class GridTransitions:
    """Transition times read from the grid, with a small pad for the nearest-sample
    rounding (``pad_s``)."""

    def __init__(self, grid: GeometryGrid, beams: Beams, over: Overheads, pad_s: float = 0.0):
        self.g, self.beams, self.over, self.pad = grid, beams, over, pad_s

    def seconds(self, ia, ta, ib, tb):
        """Total transition (s) from target ia ending at ta to ib starting at tb."""
        g = self.g
        ca, cb = g.column(ta), g.column(tb)
        tr = transition(
            self.beams, self.over,
            g.alt_rad[ia, ca], g.az_rad[ia, ca], g.pds_m[:, ia, ca], g.k_low_m[ia, ca],
            g.k_high_m[ia, ca], g.alt_rad[ib, cb], g.az_rad[ib, cb], g.pds_m[:, ib, cb],
            g.k_low_m[ib, cb], g.k_high_m[ib, cb],
        )  # fmt: skip
        return tr.total_s + self.pad, tr.carriage_s


def start_after(tr: GridTransitions, prev, cand: Candidate, ready_s: float):
    """Earliest start of ``cand`` after ``prev`` = (target, end_s) or None, not before
    ``ready_s``.  None when it has no start window left."""
    if prev is None:
        return cand.earliest_start(ready_s)
    ia, ta = prev
    s = cand.earliest_start(max(ready_s, ta + tr.over.acquisition_s))
    for _ in range(3):
        if s is None:
            return None
        need = ta + float(tr.seconds(ia, ta, cand.target, s)[0])
        if need <= s:
            return s
        s = cand.earliest_start(need)
    return s


def greedy_sequence(
    cands: list[Candidate], targets, suits: np.ndarray, tr: GridTransitions,
    s: PlanSettings, night_start_s: float, night_end_s: float, origin: Start | None = None,
) -> list[tuple[Candidate, float]]:  # fmt: skip
    """A sequence of (candidate, start) chosen greedily by priority; with ``origin`` it
    starts from that state (a replan) instead of the start of the night."""
    science = sorted((c for c in cands if c.value > 0),
                     key=lambda c: (-targets.priority[c.target], c.number))  # fmt: skip
    copies: dict[int, list[Candidate]] = {}
    for c in cands:
        if c.value == 0:
            copies.setdefault(c.target, []).append(c)
    # per target: the next visit number still to schedule, and the end of the last one
    nxt = {}
    for c in science:
        nxt[c.target] = min(nxt.get(c.target, c.number), c.number)
    last: dict[int, float] = dict(origin.last_end) if origin else {}
    seq: list[tuple[Candidate, float]] = []
    cal_log = [(c.target, st + c.duration_s) for c, st in origin.fixed] if origin else []
    cursor, prev = night_start_s, None
    if origin is not None:
        cursor = origin.t_s
        if origin.target is not None:
            prev = (origin.target, origin.t_s)
        else:  # pointing unknown: allow half a turn of slew before the first acquisition
            cursor += np.pi / tr.over.slew_rate_rad_s + tr.over.settle_s
    while cursor < night_end_s:
        best = None
        for c in science:
            if c.number != nxt.get(c.target):
                continue
            ready = max(cursor, last.get(c.target, -np.inf) + targets.min_separation_s[c.target])
            block = _block(c, ready, prev, targets, suits, copies, cal_log, tr, s)
            if block is None or block[-1][1] > night_end_s:
                continue
            if block[0][1] - cursor > MAX_WAIT_S:  # the block must begin soon
                continue
            best = block
            break  # science is sorted by priority: the first feasible block wins
        if best is None:
            cursor += IDLE_STEP_S
            continue
        for cand, start, end in best:
            seq.append((cand, start))
            if cand.value == 0:
                copies[cand.target].remove(cand)
                cal_log.append((cand.target, end))
            else:
                nxt[cand.target] = cand.number + 1
                last[cand.target] = end
            prev = (cand.target, end)
        cursor = best[-1][2]
    return seq


def _block(c, ready, prev, targets, suits, copies, cal_log, tr, s):
    """[(candidate, start, end)] for an optional calibrator, the science visit and its
    closing calibrator; None if it cannot be done."""
    gap = s.calibrator_gap_s
    needs = bool(targets.needs_calibrator[c.target])
    direct = start_after(tr, prev, c, ready)
    if direct is None:
        return None
    if not needs:
        return [(c, direct, direct + c.duration_s)]
    cals = [j for j in np.flatnonzero(suits[c.target]) if copies.get(j)]
    block = []
    recent = any(suits[c.target, j] and direct - end <= gap for j, end in cal_log)
    if recent:
        sci = direct
    else:
        best = None
        for j in cals:
            cal = copies[j][0]
            cs = start_after(tr, prev, cal, ready)
            if cs is None:
                continue
            ss = start_after(tr, (j, cs + cal.duration_s), c, cs + cal.duration_s)
            if ss is None or ss - (cs + cal.duration_s) > gap:
                continue
            if best is None or ss < best[2]:
                best = (cal, cs, ss)
        if best is None:
            return None
        cal, cs, sci = best
        block.append((cal, cs, cs + cal.duration_s))
    end = sci + c.duration_s
    block.append((c, sci, end))
    after = None
    for j in cals:
        pool = [x for x in copies[j] if all(x is not b[0] for b in block)]
        if not pool:
            continue
        cs = start_after(tr, (c.target, end), pool[0], end)
        if cs is not None and cs - end <= gap and (after is None or cs < after[1]):
            after = (pool[0], cs, cs + pool[0].duration_s)
    if after is None:
        return None
    block.append(after)
    return block
