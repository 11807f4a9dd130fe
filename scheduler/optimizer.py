"""The optimiser: two CP-SAT models of the night, one to plan, one to bound.

Data -> variables -> constraints -> objective -> solve -> report.  Both models share:

- every candidate visit is an optional interval whose start lies in its start windows;
- the visits do not overlap once each is preceded by a reserved transition time;
- calibrator brackets: a present science visit that needs calibrators has one literal per
  suitable calibrator visit "before" and one "after", at least one of each true, each
  forcing the calibrator's presence and the gap limit; a calibrator visit can open (or
  close) at most as many science visits as fit within one gap of it;
- visits of one target, and copies of one calibrator, are ordered (symmetry breaking);
- objective: priority x seconds of science.

The *planning* model reserves before each visit the longest transition any predecessor
could need (a safe upper bound read from the geometry grid over the night), so every
solution can be flown; the final plan is then timed exactly and compacted.  The
*bounding* model reserves only the shortest possible transition (acquisition plus
settling), so no real plan of these candidates can beat its optimum: its proven bound is
the bound the plan reports.  Sequence-dependent transitions are not modelled by arcs: on
2 cores a circuit over ~150 visits stalled far from its bound, while these interval
models solve to optimality in seconds on the demo night.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from ortools.sat.python import cp_model

from scheduler.greedy import GridTransitions
from scheduler.plan_model import Candidate, PlanSettings
from scheduler.transitions import transition

BOUND_STEP_S = 600.0  # sampling of the night for transition upper bounds
BOUND_LAG_S = 600.0  # typical length of a transition, between end of u and start of v
DETERMINISTIC_S_PER_UNIT = 1.0  # wall seconds per deterministic-time unit, roughly
PLAN_SHARE = 0.6  # of the time budget, for the planning model; the rest bounds


@dataclass
class OptimizerResult:
    sequence: list[tuple[Candidate, float]] | None
    report: dict


@dataclass
class Handles:
    """The model's variables by candidate index; ``before``/``after`` by (science,
    calibrator) candidate index."""

    pres: list
    start: list
    before: dict
    after: dict
    size: list  # reserve before each visit (int or variable)
    tight: dict  # (u, v) -> literal "u immediately precedes v, closely"


def transition_bounds(tr: GridTransitions, targets_used: np.ndarray):
    """Upper bounds (s) of the transition, and of its carriage move, between every pair
    of the targets used, over the night (sampled every ``BOUND_STEP_S``); the transition
    bound is -1 where the pair is never both observable."""
    g = tr.g
    idx = np.asarray(targets_used)
    n = len(idx)
    total = np.full((n, n), -1.0)
    carriage = np.zeros((n, n))
    for ta in np.arange(g.t_s[0], g.t_s[-1] - BOUND_LAG_S, BOUND_STEP_S):
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


def reserves(cands: list[Candidate], total: np.ndarray, pos: dict, shortest_s: int):
    """Seconds reserved before each candidate: the longest transition into its target
    (planning), or the shortest possible transition (bounding)."""
    longest = np.ceil(np.max(total, axis=0)).astype(int)
    plan = [max(int(longest[pos[c.target]]), shortest_s) for c in cands]
    return plan, [shortest_s] * len(cands)


def build_model(ctx, cands: list[Candidate], suits, reserve: list[int], s: PlanSettings,
                acq: int, pair_s=None, move_cost=None):  # fmt: skip
    """The CP-SAT model (see the module docstring) with ``reserve[k]`` seconds kept free
    before candidate k; returns the model and its handles.

    With ``pair_s(u, v)`` (the transition bound between two candidates' targets), a
    science visit that follows one of its calibrators closely, or a calibrator that
    follows its science visit closely, reserves only that pair's transition: "closely"
    means too close for any other visit to fit between, so the pair is consecutive.
    With ``move_cost = (weight, longest_move_s per candidate, move_s(u, v))`` the objective
    also pays ``weight`` per second of carriage move into each visit: the pair's bound
    for a close pair, the longest into it otherwise.
    """
    targets = ctx.targets
    t0 = ctx.night.start_s
    m = cp_model.CpModel()
    shortest = min(reserve, default=acq)
    pres, start, end, busy, size = [], [], [], [], []
    for c, r in zip(cands, reserve, strict=True):
        d = int(np.ceil(c.duration_s))
        spans = [(max(acq, int(np.ceil(a - t0))), int(np.floor(b - t0))) for a, b in c.starts]
        spans = [(a, b) for a, b in spans if a <= b]
        p = m.new_bool_var(f"present_{c.id}")
        if not spans:
            m.add(p == 0)
            spans = [(acq, acq)]
        st = m.new_int_var_from_domain(cp_model.Domain.from_intervals(spans), f"start_{c.id}")
        if pair_s:
            rv = m.new_int_var(shortest, r, f"reserve_{c.id}")
            lo, hi = spans[0][0] - r, spans[-1][1] - shortest
            begin = m.new_int_var(lo, hi, f"free_from_{c.id}")
            m.add(begin == st - rv)
        else:
            rv, begin = r, st - r
        pres.append(p)
        start.append(st)
        end.append(st + d)
        size.append(rv)
        busy.append(m.new_optional_interval_var(begin, d + rv, st + d, p, f"busy_{c.id}"))
    m.add_no_overlap(busy)
    night = int(np.ceil(ctx.night.end_s - t0)) + max(reserve, default=0)
    m.add(sum((int(np.ceil(c.duration_s)) + shortest) * p
              for c, p in zip(cands, pres, strict=True)) <= night)  # fmt: skip

    by_target: dict[int, list[int]] = {}
    for k, c in enumerate(cands):
        by_target.setdefault(c.target, []).append(k)
    for ks in by_target.values():
        ks.sort(key=lambda k: cands[k].number)
        for a, b in zip(ks, ks[1:], strict=False):
            m.add_implication(pres[b], pres[a])
            sep = int(np.ceil(targets.min_separation_s[cands[a].target]))
            m.add(start[b] >= end[a] + sep).only_enforce_if(pres[b])

    before, after = _brackets(m, ctx, cands, suits, s, pres, start, end, acq)
    tight = {}
    if pair_s:
        tight = _tight_pairs(m, cands, reserve, shortest, before, after, start, end, size,
                             pair_s)  # fmt: skip
    value = [int(round(c.value * 3600.0)) for c in cands]
    gain = sum(v * p for v, p in zip(value, pres, strict=True))
    if move_cost:
        w, longest, move_s = move_cost
        gain -= sum(int(round(w * longest[k])) * pres[k] for k in range(len(cands)))
        gain += sum(int(round(w * max(0.0, longest[v] - move_s(u, v)))) * q
                    for (u, v), q in tight.items())  # fmt: skip
    m.maximize(gain)
    return m, Handles(pres, start, before, after, size, tight)


def _tight_pairs(m, cands, reserve, shortest, before, after, start, end, size, pair_s):
    """Literals for "u immediately precedes v" on science-calibrator pairs, each
    shrinking v's reserve to the pair's transition bound."""
    room = min(int(np.ceil(c.duration_s)) for c in cands) + shortest - 1
    into: dict[int, list[tuple]] = {}
    tight = {}
    pairs = [(c, v) for (v, c) in before] + [(v, c) for (v, c) in after]
    for u, v in pairs:  # u right before v
        t_uv = int(np.ceil(pair_s(u, v)))
        if t_uv < 0 or t_uv >= reserve[v]:
            continue
        q = m.new_bool_var(f"next_{cands[u].id}_{cands[v].id}")
        link = before.get((v, u)) if (v, u) in before else after[(u, v)]
        m.add_implication(q, link)
        m.add(start[v] - end[u] >= t_uv).only_enforce_if(q)
        m.add(start[v] - end[u] <= t_uv + room).only_enforce_if(q)
        into.setdefault(v, []).append((q, t_uv))
        tight[(u, v)] = q
    for v, options in into.items():
        m.add(sum(q for q, _ in options) <= 1)
        m.add(size[v] >= reserve[v] - sum((reserve[v] - t) * q for q, t in options))
    for v in range(len(cands)):
        if v not in into and not isinstance(size[v], int):
            m.add(size[v] == reserve[v])
    return tight


def _brackets(m, ctx, cands, suits, s, pres, start, end, acq):
    targets = ctx.targets
    gap = int(s.calibrator_gap_s)
    before, after = {}, {}
    cal_ks = [k for k, c in enumerate(cands) if c.value == 0]
    sci_d = [c.duration_s for c in cands if c.value > 0]
    # at most this many science visits can start (or end) within one gap of a calibrator
    per_cal = int(gap // (min(sci_d, default=gap) + acq)) + 1
    for v, cv in enumerate(cands):
        if cv.value == 0 or not targets.needs_calibrator[cv.target]:
            continue
        b_v, a_v = [], []
        for c in cal_ks:
            if not suits[cv.target, cands[c].target]:
                continue
            b = m.new_bool_var(f"before_{cv.id}_{cands[c].id}")
            m.add_implication(b, pres[c])
            m.add(start[v] >= end[c]).only_enforce_if(b)
            m.add(start[v] - end[c] <= gap).only_enforce_if(b)
            a = m.new_bool_var(f"after_{cv.id}_{cands[c].id}")
            m.add_implication(a, pres[c])
            m.add(start[c] >= end[v]).only_enforce_if(a)
            m.add(start[c] - end[v] <= gap).only_enforce_if(a)
            before[(v, c)], after[(v, c)] = b, a
            b_v.append(b)
            a_v.append(a)
        if not b_v:
            m.add(pres[v] == 0)
            continue
        m.add_bool_or(b_v).only_enforce_if(pres[v])
        m.add_bool_or(a_v).only_enforce_if(pres[v])
        m.add(sum(b_v) >= pres[v])  # linear forms, for the relaxation
        m.add(sum(a_v) >= pres[v])
    for c in cal_ks:
        for lits in (before, after):
            served = [lit for (_, cc), lit in lits.items() if cc == c]
            if served:
                m.add(sum(served) <= per_cal * pres[c])
    return before, after


def model_hint(ctx, cands, suits, h: Handles, reserve: list[int], pair_s, s: PlanSettings,
               timed, acq: int):  # fmt: skip
    """A complete solution the model accepts, from an exactly timed night: re-time it
    with the model's reserves (a pair's own bound where the model allows it), drop what
    no longer fits, repair brackets until stable.  Returns the starts by candidate index
    (offsets, s), the reserves used, the tight pairs and the brackets by visit id."""
    from scheduler.timing import brackets

    k_of = {c.id: k for k, c in enumerate(cands)}
    seq = [k_of[c.id] for c, _, _ in timed if c.id in k_of]
    t0 = ctx.night.start_s
    shortest = min(reserve, default=acq)
    room = min(int(np.ceil(c.duration_s)) for c in cands) + shortest - 1 if cands else 0
    for _ in range(len(seq) + 1):
        out, used_r, tight = [], {}, set()
        free, last, prev = float(acq), {}, None
        for k in seq:
            c = cands[k]
            ready = last.get(c.target, -np.inf) + ctx.targets.min_separation_s[c.target]
            need = reserve[k]
            pair = prev is not None and (prev, k) in h.tight
            if pair:
                need = int(np.ceil(pair_s(prev, k)))
            begin = c.earliest_start(t0 + float(np.ceil(max(ready, free + need if out else free))))
            if begin is not None and pair and begin - t0 - free > need + room:
                pair, need = False, reserve[k]
                begin = c.earliest_start(t0 + float(np.ceil(max(ready, free + need))))
            if begin is None:
                continue
            offset = float(np.ceil(begin - t0))
            if not any(a - t0 <= offset <= b - t0 for a, b in c.starts):
                continue
            out.append((k, offset))
            used_r[k] = need if out[:-1] else reserve[k]
            if pair:
                tight.add((prev, k))
            free = offset + np.ceil(c.duration_s)
            last[c.target] = free
            prev = k
        triples = [(cands[k], t0 + off, None) for k, off in out]
        br = brackets(triples, ctx.targets, suits, s.calibrator_gap_s)
        used = {cid for pair in br.values() if pair for cid in pair}
        keep = [k for k, _ in out
                if (cands[k].value > 0 and br.get(cands[k].id, ()) is not None)
                or (cands[k].value == 0 and cands[k].id in used)]  # fmt: skip
        if len(keep) == len(out) == len(seq):
            return out, used_r, tight, br
        seq = keep
    return [], {}, set(), {}


def _apply_hint(m, h: Handles, cands, hint, br, sizes=None, tight=frozenset()) -> None:
    """Hint every decision: presence, start, reserve, bracket and pair literals."""
    k_of = {c.id: k for k, c in enumerate(cands)}
    starts = dict(hint)
    for k, p in enumerate(h.pres):
        m.add_hint(p, k in starts)
        if k in starts:
            m.add_hint(h.start[k], int(starts[k]))
        if not isinstance(h.size[k], int):
            m.add_hint(h.size[k], int((sizes or {}).get(k, h.size[k].proto.domain[-1])))
    chosen_before = {(k_of[sci], k_of[pair[0]]) for sci, pair in br.items() if pair}
    chosen_after = {(k_of[sci], k_of[pair[1]]) for sci, pair in br.items() if pair}
    for key, lit in h.before.items():
        m.add_hint(lit, key in chosen_before)
    for key, lit in h.after.items():
        m.add_hint(lit, key in chosen_after)
    for key, lit in h.tight.items():
        m.add_hint(lit, key in tight)


def solve(m, h: Handles, cands, s: PlanSettings, budget_s: float, t0: float):
    """Solve with explicit parameters; (status name, objective, bound, wall, sequence)."""
    solver = cp_model.CpSolver()
    prm = solver.parameters
    prm.random_seed = s.seed
    prm.cp_model_probing_level = 0
    prm.num_workers = 2
    prm.max_time_in_seconds = max(0.2, budget_s)
    if s.deterministic:
        prm.interleave_search = True
        prm.max_deterministic_time = max(0.1, budget_s / DETERMINISTIC_S_PER_UNIT)
        prm.max_time_in_seconds = max(0.2, budget_s) * 4.0  # the deterministic limit rules
    status = solver.solve(m)
    name = solver.status_name(status)
    if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
        return name, None, None, solver.wall_time, None
    seq = sorted(
        ((cands[k], t0 + solver.value(h.start[k])) for k in range(len(cands))
         if solver.value(h.pres[k])),
        key=lambda x: x[1],
    )  # fmt: skip
    return name, solver.objective_value, solver.best_objective_bound, solver.wall_time, seq


def optimize(ctx, cands: list[Candidate], suits, tr: GridTransitions, s: PlanSettings, timed,
             budget_s: float) -> OptimizerResult:  # fmt: skip
    """Plan within ``budget_s`` seconds, warm-started from the exactly timed greedy night
    ``timed``; then bound.  The report gives both models' status, the planning model's
    objective and the bounding model's proven bound, in priority x hours."""
    used = np.array(sorted({c.target for c in cands}))
    pos = {t: k for k, t in enumerate(used)}
    total, carriage = transition_bounds(tr, used)
    total = np.where(total >= 0, total + tr.pad, total)
    acq = int(np.ceil(tr.over.acquisition_s))
    shortest = acq + int(np.floor(tr.over.settle_s))
    plan_reserve, bound_reserve = reserves(cands, total, pos, shortest)
    t0 = ctx.night.start_s

    def pair_s(u, v):
        return total[pos[cands[u].target], pos[cands[v].target]]

    def carriage_s(u, v):
        return carriage[pos[cands[u].target], pos[cands[v].target]]

    longest_move = np.max(carriage, axis=0)
    move_cost = (s.carriage_weight, [float(longest_move[pos[c.target]]) for c in cands],
                 carriage_s)  # fmt: skip
    m, h = build_model(ctx, cands, suits, plan_reserve, s, acq, pair_s, move_cost)
    hint, sizes, tight, br = model_hint(ctx, cands, suits, h, plan_reserve, pair_s, s, timed, acq)
    _apply_hint(m, h, cands, hint, br, sizes, tight)
    status, obj, _, wall, seq = solve(m, h, cands, s, PLAN_SHARE * budget_s, t0)
    report = {"status": status, "solve_s": round(wall, 3), "bound": None,
              "model_objective": None if obj is None else round(obj / 3600.0, 4)}  # fmt: skip

    mb, hb = build_model(ctx, cands, suits, bound_reserve, s, acq)
    if seq:  # the planning solution is feasible in the looser bounding model
        starts = [(k, st) for k, st in ((cands.index(c), start - t0) for c, start in seq)]
        from scheduler.timing import brackets

        _apply_hint(mb, hb, cands, starts,
                    brackets([(c, st, None) for c, st in seq], ctx.targets, suits,
                             s.calibrator_gap_s))  # fmt: skip
    left = max(0.5, budget_s - wall)
    b_status, _, bound, b_wall, _ = solve(mb, hb, cands, s, left, t0)
    report["bound_status"] = b_status
    report["bound_s"] = round(b_wall, 3)
    if bound is not None:
        report["bound"] = bound / 3600.0
    return OptimizerResult(seq, report)
