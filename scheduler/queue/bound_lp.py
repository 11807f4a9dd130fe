"""A linear-programming bound of the night's value, solved in milliseconds (GLOP).

Variables: ``y_v`` in [0, 1] for each science visit, ``z_j`` >= 0 visits of calibrator
target j (at most its copies), and for each science visit that needs calibrators and
each calibrator target j that suits it, ``b_vj`` and ``a_vj``: "a visit of j opens
(closes) v's bracket".  Constraints, each true of every real plan:

- time: every visit and every calibrator visit needs its length plus at least
  acquisition and settling, within the time left in the night; the same over stretches
  of the night for the visits whose whole windows lie inside them;
- brackets: ``y_v <= sum_j b_vj`` and ``y_v <= sum_j a_vj``; one calibrator visit cannot
  both open and close the same science visit, ``b_vj + a_vj <= z_j``; one calibrator
  visit opens (closes) at most ``k_j`` science visits, those that fit within the gap
  after (before) it, ``sum_v b_vj <= k_j z_j``.

The objective counts each visit's value, and a replan's done visits once their target
could be completed: an upper bound of the value rule.
"""

from __future__ import annotations

import numpy as np
from ortools.linear_solver import pywraplp

from scheduler.model.plan import Candidate, Start
from scheduler.queue.prepare import QueueInputs

STRETCH_S = 3600.0  # spacing of the stretch ends for the time constraints


def _calibrators(q: QueueInputs) -> dict[int, list[Candidate]]:
    cals: dict[int, list[Candidate]] = {}
    for c in q.candidates:
        if not c.is_science:
            cals.setdefault(c.target, []).append(c)
    return cals


