"""Benchmark: the night queue, optimiser against the greedy dispatcher, on a suite of
INVENTED nights (``night_suite.py``: invented sites, arrays and targets from a seed) and
the fictional demo night (configuration medium, 2027-04-18).

Every plan of both solvers is checked by the independent verifier; a rejected plan is a
bug, never a benchmark figure, and stops the run with an error.  One row per night:
candidate visits, greedy and optimiser value (the value rule), their ratio, the proven
bound and whether the bounding model finished, the gap, the optimize run's wall time,
its carriage repositioning time and calibrator visits per science visit.  Then medians
and the goals:

- the optimiser's value is at least the greedy value on every night;
- median proven gap <= 5 %, worst <= 15 %;
- median value ratio, aiming at >= 1.10;
- a night of about 300 candidates planned and verified in <= 35 s.

Run: ``python tests/benchmarks/bench_queue.py [--time-limit 30] [--only NAME] [--quick]
[--seed 2027] [--json FILE]``
"""

from __future__ import annotations

import argparse
import json
import math
import os
import statistics
import sys
import time
from dataclasses import asdict, dataclass
from pathlib import Path

import night_suite

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.cli.commands.common import load_inputs
from scheduler.model.array import ArrayModel
from scheduler.model.plan import Plan, PlanSettings
from scheduler.model.problem import NightProblem
from scheduler.model.targets import Targets
from scheduler.output.plan_document import plan_document
from scheduler.queue.planner import plan_night
from scheduler.queue.prepare import prepare_queue
from scheduler.verify import verify_plan

ROOT = Path(__file__).resolve().parents[2]
DEMO = "demo"
QUICK = (DEMO, "coldmoss", "thornvale", "saltpan")  # small, middle and ~300 candidates
QUICK_LIMIT_S = 5.0
DEFAULT_LIMIT_S = 30.0
GOAL_GAP_MEDIAN = 0.05
GOAL_GAP_WORST = 0.15
GOAL_RATIO = 1.10
GOAL_BIG_CANDIDATES = 250  # "a 300-candidate night": the largest night at or above this
GOAL_BIG_S = 35.0
VALUE_TOL = 1e-3  # value units; summary values are rounded to 4 decimals


@dataclass(frozen=True)
class Case:
    """One night's inputs, loaded once for both solvers."""

    name: str
    array: ArrayModel
    targets: Targets
    problem: NightProblem


@dataclass(frozen=True)
class Row:
    """One night's figures (values under the value rule, times in seconds)."""

    night: str
    candidates: int
    greedy: float
    optimise: float
    ratio: float
    bound: float | None
    bound_status: str
    gap: float | None
    wall_s: float  # the optimize run's plan_night, as its summary says
    checked_s: float  # the optimize run planned and verified, measured here
    carriage_s: float
    cal_per_science: float
    solver: str


def demo_case() -> Case:
    inputs = load_inputs(ROOT / "catalogs" / "demo_array.toml", "medium",
                         ROOT / "catalogs" / "demo_targets.csv", "2027-04-18")  # fmt: skip
    return Case(DEMO, inputs.array, inputs.targets, inputs.problem())


def suite_case(night: night_suite.Night) -> Case:
    array, targets = night_suite.load(night)
    return Case(night.name, array, targets, night_suite.problem(night, (array, targets)))


def planned(case: Case, settings: PlanSettings, solver: str) -> tuple[Plan, float]:
    """A plan and the seconds to make and verify it; exits on a rejected plan."""
    t0 = time.perf_counter()
    plan = plan_night(case.problem, settings, solver)
    doc = plan_document(case.problem, case.array, plan, settings)
    problems = verify_plan(doc, case.array, case.targets, settings)
    checked = time.perf_counter() - t0
    if problems:
        lines = "\n  ".join(str(p) for p in problems)
        sys.exit(f"bench_queue: the verifier rejected the {solver} plan of night "
                 f"{case.name} (a bug):\n  {lines}")  # fmt: skip
    return plan, checked


