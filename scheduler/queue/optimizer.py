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

import threading
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from ortools.sat.python import cp_model

from scheduler.model.plan import Candidate, PlanSettings, Start
from scheduler.model.problem import NightProblem
from scheduler.queue.optimizer_bounds import (
    abutting_pairs,
    reserves,
    room_s,
    slot_bounds,
    transition_bounds,
)
from scheduler.queue.optimizer_hint import apply_hint as _apply_hint
from scheduler.queue.optimizer_hint import model_hint
from scheduler.queue.prepare import QueueInputs
from scheduler.queue.timing import Timed, brackets

#: wall seconds per CP-SAT deterministic-time unit with one worker, measured on the demo
#: night on this project's 2-core machines: planning model about 6, bounding model about 4
PLAN_S_PER_UNIT, BOUND_S_PER_UNIT = 6.0, 4.0
PLAN_SHARE = 0.6  # of the time budget, for the planning model; the rest bounds
JOIN_POLL_S = 0.1  # how often the main thread looks up from a running solve
NEAREST = 2  # per visit, the predecessors with the shortest transitions that may abut it


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
    begin: list  # start of each visit's reserved time (variable or expression)
    reserve: list  # the most each visit reserves, s
    earliest: list  # the first allowed start of each visit, s from night start
    first: int  # no visit starts before this offset from the night's start, s
    tight: dict  # (u, v, slot) -> (literal "u ends in slot, v follows closely", bound, lo, hi)
    end: list = field(default_factory=list)  # end of each visit (expression)
    last_end: dict = field(default_factory=dict)  # restart: target -> end of its last done visit
    fixed: tuple = ()  # restart: done calibrator visits (candidate, start)


def build_model(q: QueueInputs, reserve: list[int], acq: int, shortest: int,
                slots: dict | None = None, move_cost: tuple | None = None,
                origin: Start | None = None) -> tuple[cp_model.CpModel, Handles]:  # fmt: skip
    """The CP-SAT model (see the module docstring) with ``reserve[k]`` seconds kept free
    before candidate k; returns the model and its handles.

    With ``slots`` (per candidate pair, the transition bound by slot of the night, see
    :func:`scheduler.queue.optimizer_bounds.slot_bounds`), a visit that closely follows
    one of those partners reserves only that pair's bound in the slot: "closely" means too
    close for any other visit to fit between, so the pair is consecutive.
    With ``move_cost = (weight, longest_move_s per candidate, move_s(u, v))`` the objective
    also pays ``weight`` per second of carriage move into each visit: the pair's bound
    for a close pair, the longest into it otherwise.
    """
    ctx, cands = q.problem, list(q.candidates)
    t0 = ctx.night.start_s
    m = cp_model.CpModel()
    first = acq if origin is None else max(acq, int(np.ceil(origin.t_s - t0 + origin_gap(ctx))))
    h = _intervals(m, ctx, cands, reserve, first, shortest, bool(slots))
    _visit_order(m, ctx, cands, h)
    fixed = origin.fixed if origin else ()
    h.before, h.after = _brackets(m, q, h, acq, fixed)
    if slots:
        h.tight = _tight_pairs(m, cands, reserve, room_s(cands, shortest), h, slots, t0)
    _objective(m, cands, h, move_cost, origin)
    h.last_end = dict(origin.last_end) if origin else {}
    h.fixed = tuple(fixed)
    return m, h


