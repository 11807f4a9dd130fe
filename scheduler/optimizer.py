"""The optimiser: a CP-SAT model of the night, warm-started from the greedy night.

Data -> variables -> constraints -> objective -> solve -> report:

- every candidate visit is an optional interval whose start lies in its start windows;
- a circuit over the present visits (and a depot) orders them; an arc u -> v forces
  ``start_v >= end_u + T_uv`` with ``T_uv`` a safe upper bound of the transition read from
  the geometry grid over the night (the final plan is timed exactly afterwards);
- a redundant no-overlap over the visits extended by the acquisition time tightens the
  bound;
- calibrator brackets: a present science visit that needs calibrators has one literal per
  suitable calibrator visit "before" and one "after", at least one of each true, each
  forcing the calibrator's presence and the gap limit;
- visits of one target, and copies of one calibrator, are ordered (symmetry breaking);
- objective: priority x seconds of science minus ``carriage_weight`` x carriage seconds.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np
from ortools.sat.python import cp_model

from scheduler.greedy import GridTransitions
from scheduler.plan_model import Candidate, PlanSettings
from scheduler.transitions import transition

BOUND_STEP_S = 600.0  # sampling of the night for transition upper bounds
BOUND_LAG_S = 600.0  # typical length of a transition, between end of u and start of v


@dataclass
class OptimizerResult:
    sequence: list[tuple[Candidate, float]] | None
    report: dict


def transition_bounds(tr: GridTransitions, targets_used: np.ndarray):
    """Upper bounds (s) of total and carriage transition between every pair of the
    targets used, over the night; -1 where the pair is never both observable."""
    g = tr.g
    idx = np.asarray(targets_used)
    n = len(idx)
    total = np.full((n, n), -1.0)
    carriage = np.zeros((n, n))
    times = np.arange(g.t_s[0], g.t_s[-1] - BOUND_LAG_S, BOUND_STEP_S)
    for ta in times:
        ca, cb = g.column(ta), g.column(ta + BOUND_LAG_S)
        ok = g.ok[idx, ca][:, None] & g.ok[idx, cb][None, :]
        if not ok.any():
            continue
        a = (slice(None), idx, ca)
        b = (slice(None), idx, cb)
        t = transition(
            tr.beams, tr.over,
            g.alt_rad[idx, ca][:, None], g.az_rad[idx, ca][:, None], g.pds_m[a][:, :, None],
            g.k_low_m[idx, ca][:, None], g.k_high_m[idx, ca][:, None],
            g.alt_rad[idx, cb][None, :], g.az_rad[idx, cb][None, :], g.pds_m[b][:, None, :],
            g.k_low_m[idx, cb][None, :], g.k_high_m[idx, cb][None, :],
        )  # fmt: skip
        total = np.where(ok, np.maximum(total, t.total_s), total)
        carriage = np.where(ok, np.maximum(carriage, t.carriage_s), carriage)
    return total, carriage


def optimize(ctx, cands: list[Candidate], suits, tr: GridTransitions, s: PlanSettings, hint):
    """Solve; returns the sequence (or None) and a report with status, bound, gap."""
    t_start = time.perf_counter()
    targets = ctx.targets
    t0 = ctx.night.start_s
    used = np.array(sorted({c.target for c in cands}))
    pos = {t: k for k, t in enumerate(used)}
    total, carriage = transition_bounds(tr, used)
    total = np.where(total >= 0, total + tr.pad, total)
    acq = int(tr.over.acquisition_s)
    first = acq

    m = cp_model.CpModel()
    n = len(cands)
    pres, start, end, ext = [], [], [], []
    for c in cands:
        d = int(np.ceil(c.duration_s))
        spans = [(max(first, int(np.ceil(a - t0))), int(np.floor(b - t0))) for a, b in c.starts]
        spans = [(a, b) for a, b in spans if a <= b]
        p = m.new_bool_var(f"present_{c.id}")
        if not spans:
            m.add(p == 0)
            spans = [(0, 0)]
        st = m.new_int_var_from_domain(cp_model.Domain.from_intervals(spans), f"start_{c.id}")
        pres.append(p)
        start.append(st)
        end.append(st + d)
        ext.append(m.new_optional_fixed_size_interval_var(st, d + acq, p, f"busy_{c.id}"))
    m.add_no_overlap(ext)

    arcs, arc_lits, penalty = [], {}, []
    for k in range(n):
        arcs.append((0, k + 1, m.new_bool_var(f"first_{cands[k].id}")))
        arcs.append((k + 1, 0, m.new_bool_var(f"last_{cands[k].id}")))
        arcs.append((k + 1, k + 1, ~pres[k]))
    lo_end = [min(a for a, _ in c.starts) + c.duration_s - t0 for c in cands]
    hi_start = [max(b for _, b in c.starts) - t0 for c in cands]
    for u, cu in enumerate(cands):
        for v, cv in enumerate(cands):
            if u == v:
                continue
            tt = total[pos[cu.target], pos[cv.target]]
            if tt < 0 or lo_end[u] + tt > hi_start[v]:
                continue
            lit = m.new_bool_var(f"arc_{cu.id}_{cv.id}")
            m.add(start[v] >= end[u] + int(np.ceil(tt))).only_enforce_if(lit)
            arcs.append((u + 1, v + 1, lit))
            arc_lits[(u, v)] = lit
            w = int(round(s.carriage_weight * carriage[pos[cu.target], pos[cv.target]]))
            if w:
                penalty.append(w * lit)
    m.add_circuit(arcs)

    by_target: dict[int, list[int]] = {}
    for k, c in enumerate(cands):
        by_target.setdefault(c.target, []).append(k)
    for ks in by_target.values():
        ks.sort(key=lambda k: cands[k].number)
        for a, b in zip(ks, ks[1:], strict=False):
            m.add_implication(pres[b], pres[a])
            sep = int(np.ceil(targets.min_separation_s[cands[a].target]))
            m.add(start[b] >= end[a] + sep).only_enforce_if(pres[b])

    gap = int(s.calibrator_gap_s)
    cal_ks = [k for k, c in enumerate(cands) if c.value == 0]
    for v, cv in enumerate(cands):
        if cv.value == 0 or not targets.needs_calibrator[cv.target]:
            continue
        before, after = [], []
        for c in cal_ks:
            if not suits[cv.target, cands[c].target]:
                continue
            b = m.new_bool_var(f"before_{cv.id}_{cands[c].id}")
            m.add_implication(b, pres[c])
            m.add(start[v] >= end[c]).only_enforce_if(b)
            m.add(start[v] - end[c] <= gap).only_enforce_if(b)
            before.append(b)
            a = m.new_bool_var(f"after_{cv.id}_{cands[c].id}")
            m.add_implication(a, pres[c])
            m.add(start[c] >= end[v]).only_enforce_if(a)
            m.add(start[c] - end[v] <= gap).only_enforce_if(a)
            after.append(a)
        if not before:
            m.add(pres[v] == 0)
            continue
        m.add_bool_or(before).only_enforce_if(pres[v])
        m.add_bool_or(after).only_enforce_if(pres[v])

    value = [int(round(c.value * 3600.0)) for c in cands]
    m.maximize(sum(v * p for v, p in zip(value, pres, strict=True)) - sum(penalty))

    _add_hint(m, cands, pres, start, arc_lits, hint, t0)
    solver = cp_model.CpSolver()
    prm = solver.parameters
    budget = max(0.5, s.time_limit_s - (time.perf_counter() - t_start) - 1.0)
    prm.random_seed = s.seed
    prm.cp_model_probing_level = 0
    if s.deterministic:
        prm.num_workers = 2
        prm.interleave_search = True
        prm.max_deterministic_time = budget / 4.0  # a deterministic unit is several s here
        prm.max_time_in_seconds = budget
    else:
        prm.num_workers = 2
        prm.max_time_in_seconds = budget
    status = solver.solve(m)
    report = {"status": solver.status_name(status), "solve_s": round(solver.wall_time, 3),
              "bound": None, "model_objective": None}  # fmt: skip
    if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
        return OptimizerResult(None, report)
    report["bound"] = solver.best_objective_bound / 3600.0
    report["model_objective"] = round(solver.objective_value / 3600.0, 4)
    seq = sorted(
        ((cands[k], t0 + solver.value(start[k])) for k in range(n) if solver.value(pres[k])),
        key=lambda x: x[1],
    )
    return OptimizerResult(seq, report)


def _add_hint(m, cands, pres, start, arc_lits, hint, t0):
    """Hint the greedy night: presence, starts and the arcs between consecutive visits."""
    if not hint:
        return
    k_of = {c.id: k for k, c in enumerate(cands)}
    chosen = [k_of[c.id] for c, _ in hint]
    for k, p in enumerate(pres):
        m.add_hint(p, k in chosen)
    for c, st in hint:
        m.add_hint(start[k_of[c.id]], int(round(st - t0)))
    pairs = set(zip(chosen, chosen[1:], strict=False))
    for (u, v), lit in arc_lits.items():
        m.add_hint(lit, (u, v) in pairs)