def ratio_of(opt: float, greedy: float) -> float:
    if greedy > 0:
        return opt / greedy
    return 1.0 if opt <= 0 else math.inf


def run_case(case: Case, limit_s: float) -> Row:
    settings = PlanSettings(time_limit_s=limit_s)
    count = len(prepare_queue(case.problem, settings).candidates)
    greedy, _ = planned(case, settings, "greedy")
    best, checked = planned(case, settings, "optimize")
    g, o = greedy.summary, best.summary
    science = sum(v.is_science for v in best.visits)
    cals = len(best.visits) - science
    status = o.bound_status or "-"
    return Row(
        night=case.name, candidates=count, greedy=g.weighted_value, optimise=o.weighted_value,
        ratio=ratio_of(o.weighted_value, g.weighted_value), bound=o.bound,
        bound_status="-" if o.bound is None else status,
        gap=o.gap, wall_s=o.wall_s, checked_s=round(checked, 3),
        carriage_s=o.idle_carriage_s, cal_per_science=cals / science if science else 0.0,
        solver=o.solver,
    )  # fmt: skip


HEADER = (f"{'night':12s} {'cand':>5s} {'greedy':>8s} {'optimise':>8s} {'ratio':>6s} "
          f"{'bound':>8s} {'bound st.':>9s} {'gap':>6s} {'wall_s':>6s} {'carr_s':>7s} "
          f"{'cal/sci':>7s}")  # fmt: skip


def show(r: Row) -> str:
    bound = "-" if r.bound is None else f"{r.bound:8.2f}"
    gap = "-" if r.gap is None else f"{r.gap:6.1%}"
    return (f"{r.night:12s} {r.candidates:5d} {r.greedy:8.2f} {r.optimise:8.2f} "
            f"{r.ratio:6.3f} {bound:>8s} {r.bound_status:>9s} {gap:>6s} {r.wall_s:6.1f} "
            f"{r.carriage_s:7.0f} {r.cal_per_science:7.2f}")  # fmt: skip


def verdict(ok: bool | None) -> str:
    return "n/a" if ok is None else "MET" if ok else "NOT MET"


def pct(x: float | None) -> str:
    return "-" if x is None else f"{x:.1%}"


@dataclass(frozen=True)
class Summary:
    """Medians, extremes and the goals (None: not measured in this run)."""

    nights: int
    median_ratio: float
    min_ratio: float
    median_gap: float | None
    worst_gap: float | None
    nights_without_gap: int
    optimiser_below_greedy: list[str]
    big_night: Row | None
    goal_optimiser_at_least_greedy: bool
    goal_median_gap: bool | None
    goal_worst_gap: bool | None
    goal_median_ratio: bool
    goal_big_night: bool | None


def summarise(rows: list[Row]) -> Summary:
    gaps = [r.gap for r in rows if r.gap is not None]
    ratios = [r.ratio for r in rows]
    big = max((r for r in rows if r.candidates >= GOAL_BIG_CANDIDATES),
              key=lambda r: r.candidates, default=None)  # fmt: skip
    worse = [r.night for r in rows if r.optimise < r.greedy - VALUE_TOL]
    med_gap = statistics.median(gaps) if gaps else None
    worst = max(gaps) if gaps else None
    return Summary(
        nights=len(rows), median_ratio=statistics.median(ratios), min_ratio=min(ratios),
        median_gap=med_gap, worst_gap=worst, nights_without_gap=len(rows) - len(gaps),
        optimiser_below_greedy=worse, big_night=big, goal_optimiser_at_least_greedy=not worse,
        goal_median_gap=None if med_gap is None else med_gap <= GOAL_GAP_MEDIAN,
        goal_worst_gap=None if worst is None else (
            worst <= GOAL_GAP_WORST and len(gaps) == len(rows)),
        goal_median_ratio=statistics.median(ratios) >= GOAL_RATIO,
        goal_big_night=None if big is None else big.checked_s <= GOAL_BIG_S,
    )  # fmt: skip


