"""The optimiser against exhaustive search on small crowded nights.

Reference: brute force, no outside source.  Every ordered subset of the candidate
visits (built exactly as ``plan_night`` builds them) is timed with the exact,
compacting timing of :mod:`scheduler.queue.timing`; a sequence counts when every one of its
visits fits, every science visit that needs calibrators has one before and one after it
within the gap, and every calibrator serves one (the plans ``plan_night`` can return).
Its value is the sum of priority x hours of its science visits.  ``plan_night`` with the
optimiser must reach the best value, and its plan must pass the independent verifier.

The carriage weight is set to 0 so that the planner's objective is the science value
itself, the quantity searched here.  The nights are invented test data (see
``tests/_plan_cases.py``); the seeds were picked for crowded nights, where not every
candidate fits and the choice matters.
"""

from __future__ import annotations

import datetime as dt
import sys
from pathlib import Path

import pytest
from _plan_cases import Case, small_instance

sys.path.insert(0, str(Path(__file__).resolve().parent / "benchmarks"))
import night_suite  # noqa: E402

from scheduler.model.plan import Plan, PlanSettings, PlanSummary
from scheduler.queue.bound_lp import lp_bound
from scheduler.queue.bound_model import build_bound_model
from scheduler.queue.planner import plan_night
from scheduler.queue.scoring import science_value
from scheduler.queue.timing import brackets, time_sequence
from scheduler.queue.value import ValueRule
from scheduler.queue.visits import to_visits

VALUE_TOL = 1e-6  # priority x hours
MAX_CANDIDATES = 9
TIME_LIMIT_S = 3.0
# seeds of small_instance: crowded nights of 5-7 candidates, with calibrator copies 1
# and 2, science with and without calibrators
SEEDS = (4, 5, 19, 28, 38)
# seeds of the night suite's small nights (tests/benchmarks/night_suite.py): 6-9
# candidates, a multi-visit target that earns only when complete in some of them
SUITE_SEEDS = (0, 1, 2, 3, 4)


def _settings(copies: int) -> PlanSettings:
    return PlanSettings(calibrator_copies=copies, carriage_weight=0.0,
                        time_limit_s=TIME_LIMIT_S)  # fmt: skip


def _cannot_recover(timed, targets, suits, gap_s: float) -> bool:
    """True when a timed prefix can no longer become a valid plan by appending visits:
    a science visit lacks a calibrator before it, or lacks one after it while the
    prefix already runs past the gap after its end."""
    last_end = timed[-1][1] + timed[-1][0].duration_s
    cals = [(k, ks) for k, ks, _ in timed if not k.is_science]
    for c, st, _ in timed:
        if not c.is_science or not targets.needs_calibrator[c.target]:
            continue
        end = st + c.duration_s
        fit = [(k, ks) for k, ks in cals if suits[c.target, k.target]]
        before = any(0 <= st - (ks + k.duration_s) <= gap_s for k, ks in fit)
        after = any(0 <= ks - end <= gap_s for k, ks in fit)
        if not before or (not after and last_end - end > gap_s):
            return True
    return False


def brute_force(case: Case, settings: PlanSettings, q):
    """(best value, its timed sequence, sequences searched) over every ordered subset
    of ``cands``: depth first, pruned where a prefix no longer times fully, can no
    longer be bracketed, or cannot beat the best found.  Copies of one calibrator (and
    visits of one target) are taken in number order: they are interchangeable."""
    problem, targets, suits = case.problem, case.problem.targets, q.suits
    cands = list(q.candidates)
    gap = settings.calibrator_gap_s
    hint = problem.night.start_s  # compact timing ignores hints
    order = sorted(range(len(cands)), key=lambda k: -cands[k].value)
    best = {"value": 0.0, "timed": [], "searched": 0}

    def visit(seq, used, value, rest):
        best["searched"] += 1
        if seq:
            timed = time_sequence(problem, [(c, hint) for c in seq], compact=True)
            if len(timed) < len(seq) or _cannot_recover(timed, targets, suits, gap):
                return
            br = brackets(timed, q)
            served = {cid for pair in br.values() if pair for cid in pair}
            valid = all(pair is not None for pair in br.values())
            valid &= all(c.is_science or c.id in served for c in seq)
            earned = q.rule.of_targets([c.target for c in seq if c.is_science])
            if valid and earned > best["value"] + VALUE_TOL:
                best["value"], best["timed"] = earned, timed
        if value + rest <= best["value"] + VALUE_TOL:
            return
        for k in order:
            c = cands[k]
            if k in used or any(o.target == c.target and o.number < c.number and j not in used
                                for j, o in enumerate(cands)):  # fmt: skip
                continue
            visit(seq + [c], used | {k}, value + c.value, rest - c.value)

    visit([], frozenset(), 0.0, sum(c.value for c in cands))
    return best["value"], best["timed"], best["searched"]


