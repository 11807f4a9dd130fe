"""Plan one night: windows, candidates, a sequence, exact times, the summary.

:func:`plan_night` runs the greedy dispatcher, then (with ``solver="optimize"``) the
CP-SAT optimiser warm-started from it, times the better sequence exactly and explains
every science target left out.
"""

from __future__ import annotations

import time

import numpy as np

from scheduler.model.plan import Plan, PlanSettings, PlanSummary, SolverReport, Start, Visit
from scheduler.model.problem import NightProblem
from scheduler.model.reasons import words
from scheduler.queue.greedy import greedy_sequence
from scheduler.queue.prepare import QueueInputs, prepare_queue
from scheduler.queue.restart import restrict
from scheduler.queue.scoring import (
    carriage_wait_s,
    energy_bound,
    idle_carriage_s,
    objective,
    science_hours,
    science_value,
)
from scheduler.queue.timing import Timed, settle_sequence
from scheduler.queue.visits import to_visits

RESERVE_S = 1.0  # of the time limit, kept for exact timing and verification
PREPARE_S = 1.0  # of the time limit, assumed spent before the optimiser in deterministic mode


def _previous_order(q: QueueInputs, origin: Start, visits: list[Visit], timed: Timed
                    ) -> tuple[list[Visit], Timed, float, bool]:  # fmt: skip
    """The old plan's order where it still fits: (visits, timed, its value, chosen)."""
    by_id = {c.id: c for c in q.candidates}
    old = [(by_id[i], st) for i, st in origin.previous if i in by_id]
    timed_p, br_p = settle_sequence(q, old, False, origin)
    kept = to_visits(q.problem, timed_p, br_p, origin)
    t, s = q.problem.targets, q.settings
    better = objective(kept, t, s) >= objective(visits, t, s)
    return (kept, timed_p, science_value(kept, t), True) if better else (
        visits, timed, science_value(kept, t), False)  # fmt: skip


def _optimise(q: QueueInputs, timed: Timed, visits: list[Visit], started: float,
              origin: Start | None) -> tuple[list[Visit], str, SolverReport]:  # fmt: skip
    """Run the optimiser within what is left of the time limit; keep its plan when it
    is at least as good.  Returns (visits, outcome, report)."""
    from scheduler.queue.optimizer import optimize

    s = q.settings
    if s.deterministic:  # a fixed share, so that machine speed changes nothing
        budget = s.time_limit_s - RESERVE_S - PREPARE_S
    else:
        budget = s.time_limit_s - (time.perf_counter() - started) - RESERVE_S
    result = optimize(q, timed, budget, origin)
    r = result.report
    report = SolverReport(r.get("status"), r.get("solve_s"), r.get("model_objective"),
                          r.get("bound"), r.get("bound_status"), r.get("bound_s"))  # fmt: skip
    if result.sequence is None:
        return visits, "optimiser returned nothing in time", report
    timed_o, br_o = settle_sequence(q, result.sequence, origin=origin)
    opt_visits = to_visits(q.problem, timed_o, br_o, origin)
    t = q.problem.targets
    if objective(opt_visits, t, s) > objective(visits, t, s) - 1e-9:
        return opt_visits, "optimize", report
    return visits, "optimiser found nothing better", report


def plan_night(problem: NightProblem, settings: PlanSettings, solver: str = "optimize",
               started_s: float | None = None, origin: Start | None = None) -> Plan:  # fmt: skip
    """Plan the night.  ``settings.time_limit_s`` counts from ``started_s``
    (``time.perf_counter()`` when the command began; now by default), and a reserve is
    kept for exact timing and verification after the optimiser stops.  With ``origin``
    the queue restarts mid-night from that state (see :mod:`scheduler.queue.restart`),
    warm started from ``origin.previous`` where it still fits."""
    t0 = time.perf_counter()
    started = t0 if started_s is None else started_s
    q = prepare_queue(problem, settings)
    if origin is not None:
        q = q.with_candidates(restrict(q.candidates, origin, problem.targets.min_separation_s))
    timed, br = settle_sequence(q, greedy_sequence(q, origin), origin=origin)
    greedy_visits = visits = to_visits(problem, timed, br, origin)
    solver_name, previous_value = "greedy", None
    if origin is not None and origin.previous:
        visits, timed, previous_value, chosen = _previous_order(q, origin, visits, timed)
        solver_name = "previous order" if chosen else solver_name
    report = SolverReport()
    if solver == "optimize":
        visits, outcome, report = _optimise(q, timed, visits, started, origin)
        solver_name = outcome if outcome == "optimize" else f"{solver_name} ({outcome})"
    summary = _summary(q, visits, greedy_visits, solver_name, previous_value, report, solver,
                       origin, time.perf_counter() - t0)  # fmt: skip
    return Plan(tuple(visits), tuple(_unscheduled(q, visits, origin)), summary)


def _summary(q: QueueInputs, visits: list[Visit], greedy_visits: list[Visit], solver_name: str,
             previous_value: float | None, report: SolverReport, solver: str,
             origin: Start | None, wall_s: float) -> PlanSummary:  # fmt: skip
    t, s = q.problem.targets, q.settings
    obj = objective(visits, t, s)
    bound = gap = None
    if solver == "optimize":  # the energy bound is a second valid bound, sometimes tighter
        night = q.problem.night
        quick = energy_bound(q.candidates, q.problem.overheads,
                             origin.t_s if origin else night.start_s, night.end_s)  # fmt: skip
        bound = max(min(quick, report.bound if report.bound is not None else quick), obj)
        gap = (bound - obj) / bound if bound > 0 else 0.0
    return PlanSummary(
        solver=solver_name, science_hours=round(science_hours(visits), 4),
        weighted_value=round(science_value(visits, t), 4), objective=round(obj, 4),
        greedy_value=round(science_value(greedy_visits, t), 4),
        idle_carriage_s=round(idle_carriage_s(visits), 1),
        greedy_idle_carriage_s=round(idle_carriage_s(greedy_visits), 1),
        carriage_wait_s=round(carriage_wait_s(visits), 1), seed=s.seed, wall_s=round(wall_s, 3),
        bound=None if bound is None else round(bound, 4),
        gap=None if gap is None else round(gap, 4),
        previous_value=None if previous_value is None else round(previous_value, 4),
        report=report,
    )  # fmt: skip


def _unscheduled(q: QueueInputs, visits: list[Visit],
                 origin: Start | None) -> list[tuple[str, str]]:  # fmt: skip
    """Every science target with visits still wanted, and why."""
    t, problem = q.problem.targets, q.problem
    done: dict[int, int] = dict(origin.done_count) if origin else {}
    for v in visits:
        done[v.target] = done.get(v.target, 0) + 1
    cal_ok = {c.target for c in q.candidates if not c.is_science}
    out = []
    for i in np.flatnonzero(t.is_science):
        wanted, got = int(t.visits[i]), done.get(int(i), 0)
        if got >= wanted:
            continue
        w = q.windows[i]
        if not w.start_windows(float(t.duration_s[i])):
            why = f"never observable tonight for {t.duration_s[i] / 60:.0f} min"
            if w.excluded:
                why += f" ({words(w.main_reason(), problem.beams, problem.limits)})"
        elif t.needs_calibrator[i] and not any(j in cal_ok for j in np.flatnonzero(q.suits[i])):
            why = "no suitable calibrator observable tonight"
        else:
            why = "lost to higher priority"
        if got:
            why = f"{got} of {wanted} visits scheduled; rest {why}"
        out.append((t.names[i], why))
    return out