def print_summary(s: Summary) -> None:
    print(f"\nmedian ratio {s.median_ratio:.3f}, minimum ratio {s.min_ratio:.3f}; median gap "
          f"{pct(s.median_gap)}, worst gap {pct(s.worst_gap)} ({s.nights_without_gap} nights "
          "without a bound)")  # fmt: skip
    print("goals:")
    print(f"  optimiser >= greedy on every night: {verdict(s.goal_optimiser_at_least_greedy)} "
          f"(below greedy: {', '.join(s.optimiser_below_greedy) or 'none'})")  # fmt: skip
    print(f"  median proven gap <= 5 %: {verdict(s.goal_median_gap)} ({pct(s.median_gap)})")
    print(f"  worst proven gap <= 15 %: {verdict(s.goal_worst_gap)} ({pct(s.worst_gap)}"
          f"{', a night without a bound' if s.nights_without_gap else ''})")  # fmt: skip
    print(f"  median value ratio >= 1.10 (an aim): {verdict(s.goal_median_ratio)} "
          f"({s.median_ratio:.3f})")  # fmt: skip
    big = s.big_night
    print("  a ~300-candidate night planned and verified in <= 35 s: " + (
        f"n/a (no night of >= {GOAL_BIG_CANDIDATES} candidates in this run)" if big is None
        else f"{verdict(s.goal_big_night)} ({big.night}, {big.candidates} candidates, "
             f"{big.checked_s:.1f} s)"))  # fmt: skip


def select(names: list[str], only: str | None, quick: bool) -> list[str]:
    if only is not None:
        if only not in names:
            sys.exit(f"bench_queue: no night {only!r}; nights: {', '.join(names)}")
        return [only]
    return [n for n in names if n in QUICK] if quick else names


def parse_args(argv: list[str] | None = None) -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0] if __doc__ else "")
    parser.add_argument("--time-limit", type=float, default=None, metavar="S",
                        help=f"optimiser time limit per night (default {DEFAULT_LIMIT_S:.0f} s, "
                             f"{QUICK_LIMIT_S:.0f} s with --quick)")  # fmt: skip
    parser.add_argument("--only", metavar="NAME", help="one night (a suite night or 'demo')")
    quick = f"a {QUICK_LIMIT_S:.0f} s limit and only {len(QUICK)} nights"
    parser.add_argument("--quick", action="store_true", help=quick)
    parser.add_argument("--seed", type=int, default=2027, help="the suite's seed")
    parser.add_argument("--json", metavar="FILE", type=Path, help="also write the rows here")
    return parser.parse_args(argv)


def main(argv: list[str] | None = None) -> None:
    args = parse_args(argv)
    limit = args.time_limit or (QUICK_LIMIT_S if args.quick else DEFAULT_LIMIT_S)
    nights = {n.name: n for n in night_suite.suite(args.seed)}
    names = select([DEMO, *nights], args.only, args.quick)
    print(f"Night-queue benchmark on INVENTED nights (night_suite, seed {args.seed}: invented "
          "sites, arrays and targets; no real ones) and the fictional demo night.")  # fmt: skip
    print(f"Optimiser vs greedy, time limit {limit:g} s per night, {os.cpu_count()} cores; "
          "every plan verified.  Values under the value rule (priority per visit), times "
          "in seconds.\n")  # fmt: skip
    print(HEADER)
    rows = []
    for name in names:
        case = demo_case() if name == DEMO else suite_case(nights[name])
        rows.append(run_case(case, limit))
        print(show(rows[-1]), flush=True)
    result = summarise(rows)
    print_summary(result)
    if args.json is not None:
        doc = {"seed": args.seed, "time_limit_s": limit, "invented": True,
               "rows": [asdict(r) for r in rows], "summary": asdict(result)}  # fmt: skip
        args.json.write_text(json.dumps(doc, indent=2) + "\n")


if __name__ == "__main__":
    main()