CASES = [("plan", s) for s in SEEDS] + [("suite", s) for s in SUITE_SEEDS]


@pytest.fixture(scope="module", params=CASES, ids=[f"{a}-seed-{s}" for a, s in CASES])
def instance(request):
    source, seed = request.param
    if source == "plan":
        doc, rows, copies = small_instance(seed)
        case = Case(doc, rows)
    else:
        night = night_suite.small(seed)
        case, copies = Case(night.array, night.rows, night.config,
                            dt.date.fromisoformat(night.date)), 3  # fmt: skip
    settings = _settings(copies)
    q = case.queue(settings)
    value, timed, searched = brute_force(case, settings, q)
    return {"seed": request.param, "case": case, "settings": settings,
            "cands": list(q.candidates), "q": q, "best": value, "timed": timed,
            "searched": searched}  # fmt: skip


def test_instance_is_small_and_crowded(instance):
    """Guard for the invented data (no outside source): few enough candidates for
    exhaustive search, a calibrator among them, and not everything fits."""
    cands = instance["cands"]
    assert 2 <= len(cands) <= MAX_CANDIDATES
    assert any(not c.is_science for c in cands)
    assert 0 < instance["best"] < sum(c.value for c in cands) - VALUE_TOL


def test_brute_force_optimum_is_a_valid_plan(instance):
    """The reference plan itself passes the independent verifier (astropy's full
    transform), and its value from the timed visits equals the searched value."""
    case, settings, timed = instance["case"], instance["settings"], instance["timed"]
    br = brackets(timed, instance["q"])
    visits = to_visits(case.problem, timed, br)
    rule = ValueRule.of(case.targets, settings)
    assert science_value(visits, rule) == pytest.approx(instance["best"], abs=VALUE_TOL)
    summary = PlanSummary("reference", 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0, 0.0)
    assert case.problems(Plan(tuple(visits), (), summary), settings) == []


def test_optimiser_reaches_brute_force_optimum(instance):
    """plan_night('optimize') reaches the exhaustive optimum, reports a bound no lower
    than it (the bounding model relaxes every real plan), and its plan verifies."""
    case, settings = instance["case"], instance["settings"]
    plan = plan_night(case.problem, settings, "optimize")
    got = science_value(list(plan.visits), ValueRule.of(case.targets, settings))
    assert case.problems(plan, settings) == []
    assert plan.summary.bound is not None
    assert plan.summary.bound >= instance["best"] - VALUE_TOL
    assert got == pytest.approx(instance["best"], abs=VALUE_TOL), (
        f"seed {instance['seed']}: optimiser {got:.4f} vs brute force {instance['best']:.4f}; "
        f"plan {[v.id for v in plan.visits]}, optimum "
        f"{[c.id for c, _, _ in instance['timed']]}, summary {plan.summary}"
    )


def test_linear_programme_bound_is_never_below_the_optimum(instance):
    """The LP bound (:mod:`scheduler.queue.bound_lp`) is a relaxation: never below the
    exhaustive optimum of the same candidates."""
    assert lp_bound(instance["q"]) >= instance["best"] - VALUE_TOL


def test_bounding_model_is_never_below_the_optimum(instance):
    """The CP-SAT bounding model (shortest transitions, exact brackets) solved to its
    optimum is never below the exhaustive optimum."""
    from ortools.sat.python import cp_model

    bm = build_bound_model(instance["q"], None)
    solver = cp_model.CpSolver()
    solver.parameters.num_workers = 1
    solver.parameters.max_time_in_seconds = 20.0
    status = solver.solve(bm.model)
    assert status == cp_model.OPTIMAL
    assert solver.objective_value / bm.scale >= instance["best"] - VALUE_TOL