def _intervals(m: cp_model.CpModel, ctx: NightProblem, cands: list[Candidate],
               reserve: list[int], first: int, shortest: int,
               variable: bool) -> Handles:  # fmt: skip
    """One optional interval per candidate (its reserved transition, then the visit),
    no two overlapping, and the night's length as a knapsack."""
    t0 = ctx.night.start_s
    h = Handles([], [], {}, {}, [], [], list(reserve), [], first, {})
    busy = []
    for c, r in zip(cands, reserve, strict=True):
        d = int(np.ceil(c.duration_s))
        spans = [(max(first, int(np.ceil(a - t0))), int(np.floor(b - t0))) for a, b in c.starts]
        spans = [(a, b) for a, b in spans if a <= b]
        p = m.new_bool_var(f"present_{c.id}")
        if not spans:
            m.add(p == 0)
            spans = [(first, first)]
        st = m.new_int_var_from_domain(cp_model.Domain.from_intervals(spans), f"start_{c.id}")
        rv: Any
        begin: Any
        if variable:
            rv = m.new_int_var(shortest, r, f"reserve_{c.id}")
            lo, hi = spans[0][0] - r, spans[-1][1] - shortest
            begin = m.new_int_var(lo, hi, f"free_from_{c.id}")
            m.add(begin == st - rv)
        else:
            rv, begin = r, st - r
        h.pres.append(p)
        h.start.append(st)
        h.end.append(st + d)
        h.size.append(rv)
        h.begin.append(begin)
        h.earliest.append(spans[0][0])
        busy.append(m.new_optional_interval_var(begin, d + rv, st + d, p, f"busy_{c.id}"))
    m.add_no_overlap(busy)
    night = int(np.ceil(ctx.night.end_s - t0)) + max(reserve, default=0)
    m.add(sum((int(np.ceil(c.duration_s)) + shortest) * p
              for c, p in zip(cands, h.pres, strict=True)) <= night)  # fmt: skip
    return h


def _visit_order(m: cp_model.CpModel, ctx: NightProblem, cands: list[Candidate],
                 h: Handles) -> None:  # fmt: skip
    """Visits of one target (and copies of one calibrator) in number order, separated."""
    by_target: dict[int, list[int]] = {}
    for k, c in enumerate(cands):
        by_target.setdefault(c.target, []).append(k)
    for ks in by_target.values():
        ks.sort(key=lambda k: cands[k].number)
        for a, b in zip(ks, ks[1:], strict=False):
            m.add_implication(h.pres[b], h.pres[a])
            sep = int(np.ceil(ctx.targets.min_separation_s[cands[a].target]))
            m.add(h.start[b] >= h.end[a] + sep).only_enforce_if(h.pres[b])


def _objective(m: cp_model.CpModel, cands: list[Candidate], h: Handles,
               move_cost: tuple | None, origin: Start | None) -> None:  # fmt: skip
    value = [int(round(c.value * 3600.0)) for c in cands]
    gain = sum(v * p for v, p in zip(value, h.pres, strict=True))
    if move_cost:
        w, longest, move_s = move_cost
        gain -= sum(int(round(w * longest[k])) * h.pres[k] for k in range(len(cands)))
        gain += sum(int(round(w * max(0.0, longest[v] - move_s(u, v)))) * q
                    for (u, v, _), (q, _, _, _) in h.tight.items())  # fmt: skip
    if origin is not None and origin.previous:  # stability: keep what was planned
        kept = {vid for vid, _ in origin.previous}
        bonus = int(round(origin.stability_weight))
        gain += sum(bonus * p for c, p in zip(cands, h.pres, strict=True) if c.id in kept)
    m.maximize(gain)


def _tight_pairs(m: cp_model.CpModel, cands: list[Candidate], reserve: list[int], room: int,
                 h: Handles, slots: dict, t0: float) -> dict:  # fmt: skip
    """Literals "u ends in slot j and v follows it closely", each shrinking v's reserve
    to the pair's bound in that slot; ``slots[(u, v)]`` lists (lo, hi, bound) with POSIX
    times bounding the end of u."""
    into: dict[int, list[tuple]] = {}
    tight = {}
    for (u, v), options in sorted(slots.items()):
        for j, (lo, hi, bound) in enumerate(options):
            t_uv = int(np.ceil(bound))
            if t_uv >= reserve[v]:
                continue
            q = m.new_bool_var(f"next_{cands[u].id}_{cands[v].id}_{j}")
            m.add_implication(q, h.pres[u])
            m.add_implication(q, h.pres[v])
            m.add(h.end[u] >= int(np.ceil(lo - t0))).only_enforce_if(q)
            m.add(h.end[u] <= int(np.floor(hi - t0))).only_enforce_if(q)
            m.add(h.start[v] - h.end[u] >= t_uv).only_enforce_if(q)
            m.add(h.start[v] - h.end[u] <= t_uv + room).only_enforce_if(q)
            into.setdefault(v, []).append((q, t_uv))
            tight[(u, v, j)] = (q, t_uv, lo, hi)
    for v, options in into.items():
        m.add(sum(q for q, _ in options) <= 1)
        m.add(h.size[v] >= reserve[v] - sum((reserve[v] - t) * q for q, t in options))
    for v in range(len(cands)):
        if v not in into and not isinstance(h.size[v], int):
            m.add(h.size[v] == reserve[v])
    return tight


