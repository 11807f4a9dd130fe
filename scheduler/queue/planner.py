"""Plan one night: windows, candidates, a sequence, exact times, the summary.

:func:`plan_night` builds the greedy night (what a planner does by hand), then with
``solver="optimize"`` improves it with the search while the bounds are proven
(:mod:`scheduler.queue.optimizer`), times the best sequence exactly and explains every
science target left out.  The result is never worse than the greedy night.
"""

from __future__ import annotations

import time
from collections.abc import Callable

import numpy as np

from scheduler.model.plan import (
    LeftOut,
    Plan,
    PlanSettings,
    PlanSummary,
    SolverReport,
    Start,
    Visit,
)
from scheduler.model.problem import NightProblem
from scheduler.model.reasons import Limit, limit_of, words
from scheduler.queue.backups import backups
from scheduler.queue.explain import explain
from scheduler.queue.greedy import greedy_sequence, kept_critical
from scheduler.queue.prepare import QueueInputs, prepare_queue
from scheduler.queue.restart import restrict
from scheduler.queue.scoring import (
    carriage_wait_s,
    idle_carriage_s,
    objective,
    science_hours,
    science_value,
)
from scheduler.queue.timing import Sequence, Timed, settle_sequence
from scheduler.queue.visits import to_visits

RESERVE_S = 0.6  # of the time limit, kept for exact timing, verification and writing
PREPARE_S = 1.0  # of the time limit, assumed spent before the optimiser in deterministic mode
MIN_BUDGET_S = 0.3  # the optimiser always gets at least this

Progress = Callable[[float, float | None], None]


def _done(origin: Start | None) -> dict[int, int] | None:
    return dict(origin.done_count) if origin else None


def _timed_visits(q: QueueInputs, seq: Sequence, origin: Start | None,
                  compact: bool = True) -> tuple[list[Visit], Timed]:  # fmt: skip
    timed, br = settle_sequence(q, seq, compact, origin)
    return to_visits(q.problem, timed, br, origin), timed


def _critical_kept(q: QueueInputs, visits: list[Visit], origin: Start | None) -> int:
    """Visits of time-critical science targets a replan's previous plan had planned."""
    keep = kept_critical(q, origin)
    return sum(1 for v in visits if v.target in keep)


def _better(q: QueueInputs, a: list[Visit], b: list[Visit], origin: Start | None) -> bool:
    """Whether plan ``a`` is better than ``b``: more of the time-critical visits a
    replan's previous plan had (README, *Replanning*: kept before any value), then a
    higher objective."""
    ka, kb = _critical_kept(q, a, origin), _critical_kept(q, b, origin)
    if ka != kb:
        return ka > kb
    s, done = q.settings, _done(origin)
    return objective(a, q.rule, s, done) > objective(b, q.rule, s, done) + 1e-9


def _budget(settings: PlanSettings, started: float) -> float:
    if settings.deterministic:  # a fixed share, so that machine speed changes nothing
        return max(MIN_BUDGET_S, settings.time_limit_s - RESERVE_S - PREPARE_S)
    return max(MIN_BUDGET_S, settings.time_limit_s - (time.perf_counter() - started) - RESERVE_S)