def _per_calibrator(q: QueueInputs, sci: list[Candidate], cals: dict[int, list[Candidate]],
                    tau: float) -> dict[int, int]:  # fmt: skip
    """k_j: the most science visits one visit of calibrator j can open (or close)."""
    shortest: dict[int, float] = {}
    for c in sci:
        for j in np.flatnonzero(q.suits[c.target]):
            if int(j) in cals:
                shortest[int(j)] = min(shortest.get(int(j), np.inf), c.duration_s)
    gap = q.settings.calibrator_gap_s
    return {j: 1 + int(max(0.0, gap - tau) // (shortest.get(j, np.inf) + tau)) for j in cals}


def _brackets(lp: pywraplp.Solver, q: QueueInputs, sci: list[Candidate], y: dict[str, object],
              z: dict[int, object], k: dict[int, int]) -> None:  # fmt: skip
    inf = lp.infinity()
    opens: dict[int, list[object]] = {j: [] for j in z}
    closes: dict[int, list[object]] = {j: [] for j in z}
    for c in sci:
        if not q.problem.targets.needs_calibrator[c.target]:
            continue
        js = [int(j) for j in np.flatnonzero(q.suits[c.target]) if int(j) in z]
        cb, ca = lp.Constraint(0, inf), lp.Constraint(0, inf)
        cb.SetCoefficient(y[c.id], -1)
        ca.SetCoefficient(y[c.id], -1)
        for j in js:
            b, a = lp.NumVar(0, 1, ""), lp.NumVar(0, 1, "")
            cb.SetCoefficient(b, 1)
            ca.SetCoefficient(a, 1)
            both = lp.Constraint(-inf, 0)
            for var, coef in ((b, 1), (a, 1), (z[j], -1)):
                both.SetCoefficient(var, coef)
            opens[j].append(b)
            closes[j].append(a)
    for j in z:
        for served in (opens[j], closes[j]):
            if served:
                ct = lp.Constraint(-inf, 0)
                for var in served:
                    ct.SetCoefficient(var, 1)
                ct.SetCoefficient(z[j], -k[j])


def min_overlap(first_s: float, last_s: float, length_s: float, a: float, b: float) -> float:
    """The least a visit of ``length_s`` starting anywhere in [first_s, last_s] must
    overlap the stretch [a, b]: as early as it can, or as late as it can, whichever
    overlaps less (energetic reasoning, a standard argument of scheduling)."""
    early = max(0.0, min(first_s + length_s, b) - max(first_s, a))
    late = max(0.0, min(last_s + length_s, b) - max(last_s, a))
    return min(early, late, length_s, b - a)


def _stretches(lp: pywraplp.Solver, sci: list[Candidate], y: dict[str, object], start: float,
               end: float, tau: float) -> None:  # fmt: skip
    """Over every stretch between edges, the science visits' least overlap with it (each
    with its transition before) fits into it."""
    span = {c.id: (min(a for a, _ in c.starts) - tau, max(b for _, b in c.starts))
            for c in sci}  # fmt: skip
    edges = list(np.arange(start, end, STRETCH_S)) + [end]
    for i, a in enumerate(edges):
        for b in edges[i + 1:]:
            if a <= start and b >= end:
                continue
            terms = [(c, min_overlap(*span[c.id], c.duration_s + tau, a, b)) for c in sci]
            terms = [(c, w) for c, w in terms if w > 0.0]
            if terms:
                ct = lp.Constraint(-lp.infinity(), b - a)
                for c, w in terms:
                    ct.SetCoefficient(y[c.id], w)


def _groups(q: QueueInputs, sci: list[Candidate], cals: dict[int, list[Candidate]]
            ) -> list[tuple[list[Candidate], list[int]]]:  # fmt: skip
    """Science visits that need calibrators and the calibrator targets that suit them,
    in groups that share none (connected parts of the suits graph)."""
    needs = [c for c in sci if q.problem.targets.needs_calibrator[c.target]]
    parent = {j: j for j in cals}

    def root(j: int) -> int:
        while parent[j] != j:
            parent[j] = parent[parent[j]]
            j = parent[j]
        return j

    for c in needs:
        js = [int(j) for j in np.flatnonzero(q.suits[c.target]) if int(j) in cals]
        for j in js[1:]:
            parent[root(j)] = root(js[0])
    groups: dict[int, tuple[list[Candidate], list[int]]] = {}
    for j in cals:
        groups.setdefault(root(j), ([], []))[1].append(j)
    for c in needs:
        js = [int(j) for j in np.flatnonzero(q.suits[c.target]) if int(j) in cals]
        if js:
            groups[root(js[0])][0].append(c)
    return [g for g in groups.values() if g[0]]


def _chain_ends(lp: pywraplp.Solver, q: QueueInputs, sci: list[Candidate],
                cals: dict[int, list[Candidate]], y: dict[str, object], z: dict[int, object],
                k: dict[int, int], opened_before: bool) -> None:  # fmt: skip
    """In each group, every bracketed science visit lies between two of the group's
    calibrator visits, at most k of them between two consecutive ones (those start
    within the gap after the first): calibrator visits >= science / k + 1 (no + 1 when
    calibrators done before a replan may open the first bracket)."""
    for group, js in _groups(q, sci, cals):
        most = max(k[j] for j in js)
        used = lp.NumVar(0, 1, "")
        for c in group:
            ct = lp.Constraint(0, lp.infinity())
            ct.SetCoefficient(used, 1)
            ct.SetCoefficient(y[c.id], -1)
        ct = lp.Constraint(0, lp.infinity())  # sum z - sum y / k - used >= 0
        for j in js:
            ct.SetCoefficient(z[j], 1)
        for c in group:
            ct.SetCoefficient(y[c.id], -1.0 / most)
        ct.SetCoefficient(used, 0.0 if opened_before else -1.0)


def lp_bound(q: QueueInputs, origin: Start | None = None) -> float:
    """An upper bound of any plan's value (see the module docstring)."""
    over, night = q.problem.overheads, q.problem.night
    tau = over.acquisition_s + over.settle_s
    start = origin.t_s if origin else night.start_s
    sci = [c for c in q.candidates if c.is_science]
    cals = _calibrators(q)
    lp = pywraplp.Solver.CreateSolver("GLOP")
    y = {c.id: lp.NumVar(0, 1, c.id) for c in sci}
    z = {j: lp.NumVar(0, len(cs), f"cal_{j}") for j, cs in cals.items()}
    k = _per_calibrator(q, sci, cals, tau)
    _brackets(lp, q, sci, y, z, k)
    _chain_ends(lp, q, sci, cals, y, z, k, bool(origin and origin.fixed))
    whole = lp.Constraint(-lp.infinity(), night.end_s - start)
    for c in sci:
        whole.SetCoefficient(y[c.id], c.duration_s + tau)
    for j, cs in cals.items():
        whole.SetCoefficient(z[j], min(x.duration_s for x in cs) + tau)
    _stretches(lp, sci, y, start, night.end_s, tau)
    objective = lp.Objective()
    for c in sci:
        objective.SetCoefficient(y[c.id], c.value)
    objective.SetMaximization()
    if lp.Solve() != pywraplp.Solver.OPTIMAL:
        return float(sum(c.value for c in sci)) + _done_value(q, origin)
    return float(objective.Value()) + _done_value(q, origin)


def _done_value(q: QueueInputs, origin: Start | None) -> float:
    """Value of visits done before a replan, counted when their target may still reach
    its minimum (an upper bound of what they add)."""
    if origin is None:
        return 0.0
    left: dict[int, int] = {}
    for c in q.candidates:
        if c.is_science:
            left[c.target] = left.get(c.target, 0) + 1
    rule = q.rule
    return float(sum(n * rule.per_visit[t] for t, n in origin.done_count
                     if n + left.get(t, 0) >= rule.min_visits[t] and n < rule.min_visits[t]))
