"""The bounding model: a CP-SAT relaxation of the night whose optimum no plan can beat.

Data -> variables -> constraints -> objective -> solve -> report.  Every candidate visit
is an optional interval preceded by the shortest transition any visit can have
(acquisition plus settling), so every real plan is a solution; the rest is exact:

- intervals: each visit starts in one of its start windows, no two overlap;
- visit order: visits of one target (and copies of one calibrator) in number order, at
  least the target's separation apart;
- brackets: a present science visit that needs calibrators has a suitable calibrator
  visit ending at most the gap before it and one starting at most the gap after it
  (calibrators done before a replan may open a bracket);
- objective: the value rule, each target earning only once it has its minimum visits.

Its proven bound (``best_objective_bound``) is an upper bound of any plan's value.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from ortools.sat.python import cp_model

from scheduler.model.plan import Candidate, Start
from scheduler.queue.prepare import QueueInputs

VALUE_SCALE = 1000  # value units -> integers of the model


@dataclass
class BoundModel:
    """The model and its variables by candidate index."""

    model: cp_model.CpModel
    present: list[Any] = field(default_factory=list)
    start: list[Any] = field(default_factory=list)
    end: list[Any] = field(default_factory=list)
    t0_s: float = 0.0
    end_s: float = 0.0
    scale: float = VALUE_SCALE


def _intervals(bm: BoundModel, cands: list[Candidate], first: int, shortest: int) -> None:
    m, busy = bm.model, []
    for c in cands:
        d = int(np.ceil(c.duration_s))
        spans = [(max(first, int(np.ceil(a - bm.t0_s))), int(np.floor(b - bm.t0_s)))
                 for a, b in c.starts]  # fmt: skip
        spans = [(a, b) for a, b in spans if a <= b]
        p = m.new_bool_var(f"present_{c.id}")
        if not spans:
            m.add(p == 0)
            spans = [(first, first)]
        st = m.new_int_var_from_domain(cp_model.Domain.from_intervals(spans), f"start_{c.id}")
        bm.present.append(p)
        bm.start.append(st)
        bm.end.append(st + d)
        busy.append(m.new_optional_fixed_size_interval_var(st - shortest, d + shortest, p,
                                                           f"busy_{c.id}"))  # fmt: skip
    m.add_no_overlap(busy)
    # the same as one knapsack: a linear form the LP relaxation sees
    room = int(np.ceil(bm.end_s - bm.t0_s)) - first + shortest
    m.add(sum((int(np.ceil(c.duration_s)) + shortest) * p
              for c, p in zip(cands, bm.present, strict=True)) <= room)  # fmt: skip


def _order(bm: BoundModel, cands: list[Candidate], q: QueueInputs) -> None:
    by_target: dict[int, list[int]] = {}
    for k, c in enumerate(cands):
        by_target.setdefault(c.target, []).append(k)
    for ks in by_target.values():
        ks.sort(key=lambda k: cands[k].number)
        for a, b in zip(ks, ks[1:], strict=False):
            bm.model.add_implication(bm.present[b], bm.present[a])
            sep = int(np.ceil(q.problem.targets.min_separation_s[cands[a].target]))
            bm.model.add(bm.start[b] >= bm.end[a] + sep).only_enforce_if(bm.present[b])


def _bracket(bm: BoundModel, v: int, cands: list[Candidate], q: QueueInputs,
             fixed: tuple[tuple[Candidate, float], ...]) -> None:  # fmt: skip
    m, gap = bm.model, int(q.settings.calibrator_gap_s)
    cv = cands[v]
    before, after = [], []
    for c, cc in enumerate(cands):
        if cc.is_science or not q.suits[cv.target, cc.target]:
            continue
        b, a = m.new_bool_var(f"before_{cv.id}_{cc.id}"), m.new_bool_var(f"after_{cv.id}_{cc.id}")
        m.add_implication(b, bm.present[c])
        m.add_implication(a, bm.present[c])
        m.add(bm.start[v] >= bm.end[c]).only_enforce_if(b)
        m.add(bm.start[v] - bm.end[c] <= gap).only_enforce_if(b)
        m.add(bm.start[c] >= bm.end[v]).only_enforce_if(a)
        m.add(bm.start[c] - bm.end[v] <= gap).only_enforce_if(a)
        before.append(b)
        after.append(a)
    for fc, fst in fixed:  # a calibrator done before a replan may open the bracket
        if q.suits[cv.target, fc.target]:
            b = m.new_bool_var(f"before_{cv.id}_done_{fc.id}")
            limit = int(np.floor(fst + fc.duration_s - bm.t0_s + gap))
            m.add(bm.start[v] <= limit).only_enforce_if(b)
            before.append(b)
    if not before or not after:
        m.add(bm.present[v] == 0)
        return
    m.add_bool_or(before).only_enforce_if(bm.present[v])
    m.add_bool_or(after).only_enforce_if(bm.present[v])
    m.add(sum(before) >= bm.present[v])  # linear forms, for the relaxation
    m.add(sum(after) >= bm.present[v])


def _objective(bm: BoundModel, cands: list[Candidate], q: QueueInputs,
               done: dict[int, int]) -> None:  # fmt: skip
    """The value rule: target t earns per_visit x (visits made + done) once that count
    reaches its minimum."""
    m, rule, terms = bm.model, q.rule, []
    by_target: dict[int, list[int]] = {}
    for k, c in enumerate(cands):
        if c.is_science:
            by_target.setdefault(c.target, []).append(k)
    for t, ks in by_target.items():
        w = int(round(float(rule.per_visit[t]) * bm.scale))
        need = max(1, int(rule.min_visits[t]) - done.get(t, 0))
        if need <= 1 and done.get(t, 0) == 0:
            terms += [w * bm.present[k] for k in ks]
            continue
        full = m.new_bool_var(f"complete_{t}")
        m.add(sum(bm.present[k] for k in ks) >= need).only_enforce_if(full)
        for k in ks:
            earned = m.new_bool_var(f"earned_{cands[k].id}")
            m.add_implication(earned, full)
            m.add_implication(earned, bm.present[k])
            terms.append(w * earned)
        terms.append(w * done.get(t, 0) * full)
    m.maximize(sum(terms))


def build_bound_model(q: QueueInputs, origin: Start | None) -> BoundModel:
    """The relaxation of the night (see the module docstring)."""
    over = q.problem.overheads
    acq, shortest = int(np.ceil(over.acquisition_s)), int(np.floor(over.acquisition_s
                                                                  + over.settle_s))
    night = q.problem.night
    bm = BoundModel(cp_model.CpModel(), t0_s=night.start_s, end_s=night.end_s)
    first = acq if origin is None else max(acq, int(np.ceil(origin.t_s - bm.t0_s)) + acq)
    cands = list(q.candidates)
    _intervals(bm, cands, first, shortest)
    _order(bm, cands, q)
    fixed = origin.fixed if origin else ()
    for v, c in enumerate(cands):
        if c.is_science and q.problem.targets.needs_calibrator[c.target]:
            _bracket(bm, v, cands, q, fixed)
    _objective(bm, cands, q, dict(origin.done_count) if origin else {})
    return bm


def hint(bm: BoundModel, cands: list[Candidate], seq: list[tuple[Candidate, float]]) -> None:
    """A warm start: presence and starts of a flyable sequence (feasible here too)."""
    starts = {c.id: st for c, st in seq}
    for k, c in enumerate(cands):
        bm.model.add_hint(bm.present[k], c.id in starts)
        if c.id in starts:
            bm.model.add_hint(bm.start[k], int(np.ceil(starts[c.id] - bm.t0_s)))