def plan_night(problem: NightProblem, settings: PlanSettings, solver: str = "optimize",
               started_s: float | None = None, origin: Start | None = None,
               progress: Progress | None = None) -> Plan:  # fmt: skip
    """Plan the night.  ``settings.time_limit_s`` counts from ``started_s``
    (``time.perf_counter()`` when the command began; now by default), and a reserve is
    kept for exact timing and verification after the optimiser stops.  With ``origin``
    the queue restarts mid-night from that state (see :mod:`scheduler.queue.restart`);
    the previous plan's remaining order is then tried as well."""
    t0 = time.perf_counter()
    started = t0 if started_s is None else started_s
    q = prepare_queue(problem, settings)
    if origin is not None:
        q = q.with_candidates(restrict(q.candidates, origin, problem.targets.min_separation_s))
    seq = greedy_sequence(q, origin)
    greedy_visits, _ = _timed_visits(q, seq, origin)
    visits, name, previous_value = greedy_visits, "greedy", None
    if origin is not None and origin.previous:
        by_id = {c.id: c for c in q.candidates}
        old = [(by_id[i], st) for i, st in origin.previous if i in by_id]
        kept, _ = _timed_visits(q, old, origin, compact=False)
        previous_value = science_value(kept, q.rule, _done(origin))
        if _better(q, kept, visits, origin):
            visits, name, seq = kept, "previous order", old
    report = SolverReport()
    if solver == "optimize":
        from scheduler.queue.optimizer import optimize

        result = optimize(q, seq, _budget(settings, started), origin, progress)
        found, _ = _timed_visits(q, result.sequence, origin)
        if _better(q, found, visits, origin):
            visits, name = found, "optimize"
        else:
            name = f"{name} (the search found nothing better)"
        report = SolverReport(result.lp_bound, result.model_bound, result.bound_status,
                              round(result.bound_s, 3), result.evaluations)  # fmt: skip
    summary = _summary(q, visits, greedy_visits, name, previous_value, report, origin,
                       time.perf_counter() - t0)  # fmt: skip
    return Plan(tuple(visits), tuple(_unscheduled(q, visits, origin)), summary,
                backups(q, visits))


def _bound(report: SolverReport, value: float) -> tuple[float | None, float | None, str | None]:
    """(bound, gap, status) from the solver's bounds; a plan that reaches the bound is
    optimal whatever the model's status."""
    known = [b for b in (report.lp_bound, report.model_bound) if b is not None]
    if not known:
        return None, None, None
    bound = max(min(known), value)
    gap = (bound - value) / bound if bound > 0 else 0.0
    proven = report.bound_status == "OPTIMAL" or gap <= 1e-9
    return bound, gap, "proven" if proven else "at limit"


def _summary(q: QueueInputs, visits: list[Visit], greedy_visits: list[Visit], name: str,
             previous_value: float | None, report: SolverReport, origin: Start | None,
             wall_s: float) -> PlanSummary:  # fmt: skip
    done, s = _done(origin), q.settings
    value = science_value(visits, q.rule, done)
    bound, gap, status = _bound(report, value)
    return PlanSummary(
        solver=name, science_hours=round(science_hours(visits), 4),
        weighted_value=round(value, 4), objective=round(objective(visits, q.rule, s, done), 4),
        greedy_value=round(science_value(greedy_visits, q.rule, done), 4),
        idle_carriage_s=round(idle_carriage_s(visits), 1),
        greedy_idle_carriage_s=round(idle_carriage_s(greedy_visits), 1),
        carriage_wait_s=round(carriage_wait_s(visits), 1), seed=s.seed, wall_s=round(wall_s, 3),
        bound=None if bound is None else round(bound, 4),
        gap=None if gap is None else round(gap, 4), bound_status=status,
        previous_value=None if previous_value is None else round(previous_value, 4),
        report=report,
    )  # fmt: skip


def _unscheduled(q: QueueInputs, visits: list[Visit],
                 origin: Start | None) -> list[LeftOut]:  # fmt: skip
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
        detail = ""
        if not w.start_windows(float(t.duration_s[i])):
            code = w.main_reason()
            why = "never observable tonight"
            if int(limit_of(code)) in (Limit.FAINT, Limit.RESOLVED):
                why, detail = explain(problem, int(i), code)
            elif w.observable:  # open, but never as long as a visit
                why = "no window as long as a visit"
                detail = (f"longest {w.longest_s() / 60:.0f} of {t.duration_s[i] / 60:.0f} min; "
                          f"{words(code, problem.beams, problem.limits)} limits it most")
            elif w.excluded:
                why += f" ({words(code, problem.beams, problem.limits)})"
        elif t.needs_calibrator[i] and not any(j in cal_ok for j in np.flatnonzero(q.suits[i])):
            why = "no suitable calibrator observable tonight"
        else:
            why = "lost to higher priority"
        if got:
            detail = "; ".join(x for x in (f"{got} of {wanted} visits scheduled", detail) if x)
        out.append(LeftOut(t.names[i], why, detail))
    return out
