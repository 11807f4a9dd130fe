"""One night end to end: plan_night with both solvers.

References:
- the independent verifier (astropy's full transform, its own delay and transition
  arithmetic; see test_verifier.py): every plan of random invented arrays and catalogs
  must pass it;
- the rules of README.md for the queue (CAL-SCI-CAL within 60 min, calibrators within
  10 deg): common practice, no source;
- the CLI's own promise for ``--seed``/``--deterministic``.
The demo night is the fictional demo scenario in ``catalogs/``; the other data are
invented test data (``tests/_plan_cases.py``).
"""

from __future__ import annotations

import time
from pathlib import Path

import pytest
from _plan_cases import Case, array_dict
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

import scheduler.queue.optimizer
import scheduler.queue.planner
from scheduler.cli.commands.common import load_inputs
from scheduler.model.plan import PlanSettings
from scheduler.output.plan_document import plan_document
from scheduler.queue.optimizer import OptimizerResult
from scheduler.queue.planner import plan_night
from scheduler.queue.scoring import science_value
from scheduler.queue.value import ValueRule
from scheduler.verify import verify_plan

ROOT = Path(__file__).resolve().parent.parent
DEMO = (ROOT / "catalogs" / "demo_array.toml", "medium", ROOT / "catalogs" / "demo_targets.csv",
        "2027-04-18")  # fmt: skip
DEMO_LIMIT_S = 4.0
VALUE_TOL = 1e-3  # priority x hours; summary values are rounded to 4 decimals
RANDOM_LIMIT_S = 3.0
OPD_TOL_M = 1e-6  # carriage paths vs a delay line's range (the verifier's own tolerance)
SLOWER_S = 0.5  # extra wall time before the optimiser, as on a busier machine


# --- the demo night, planned once per module -----------------------------------------


@pytest.fixture(scope="module")
def demo():
    inputs = load_inputs(*DEMO)
    return inputs, inputs.problem()




@pytest.fixture(scope="module")
def default_run(demo):
    """The optimiser with the default settings and a 4 s limit."""
    _, ctx = demo
    return plan_night(ctx, PlanSettings(time_limit_s=DEMO_LIMIT_S), "optimize")


DETERMINISTIC = PlanSettings(seed=3, deterministic=True, time_limit_s=DEMO_LIMIT_S)


@pytest.fixture(scope="module")
def deterministic_runs(demo):
    """Two runs with seed 3, deterministic, 4 s limit."""
    _, ctx = demo
    return [plan_night(ctx, DETERMINISTIC, "optimize") for _ in range(2)]


def _schedule(plan):
    return [(v.id, v.start_s) for v in plan.visits]


def test_deterministic_runs_give_the_same_plan(deterministic_runs):
    """--seed with --deterministic: the same plan twice (the flag's promise)."""
    a, b = deterministic_runs
    assert a.visits, "the demo night should schedule something"
    assert [v.id for v in a.visits] == [v.id for v in b.visits]
    assert _schedule(a) == _schedule(b)


def test_deterministic_plan_does_not_depend_on_machine_speed(demo, deterministic_runs,
                                                             monkeypatch):  # fmt: skip
    """The same promise on a busier machine: the steps before the optimiser take half a
    second longer, and the plan must not change."""
    _, ctx = demo
    greedy = scheduler.queue.planner.greedy_sequence

    def slower(*args, **kwargs):
        time.sleep(SLOWER_S)
        return greedy(*args, **kwargs)

    monkeypatch.setattr(scheduler.queue.planner, "greedy_sequence", slower)
    plan = plan_night(ctx, DETERMINISTIC, "optimize")
    first = deterministic_runs[0]
    assert _schedule(plan) == _schedule(first), (first.summary, plan.summary)


def test_optimiser_is_no_worse_than_greedy_and_bounded(demo, default_run):
    """The optimised night is worth at least the greedy night it starts from; the
    reported bound is present and no lower than the objective; the gap is a fraction."""
    inputs, ctx = demo
    plan = default_run
    summ = plan.summary
    rule = ValueRule.of(ctx.targets, PlanSettings())
    assert science_value(list(plan.visits), rule) >= summ.greedy_value - VALUE_TOL
    assert summ.weighted_value >= summ.greedy_value - VALUE_TOL
    assert summ.bound is not None and summ.gap is not None
    assert summ.bound >= summ.objective - VALUE_TOL
    assert 0.0 <= summ.gap <= 1.0
    s = PlanSettings(time_limit_s=DEMO_LIMIT_S)
    doc = plan_document(ctx, inputs.array, plan, s)
    assert verify_plan(doc, inputs.array, inputs.targets, s) == []


# --- random small nights: every plan verifies ----------------------------------------

SKY_RA_DEG = (120.0, 300.0)  # 8h to 20h: the night's sky on 2027-04-18 at the test site
SKY_DEC_DEG = (-70.0, 10.0)