def origin_gap(ctx: NightProblem) -> float:
    """A safe bound of the first transition of a restarted queue: the worst slew or the
    longest carriage travel, then acquisition."""
    over, b = ctx.overheads, ctx.beams
    travel = float(np.max((b.opd_max_m - b.opd_min_m) / b.rate_m_s)) if len(b) else 0.0
    return max(np.pi / over.slew_rate_rad_s, travel) + over.settle_s + over.acquisition_s


def _brackets(m: cp_model.CpModel, q: QueueInputs, h: Handles, acq: int,
              fixed: tuple = ()) -> tuple[dict, dict]:  # fmt: skip
    """Calibrator brackets: literals "calibrator visit c opens (closes) science visit v"
    (README.md, the gap rule), at least one of each for every present science visit."""
    targets, cands, suits = q.problem.targets, list(q.candidates), q.suits
    pres, start, end = h.pres, h.start, h.end
    t0 = q.problem.night.start_s
    gap = int(q.settings.calibrator_gap_s)
    before: dict[tuple[int, int | str], Any] = {}
    after: dict[tuple[int, int | str], Any] = {}
    cal_ks = [k for k, c in enumerate(cands) if not c.is_science]
    sci_d = [c.duration_s for c in cands if c.is_science]
    # at most this many science visits can start (or end) within one gap of a calibrator
    per_cal = int(gap // (min(sci_d, default=gap) + acq)) + 1
    for v, cv in enumerate(cands):
        if not cv.is_science or not targets.needs_calibrator[cv.target]:
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
        for fc, fst in fixed:  # calibrators already done may open the bracket
            if suits[cv.target, fc.target]:
                b = m.new_bool_var(f"before_{cv.id}_{fc.id}")
                m.add(start[v] <= int(np.floor(fst + fc.duration_s - t0 + gap))).only_enforce_if(b)
                before[(v, f"done:{fc.id}")] = b
                b_v.append(b)
        if not b_v or not a_v:
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


def solve_interruptibly(solver: cp_model.CpSolver, model: cp_model.CpModel) -> Any:
    """``solver.solve(model)`` in a worker thread, so that Ctrl-C reaches the main thread
    at once: the search is stopped, the worker waited for, and KeyboardInterrupt raised
    (CP-SAT's own handler is off, see ``catch_sigint_signal``).  An Event, not
    ``Thread.join``, marks the end: a join interrupted by Ctrl-C can return early."""
    box: dict[str, Any] = {}
    done = threading.Event()

    def work() -> None:
        try:
            box["status"] = solver.solve(model)
        except BaseException as exc:  # re-raised in the calling thread
            box["error"] = exc
        finally:
            done.set()

    threading.Thread(target=work, name="cp-sat", daemon=True).start()
    try:
        while not done.wait(JOIN_POLL_S):
            pass
    except KeyboardInterrupt:
        solver.stop_search()
        while not done.wait(JOIN_POLL_S):
            pass
        raise
    if "error" in box:
        raise box["error"]
    return box["status"]


def solve(m, h: Handles, cands, s: PlanSettings, budget_s: float, t0: float,
          s_per_unit: float = PLAN_S_PER_UNIT):  # fmt: skip
    """Solve with explicit parameters; (status name, objective, bound, wall, sequence).

    By default two workers race under a wall-clock limit.  With ``s.deterministic`` one
    worker searches under a deterministic-time limit (``budget_s / s_per_unit`` units),
    which gives the same answer for the same model and seed; the wall-clock limit is
    then only a generous backstop."""
    solver = cp_model.CpSolver()
    prm = solver.parameters
    prm.random_seed = s.seed
    prm.cp_model_probing_level = 0
    prm.catch_sigint_signal = False  # Ctrl-C belongs to the command: it must stop it
    if s.deterministic:
        prm.num_workers = 1
        prm.max_deterministic_time = max(0.05, budget_s / s_per_unit)
        prm.max_time_in_seconds = 10.0 * max(1.0, budget_s)
    else:
        prm.num_workers = 2
        prm.max_time_in_seconds = max(0.2, budget_s)
    status = solve_interruptibly(solver, m)
    name = solver.status_name(status)
    if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
        # the proven bound stands even when no solution was found in time
        bound = solver.best_objective_bound if status == cp_model.UNKNOWN else None
        return name, None, bound, solver.wall_time, None
    seq = sorted(
        ((cands[k], t0 + solver.value(h.start[k])) for k in range(len(cands))
         if solver.value(h.pres[k])),
        key=lambda x: x[1],
    )  # fmt: skip
    return name, solver.objective_value, solver.best_objective_bound, solver.wall_time, seq


def optimize(q: QueueInputs, timed: Timed, budget_s: float,
             origin: Start | None = None) -> OptimizerResult:  # fmt: skip
    """Plan within ``budget_s`` seconds, warm-started from the exactly timed greedy night
    ``timed``; then bound.  The report gives both models' status, the planning model's
    objective and the bounding model's proven bound, in priority x hours."""
    cands, tr, s = list(q.candidates), q.transitions, q.settings
    used = np.array(sorted({c.target for c in cands}))
    pos = {t: k for k, t in enumerate(used)}
    total, carriage = transition_bounds(tr, used)
    total = np.where(total >= 0, total + tr.pad, total)
    acq = int(np.ceil(tr.over.acquisition_s))
    shortest = acq + int(np.floor(tr.over.settle_s))
    plan_reserve, bound_reserve = reserves(cands, total, pos, shortest)
    t0 = q.problem.night.start_s

    def pair_s(u: int, v: int) -> float:
        return float(total[pos[cands[u].target], pos[cands[v].target]])

    def carriage_s(u: int, v: int) -> float:
        return float(carriage[pos[cands[u].target], pos[cands[v].target]])

    pairs = abutting_pairs(cands, q.suits, pair_s, room_s(cands, shortest), NEAREST)
    by_target = slot_bounds(tr, {(cands[u].target, cands[v].target) for u, v in pairs}, tr.pad)
    slots = {(u, v): by_target[(cands[u].target, cands[v].target)] for u, v in pairs}
    longest_move = np.max(carriage, axis=0)
    move_cost = (s.carriage_weight, [float(longest_move[pos[c.target]]) for c in cands],
                 carriage_s)  # fmt: skip
    m, h = build_model(q, plan_reserve, acq, shortest, slots, move_cost, origin)
    hint, sizes, tight, br = model_hint(q, h, timed, shortest)
    _apply_hint(m, h, cands, hint, br, sizes, tight)
    status, obj, _, wall, seq = solve(m, h, cands, s, PLAN_SHARE * budget_s, t0)
    # in deterministic mode the split must not depend on how long the first solve took
    left = (1 - PLAN_SHARE) * budget_s if s.deterministic else max(0.5, budget_s - wall)
    report = {"status": status, "solve_s": round(wall, 3), "bound": None,
              "model_objective": None if obj is None else round(obj / 3600.0, 4)}  # fmt: skip
    mb, hb = build_model(q, bound_reserve, acq, shortest, origin=origin)
    if seq:  # the planning solution is feasible in the looser bounding model
        starts = [(cands.index(c), start - t0) for c, start in seq]
        _apply_hint(mb, hb, cands, starts, brackets([(c, st, None) for c, st in seq], q,
                                                    hb.fixed))  # fmt: skip
    b_status, _, bound, b_wall, _ = solve(mb, hb, cands, s, left, t0, BOUND_S_PER_UNIT)
    report["bound_status"] = b_status
    report["bound_s"] = round(b_wall, 3)
    if bound is not None:
        report["bound"] = bound / 3600.0
    return OptimizerResult(seq, report)
