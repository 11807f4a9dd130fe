"""The optimiser: a search with the real transitions, and proven bounds beside it.

Two things run at once within the time budget, one on each core:

- in a worker thread, CP-SAT proves an upper bound with the bounding model
  (:mod:`scheduler.queue.bound_model`), warm-started from the greedy night;
- in the calling thread, the large-neighbourhood search (:mod:`scheduler.queue.search`)
  improves the greedy night using the transitions it would really take.

The report gives the search's sequence and the best of the valid bounds: the bounding
model's, the linear programme's (:mod:`scheduler.queue.bound_lp`), with the bounding
model's status.  Ctrl-C stops both at once (CP-SAT's own handler is off).
"""

from __future__ import annotations

import math
import threading
import time
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from ortools.sat.python import cp_model

from scheduler.model.plan import Candidate, Start
from scheduler.queue.bound_lp import lp_bound
from scheduler.queue.bound_model import VALUE_SCALE, BoundModel, build_bound_model, hint
from scheduler.queue.oracle import Oracle
from scheduler.queue.prepare import QueueInputs
from scheduler.queue.route import Night, from_sequence, to_sequence
from scheduler.queue.search import Budget, search

JOIN_POLL_S = 0.1  # how often the main thread looks up from a running solve
#: timed routes per second of budget in deterministic mode (measured on this project's
#: 2-core machines), and CP-SAT deterministic-time units per second
EVALUATIONS_PER_S, UNITS_PER_S = 60.0, 0.25
BOUND_SHARE = 0.4  # of the budget, for the bounding model first in deterministic mode

Sequence = list[tuple[Candidate, float]]


@dataclass(frozen=True)
class OptimizerResult:
    """The search's best sequence (never worse than its start), the bounds and the
    bounding model's status."""

    sequence: Sequence
    bound: float | None
    lp_bound: float
    model_bound: float | None
    bound_status: str
    bound_s: float
    evaluations: int


def solve_interruptibly(solver: cp_model.CpSolver, bm: BoundModel,
                        callback: cp_model.CpSolverSolutionCallback, done: threading.Event,
                        box: dict[str, Any]) -> None:  # fmt: skip
    """Run ``solver.solve``, storing the status (or the exception) in ``box`` and
    setting ``done`` at the end; meant for a worker thread."""
    try:
        box["status"] = solver.solve(bm.model, callback)
    except BaseException as exc:  # re-raised by the caller
        box["error"] = exc
    finally:
        done.set()


def _solver(budget_s: float, deterministic: bool, seed: int) -> cp_model.CpSolver:
    solver = cp_model.CpSolver()
    prm = solver.parameters
    prm.random_seed = seed
    prm.num_workers = 1
    prm.catch_sigint_signal = False  # Ctrl-C belongs to the command: it must stop it
    if deterministic:
        prm.max_deterministic_time = max(0.05, budget_s * UNITS_PER_S)
        prm.max_time_in_seconds = 10.0 * max(1.0, budget_s)
    else:
        prm.max_time_in_seconds = max(0.1, budget_s)
    return solver


def _wait(done: threading.Event, solver: cp_model.CpSolver) -> None:
    """Wait for the worker; on Ctrl-C stop the search first.  An Event, not
    ``Thread.join``: a join interrupted by Ctrl-C can return early."""
    try:
        while not done.wait(JOIN_POLL_S):
            pass
    except KeyboardInterrupt:
        solver.stop_search()
        while not done.wait(JOIN_POLL_S):
            pass
        raise


class _Relaxed(cp_model.CpSolverSolutionCallback):
    """Collects each improving solution of the bounding model as a target order (called
    from the solver's thread; read by the search between its iterations)."""

    def __init__(self, bm: BoundModel, cands: list[Candidate]):
        super().__init__()
        self.bm, self.cands = bm, cands
        self.lock = threading.Lock()
        self.fresh: list[list[int]] = []

    def on_solution_callback(self) -> None:
        bm = self.bm
        chosen = [(self.value(bm.start[k]), c.target) for k, c in enumerate(self.cands)
                  if self.value(bm.present[k])]  # fmt: skip
        with self.lock:
            self.fresh = [[t for _, t in sorted(chosen)]]

    def take(self) -> list[list[int]]:
        with self.lock:
            got, self.fresh = self.fresh, []
        return got


def optimize(q: QueueInputs, start: Sequence, budget_s: float, origin: Start | None = None,
             progress: Callable[[float, float | None], None] | None = None
             ) -> OptimizerResult:  # fmt: skip
    """Improve ``start`` (the greedy night) and bound the night within ``budget_s``.
    ``progress(value, bound)`` is called whenever either improves.  In deterministic
    mode the bounding model runs first (its share of a deterministic-time budget), then
    the search (a number of timed routes): the result then depends on nothing but the
    inputs and the seed."""
    s = q.settings
    lp = lp_bound(q, origin)
    bm = build_bound_model(q, origin)
    hint(bm, list(q.candidates), start)
    share = BOUND_SHARE if s.deterministic else 1.0
    solver = _solver(budget_s * share, s.deterministic, s.seed)
    best = {"value": 0.0, "bound": lp}

    def on_bound(value: float) -> None:
        best["bound"] = min(best["bound"], value / bm.scale)
        if progress:
            progress(best["value"], best["bound"])

    def on_value(value: float) -> None:
        best["value"] = value
        if progress:
            progress(value, best["bound"])

    solver.best_bound_callback = on_bound
    relaxed = _Relaxed(bm, list(q.candidates))
    done, box = threading.Event(), dict[str, Any]()
    worker = threading.Thread(target=solve_interruptibly, args=(solver, bm, relaxed, done, box),
                              name="cp-sat-bound", daemon=True)  # fmt: skip
    worker.start()
    if s.deterministic:
        _wait(done, solver)
        budget = Budget(evaluations=int(budget_s * (1 - share) * EVALUATIONS_PER_S))
    else:
        budget = Budget(deadline=time.perf_counter() + budget_s)
    night = Night.of(q, Oracle(q, origin), origin)
    try:
        route = search(night, from_sequence(start), budget, s.seed, on_value, relaxed.take,
                       lambda: best["bound"])
    finally:  # whatever happens, the worker stops before this returns
        solver.stop_search()
        _wait(done, solver)
    if "error" in box:
        raise box["error"]
    return _result(to_sequence(night, route), lp, solver, box, budget.used)


def _result(seq: Sequence, lp: float, solver: cp_model.CpSolver, box: dict[str, Any],
            used: int) -> OptimizerResult:  # fmt: skip
    status = box.get("status")
    model_bound = None
    if status in (cp_model.OPTIMAL, cp_model.FEASIBLE, cp_model.UNKNOWN):
        raw = solver.objective_value if status == cp_model.OPTIMAL else (
            solver.best_objective_bound)
        model_bound = raw / VALUE_SCALE if math.isfinite(raw) else None
    bound = lp if model_bound is None else min(lp, model_bound)
    return OptimizerResult(seq, bound, lp, model_bound, solver.status_name(status),
                           solver.wall_time, used)  # fmt: skip