@st.composite
def nights(draw):
    """(array document, catalog rows) of a random invented night."""
    n_st = draw(st.integers(2, 4))
    coord = st.floats(-120.0, 120.0)
    stations = [(draw(coord), draw(coord), draw(st.floats(-2.0, 2.0)), draw(st.floats(20, 100)))
                for _ in range(n_st)]  # fmt: skip
    slow = draw(st.lists(st.integers(0, n_st - 1), min_size=1, max_size=2, unique=True))
    rates = [draw(st.floats(0.2, 0.8)) if k in slow else 1.0 for k in range(n_st)]
    rows = []
    for k in range(draw(st.integers(3, 8))):
        row = {
            "name": f"S{k + 1}", "kind": "science",
            "ra": f"{draw(st.floats(*SKY_RA_DEG)):.4f}",
            "dec": f"{draw(st.floats(*SKY_DEC_DEG)):.4f}",
            "priority": str(draw(st.integers(1, 10))),
            "duration_min": str(draw(st.integers(20, 90))),
            "visits": str(draw(st.integers(1, 2))),
            "min_separation_min": str(draw(st.sampled_from([0, 60, 120]))),
            "needs_calibrator": str(draw(st.booleans())).lower(),
            "mag": f"{draw(st.floats(3.0, 7.0)):.2f}",
        }  # fmt: skip
        if draw(st.integers(0, 4)) == 0:  # a time-critical window of 2-4 h
            h = draw(st.integers(0, 6))
            row["window_start_utc"] = f"2027-04-19T{h:02d}:00:00Z"
            row["window_end_utc"] = f"2027-04-19T{h + draw(st.integers(2, 4)):02d}:00:00Z"
        rows.append(row)
    n_sci = len(rows)
    for k in range(draw(st.integers(2, 5))):
        host = rows[draw(st.integers(0, n_sci - 1))]
        rows.append({
            "name": f"C{k + 1}", "kind": "calibrator",
            "ra": f"{(float(host['ra']) + draw(st.floats(-9.0, 9.0))) % 360.0:.4f}",
            "dec": f"{max(-89.0, float(host['dec']) + draw(st.floats(-9.0, 9.0))):.4f}",
            "duration_min": str(draw(st.integers(10, 30))),
            "mag": f"{float(host['mag']) + draw(st.floats(-2.0, 2.0)):.2f}",
            "diameter_mas": f"{draw(st.floats(0.1, 2.5)):.2f}",
        })  # fmt: skip
    return array_dict(stations, rates_m_s=rates), rows


# no shrinking: a failing night is reported as drawn, within the runtime budget
@settings(max_examples=8, deadline=None, derandomize=True, database=None,
          phases=[Phase.explicit, Phase.generate],
          suppress_health_check=[HealthCheck.too_slow])  # fmt: skip
@given(nights())
def test_random_nights_pass_the_verifier(night):
    """Both solvers on random invented arrays and catalogs: every plan passes the
    independent verifier (empty list of problems)."""
    doc, rows = night
    case = Case(doc, rows)
    s = PlanSettings(time_limit_s=RANDOM_LIMIT_S)
    for solver in ("greedy", "optimize"):
        plan = plan_night(case.problem, s, solver)
        assert case.problems(plan, s) == [], (solver, [v.id for v in plan.visits])


def test_carriage_paths_stay_in_range_after_a_long_carriage_move():
    """A night the random test above found, reduced: two pads 144 m apart, one slow
    line, seven short visits at RA 8h then one at RA 14h20m.  The change of the common
    constant for the last move sits at the end of its allowed span; every carriage path
    written must still lie within its line's range (the verifier's rule, and the array
    file's opd_min_m..opd_max_m)."""
    far = (-116.22058861933078, 87.0, 0.0, 20.0)
    doc = array_dict([(0.0, 0.0, 0.0, 20.0), far], rates_m_s=[0.39165914875693425, 1.0])
    rows = [{"name": f"S{k + 1}", "ra": "215.1270" if k == 5 else "120.0000", "dec": "0.0000",
             "priority": str(p), "duration_min": "20", "needs_calibrator": "false"}
            for k, p in enumerate([1, 1, 2, 1, 1, 1, 2, 1])]  # fmt: skip
    case = Case(doc, rows)
    s = PlanSettings(time_limit_s=RANDOM_LIMIT_S)
    plan = plan_night(case.problem, s, "greedy")
    lo, hi = case.problem.beams.opd_min_m, case.problem.beams.opd_max_m
    outside = [(v.id, x) for v in plan.visits for x in (v.opd_start_m, v.opd_end_m)
               if any(a < b - OPD_TOL_M or a > c + OPD_TOL_M
                      for a, b, c in zip(x, lo, hi, strict=True))]  # fmt: skip
    assert outside == []
    assert case.problems(plan, s) == []


# --- why targets are left out ----------------------------------------------------------

ARRAY = array_dict([(0.0, 0.0, 0.0, 50.0), (30.0, 20.0, 0.2, 58.0), (-20.0, 35.0, -0.3, 62.0)])


def _reasons(rows) -> dict[str, str]:
    case = Case(ARRAY, rows)
    plan = plan_night(case.problem, PlanSettings(time_limit_s=RANDOM_LIMIT_S), "greedy")
    return {u.target: u.text for u in plan.unscheduled}


def test_target_below_the_horizon_all_night_is_never_observable():
    """Declination +70 deg never rises above 30 deg at latitude -26.1 deg (its upper
    culmination is at 90 - 96.1 < 0 deg): spherical astronomy, common practice."""
    rows = [
        {"name": "North-1", "ra": "200", "dec": "70", "duration_min": "30",
         "needs_calibrator": "false"},
        {"name": "South-1", "ra": "200", "dec": "-30", "duration_min": "30",
         "needs_calibrator": "false"},
    ]  # fmt: skip
    why = _reasons(rows)
    assert why["North-1"].startswith("never observable tonight"), why
    assert "South-1" not in why


def test_science_without_a_calibrator_within_10_deg_is_explained():
    """A science target that needs calibration and has only a calibrator 30 deg away
    (beyond the 10 deg rule; common practice, no source) is reported as having no
    suitable calibrator."""
    rows = [
        {"name": "Lonely-1", "ra": "200", "dec": "-30", "duration_min": "40",
         "needs_calibrator": "true", "mag": "5"},
        {"name": "Far-Cal", "ra": "200", "dec": "0", "kind": "calibrator",
         "duration_min": "15", "mag": "5"},
    ]  # fmt: skip
    why = _reasons(rows)
    assert why["Lonely-1"].startswith("no suitable calibrator"), why


# --- the greedy dispatcher and the fallback to it -------------------------------------

FALLBACK_ROWS = [
    {"name": "Solo-1", "ra": "195", "dec": "-30", "priority": "4", "duration_min": "60",
     "needs_calibrator": "false"},
    {"name": "Solo-2", "ra": "215", "dec": "-35", "priority": "2", "duration_min": "45",
     "needs_calibrator": "false"},
    {"name": "Pair-1", "ra": "205", "dec": "-25", "priority": "6", "duration_min": "50",
     "needs_calibrator": "true", "mag": "5"},
    {"name": "Pair-Cal", "ra": "207", "dec": "-28", "kind": "calibrator", "duration_min": "12",
     "mag": "5.5"},
]  # fmt: skip


def test_optimiser_returning_nothing_falls_back_to_greedy(monkeypatch):
    """When the optimiser returns nothing better (here: an empty night), the plan is the
    greedy night and the summary says so."""
    case = Case(ARRAY, FALLBACK_ROWS)
    s = PlanSettings(time_limit_s=RANDOM_LIMIT_S)
    greedy = plan_night(case.problem, s, "greedy")
    calls = []

    def nothing(*args, **kwargs):
        calls.append(args)
        return OptimizerResult([], None, 0.0, None, "UNKNOWN", 0.0, 0)

    # plan_night imports optimize from scheduler.queue.optimizer at call time
    monkeypatch.setattr(scheduler.queue.optimizer, "optimize", nothing)
    plan = plan_night(case.problem, s, "optimize")
    assert calls, "the optimiser stub was not called"
    assert greedy.visits, "the greedy night should schedule something"
    assert [(v.id, v.start_s) for v in plan.visits] == [(v.id, v.start_s) for v in greedy.visits]
    assert plan.summary.solver.startswith("greedy")
    assert "nothing" in plan.summary.solver
    assert plan.summary.report.bound_status == "UNKNOWN"
    assert case.problems(plan, s) == []


def test_greedy_schedules_a_lone_block_with_30_min_calibrators():
    """An empty night but for one science target that needs calibrators and one 30-min
    calibrator 3 deg away, both up for hours: CAL-SCI-CAL fits easily (common practice,
    no source), so the greedy night must contain the science visit."""
    rows = [
        {"name": "Pair-1", "ra": "205", "dec": "-25", "priority": "6", "duration_min": "50",
         "needs_calibrator": "true", "mag": "5"},
        {"name": "Pair-Cal", "ra": "207", "dec": "-28", "kind": "calibrator",
         "duration_min": "30", "mag": "5.5"},
    ]  # fmt: skip
    case = Case(ARRAY, rows)
    s = PlanSettings(time_limit_s=RANDOM_LIMIT_S)
    plan = plan_night(case.problem, s, "greedy")
    assert "Pair-1#1" in [v.id for v in plan.visits], plan.unscheduled
    assert case.problems(plan, s) == []
