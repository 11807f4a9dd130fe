"""Benchmark: what the measurability rules buy, on the INVENTED nights of ``night_suite.py``
and the fictional demo night (configuration long, 2027-04-18).

Each night is planned twice with the same solvers and settings: "blind", the catalog
with the science targets' diameters (and their errors and limb darkening) emptied
before parsing, as planning was before resolved stars were modelled, and "aware", the
real catalog.  Every science visit of every plan is then judged here, apart from the
planner: sampled every 60 s from its start to its end, the star's direction from the
fast path (``enu_from_cirs`` with the problem's CIRS places), the projected baselines
``sqrt(|b|^2 - (b . s)^2)`` of every pair of stations in use, ``x = pi theta B / lambda``
with the true diameter and the visit's mode wavelength, and the disk visibility written
out below (``V = 2 J1(x) / x``, the linear limb-darkening law where the catalog gives a
coefficient).  A visit is unmeasurable when at some sample no baseline is inside the
first null with V^2 at the array's floor (``min_squared_visibility``) or above.

Useful value: the value rule of the queue (``scheduler.queue.scoring.science_value``,
priority per visit, a target earning only with its minimum number of visits) applied
to the measurable science visits only.  Cost: median wall time of three runs of
``observable_windows`` on the aware problem against the blind one (taking turns, after
one run of each not counted).  As a check of the judge itself, every science target is
also judged on the night's 60 s grid and compared with the planner's ``over_resolved``.

Solvers: the greedy dispatcher and, unless --quick, the optimiser in its deterministic
mode, so that the two plans differ only by what the catalogs say, never by the
machine's load (--wall-clock: against the clock, as the command line does by default).
A deterministic budget is a count of timed routes per second of limit, so a plan may
end well before the limit.

An aware visit judged unmeasurable is a planner bug: it is listed with its figures and
the summary says FAIL (the exit status stays 0; only an exception makes it non-zero).

Run: ``python tests/benchmarks/bench_measurable.py [--time-limit 20] [--only NAME]
[--quick] [--wall-clock] [--seed 2027] [--json FILE]``
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
from functools import cache
from pathlib import Path

import night_suite
import numpy as np
import pandas as pd
from scipy.optimize import brentq
from scipy.special import j1

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.cli.commands.common import load_inputs
from scheduler.geometry.constraints import evaluate_grid, over_resolved
from scheduler.geometry.sky import enu_from_cirs
from scheduler.geometry.windows import observable_windows
from scheduler.inputs.array_file import parse_array
from scheduler.inputs.catalog import parse_targets, read_table
from scheduler.model.plan import Plan, PlanSettings, Visit
from scheduler.model.problem import NightProblem
from scheduler.model.times import iso_utc
from scheduler.queue.planner import plan_night
from scheduler.queue.scoring import science_value
from scheduler.queue.value import ValueRule

ROOT = Path(__file__).resolve().parents[2]
DEMO = "demo"
DEMO_ARRAY = ROOT / "catalogs" / "demo_array.toml"
DEMO_TARGETS = ROOT / "catalogs" / "demo_targets.csv"
QUICK = (DEMO, "pinecrag", "saltpan", "thornvale")  # pinecrag: the one with resolved targets
DEFAULT_LIMIT_S = 20.0
SAMPLE_S = 60.0
TIMING_RUNS = 3
J1_FIRST_ZERO = 3.8317059702075125
SIZE_COLUMNS = ("diameter_mas", "diameter_err_mas", "limb_darkening")


@dataclass(frozen=True)
class Case:
    """One night: the problem with the true catalog and the one without science sizes."""

    name: str
    aware: NightProblem
    blind: NightProblem


@dataclass(frozen=True)
class Flag:
    """An unmeasurable visit: its worst sample and the best V^2 there over the baselines
    inside the first null (0: all past it)."""

    visit: str
    at_s: float
    best_v2: float


@dataclass(frozen=True)
class Score:
    """One plan as judged here."""

    science: int
    unmeasurable: int
    claimed: float  # the plan's own value under the value rule
    useful: float  # the same rule over the measurable science visits only
    flags: tuple[Flag, ...]


@dataclass(frozen=True)
class Row:
    night: str
    solver: str
    blind: Score
    aware: Score
    windows_blind_s: float
    windows_aware_s: float
    grid_unmeasurable: int  # science (target, 60 s sample) pairs, judged here
    grid_disagree: int  # of those pairs, where the planner's over_resolved says otherwise


# --- the judge -------------------------------------------------------------------------


def disk_v(x: np.ndarray, u: float) -> np.ndarray:
    """Visibility of a disk, linear limb darkening ``u`` (0: uniform, ``2 J1(x) / x``)."""
    x = np.abs(np.asarray(x, float))
    tiny = x < 1e-4
    xs = np.where(tiny, 1.0, x)
    uniform = np.where(tiny, 1.0, 2.0 * j1(xs) / xs)
    if u == 0.0:
        return uniform
    # 3 (sin x - x cos x) / x^3: the fully darkened disk, 1 at x = 0
    dark = np.where(tiny, 1.0, 3.0 * (np.sin(xs) - xs * np.cos(xs)) / xs**3)
    w_uniform, w_dark = (1.0 - u) / 2.0, u / 3.0  # flux of each part of the law
    return (w_uniform * uniform + w_dark * dark) / (w_uniform + w_dark)


@cache
def first_null(u: float) -> float:
    """x of the disk's first null."""
    if u == 0.0:
        return J1_FIRST_ZERO
    return float(brentq(lambda x: float(disk_v(np.array(x), u)), 3.0, 5.0))


def judged(problem: NightProblem, i: int, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per time of ``t``: whether no baseline measures target ``i``, and the best V^2
    inside the first null there (0 when every baseline is past it)."""
    theta = float(problem.targets.diameter_rad[i])
    if not theta > 0.0 or len(problem.beams) < 2:
        return np.zeros(len(t), bool), np.ones(len(t))
    u = float(np.nan_to_num(problem.targets.limb_darkening[i]))
    s = np.stack(enu_from_cirs(problem.ri_rad[i], problem.di_rad[i], problem.night.frame, t),
                 axis=-1)  # fmt: skip
    pos = problem.beams.position_enu_m
    a, b = np.triu_indices(len(pos), k=1)
    base = pos[b] - pos[a]  # (P, 3)
    along = s @ base.T  # (T, P)
    proj = np.sqrt(np.maximum(np.sum(base * base, axis=1) - along * along, 0.0))
    x = math.pi * theta * proj / float(problem.wavelength_m[i])
    v2 = disk_v(x, u) ** 2
    inside = x < first_null(round(u, 6))
    measures = inside & (v2 >= problem.limits.min_squared_visibility)
    return ~measures.any(axis=1), np.where(inside, v2, 0.0).max(axis=1)


def judge_visit(problem: NightProblem, v: Visit) -> Flag | None:
    """None when some baseline measures the target at every sample of the visit, else
    its worst sample."""
    t = np.append(np.arange(v.start_s, v.end_s, SAMPLE_S), v.end_s)
    bad, best_v2 = judged(problem, v.target, t)
    if not bad.any():
        return None
    k = int(np.argmin(np.where(bad, best_v2, np.inf)))
    return Flag(v.id, float(t[k]), float(best_v2[k]))


def grid_check(problem: NightProblem) -> tuple[int, int]:
    """On the windows' 60 s grid, science (target, time) pairs the judge calls
    unmeasurable, and pairs where the planner's ``over_resolved`` disagrees."""
    t = problem.night.grid(SAMPLE_S)
    science = np.flatnonzero(problem.targets.is_science)
    pds = evaluate_grid(problem, t).pds_m[:, science]
    planner = over_resolved(problem, science[:, None], pds)
    mine = np.array([judged(problem, int(i), t)[0] for i in science]).reshape(planner.shape)
    return int(mine.sum()), int(np.sum(mine != planner))


def score(plan: Plan, truth: NightProblem, rule: ValueRule) -> Score:
    """Judge each science visit of ``plan`` against the true catalog ``truth``."""
    flags, good = [], []
    science = [v for v in plan.visits if v.is_science]
    for v in science:
        flag = judge_visit(truth, v)
        if flag is None:
            good.append(v)
        else:
            flags.append(flag)
    return Score(len(science), len(flags), plan.summary.weighted_value,
                 round(science_value(good, rule), 4), tuple(flags))  # fmt: skip


# --- the cases -------------------------------------------------------------------------


def blind_rows(rows: list[dict]) -> list[dict]:
    """Catalog rows with every science target's size emptied."""
    return [{k: "" if k in SIZE_COLUMNS and r["kind"] != "calibrator" else v
             for k, v in r.items()} for r in rows]  # fmt: skip


def suite_case(night: night_suite.Night) -> Case:
    aware = night_suite.problem(night)
    array = parse_array(night.array, f"<{night.name} array>")
    frame = pd.DataFrame(blind_rows(night.rows))
    targets = parse_targets(frame, f"<{night.name} targets, blind>")
    return Case(night.name, aware, night_suite.problem(night, (array, targets)))


def demo_case() -> Case:
    aware = load_inputs(DEMO_ARRAY, "long", DEMO_TARGETS, "2027-04-18")
    frame = read_table(DEMO_TARGETS)
    science = frame["kind"].str.strip().str.lower() != "calibrator"
    for column in SIZE_COLUMNS:
        if column in frame:
            frame.loc[science, column] = ""
    modes = [m.name for m in aware.array.modes]
    targets = parse_targets(frame, f"{DEMO_TARGETS} (blind)", modes)
    blind = load_inputs(DEMO_ARRAY, "long", targets, "2027-04-18")
    return Case(DEMO, aware.problem(), blind.problem())


def windows_s(case: Case) -> tuple[float, float]:
    """Median wall times of ``observable_windows``, blind and aware: TIMING_RUNS runs of
    each, taking turns, after one run of each not counted (warming up)."""
    times: dict[str, list[float]] = {"blind": [], "aware": []}
    for k in range(TIMING_RUNS + 1):
        for key, problem in (("blind", case.blind), ("aware", case.aware)):
            t0 = time.perf_counter()
            observable_windows(problem)
            if k:
                times[key].append(time.perf_counter() - t0)
    return statistics.median(times["blind"]), statistics.median(times["aware"])


def run_case(case: Case, solvers: tuple[str, ...], settings: PlanSettings) -> list[Row]:
    if case.aware.targets.names != case.blind.targets.names:
        raise RuntimeError(f"{case.name}: the blind catalog lost its order")
    rule = ValueRule.of(case.aware.targets, settings)
    cost_blind, cost_aware = windows_s(case)
    grid = grid_check(case.aware)
    rows = []
    for solver in solvers:
        blind = score(plan_night(case.blind, settings, solver), case.aware, rule)
        aware = score(plan_night(case.aware, settings, solver), case.aware, rule)
        rows.append(Row(case.name, solver, blind, aware, cost_blind, cost_aware, *grid))
    return rows


# --- the report ------------------------------------------------------------------------

LEGEND = """columns:
  sci      science visits planned            bad     of them, unmeasurable (judged here)
  claimed  value the plan counts             useful  value of the measurable visits only
  gain     useful aware / useful blind       win_b, win_a  observable_windows, ms (median)
  cost     win_a / win_b (the price of the visibility rule in the windows computation)
  grid     science (target, 60 s sample) pairs of the night the judge calls unmeasurable
  dis      of all science pairs, those where the planner's over_resolved disagrees"""
HEADER = (f"{'night':12s} {'solver':8s} | {'sci':>4s} {'bad':>4s} {'claimed':>8s} "
          f"{'useful':>8s} | {'sci':>4s} {'bad':>4s} {'useful':>8s} | {'gain':>6s} | "
          f"{'win_b':>6s} {'win_a':>6s} {'cost':>5s} {'grid':>5s} {'dis':>3s}")  # fmt: skip
TITLE = f"{'':21s} | {'blind':^27s} | {'aware':^18s} |"


def ratio(a: float, b: float) -> float:
    if b > 0:
        return a / b
    return 1.0 if a <= 0 else math.inf


def show(r: Row, first: bool) -> str:
    b, a = r.blind, r.aware
    cost = (f"{r.windows_blind_s * 1e3:6.0f} {r.windows_aware_s * 1e3:6.0f} "
            f"{ratio(r.windows_aware_s, r.windows_blind_s):5.2f} {r.grid_unmeasurable:5d} "
            f"{r.grid_disagree:3d}") if first else ""  # fmt: skip
    return (f"{r.night:12s} {r.solver:8s} | {b.science:4d} {b.unmeasurable:4d} "
            f"{b.claimed:8.1f} {b.useful:8.1f} | {a.science:4d} {a.unmeasurable:4d} "
            f"{a.useful:8.1f} | {ratio(a.useful, b.useful):6.2f} | {cost}").rstrip()  # fmt: skip


def print_summary(rows: list[Row]) -> dict[str, object]:
    """The summary lines; returns them as a dictionary for --json."""
    out: dict[str, object] = {}
    bad_b = sum(r.blind.unmeasurable for r in rows)
    bad_a = sum(r.aware.unmeasurable for r in rows)
    sci_b = sum(r.blind.science for r in rows)
    print(f"\nunmeasurable science visits: blind {bad_b} of {sci_b}, aware {bad_a} of "
          f"{sum(r.aware.science for r in rows)}")  # fmt: skip
    for solver in dict.fromkeys(r.solver for r in rows):
        mine = [r for r in rows if r.solver == solver]
        ub, ua = sum(r.blind.useful for r in mine), sum(r.aware.useful for r in mine)
        med = statistics.median(ratio(r.aware.useful, r.blind.useful) for r in mine)
        print(f"useful value, {solver}: aware {ua:.1f} / blind {ub:.1f} = {ratio(ua, ub):.3f} "
              f"(median per night {med:.3f})")  # fmt: skip
        out[f"useful_ratio_{solver}"] = ratio(ua, ub)
        out[f"median_night_ratio_{solver}"] = med
    costs = {r.night: ratio(r.windows_aware_s, r.windows_blind_s) for r in rows}
    cost = statistics.median(costs.values())
    print(f"windows time aware / blind: median {cost:.2f} (range {min(costs.values()):.2f}-"
          f"{max(costs.values()):.2f} over {len(costs)} nights)")  # fmt: skip
    per_night = {r.night: (r.grid_unmeasurable, r.grid_disagree) for r in rows}
    grid, dis = (sum(v[k] for v in per_night.values()) for k in (0, 1))
    print(f"judge vs the planner's over_resolved on the 60 s grid: {grid} unmeasurable science "
          f"pairs, {dis} disagreements")  # fmt: skip
    if bad_a:
        print(f"FAIL: the aware planner made {bad_a} unmeasurable science visit(s) (a planner "
              "bug; listed below)")  # fmt: skip
    else:
        print("PASS: no aware science visit is unmeasurable")
    out.update(unmeasurable_blind=bad_b, unmeasurable_aware=bad_a, windows_cost_median=cost,
               grid_unmeasurable=grid, grid_disagreements=dis)  # fmt: skip
    return out


def print_flags(rows: list[Row]) -> None:
    """Every unmeasurable visit: the blind ones are what the rules prevent, an aware one
    is a planner bug."""
    for side in ("blind", "aware"):
        flagged = [(r, f) for r in rows for f in getattr(r, side).flags]
        if flagged:
            print(f"{side} visits judged unmeasurable"
                  + (" (PLANNER BUG):" if side == "aware" else ":"))  # fmt: skip
        for r, f in flagged:
            print(f"  {r.night} {r.solver} {f.visit}: at {iso_utc(f.at_s)} the best V^2 "
                  f"inside the first null is {f.best_v2:.4g}")  # fmt: skip


def parse_args(argv: list[str] | None = None) -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0] if __doc__ else "")
    parser.add_argument("--time-limit", type=float, default=DEFAULT_LIMIT_S, metavar="S",
                        help=f"optimiser time limit per plan (default {DEFAULT_LIMIT_S:g} s)")
    parser.add_argument("--only", metavar="NAME", help="one night (a suite night or 'demo')")
    parser.add_argument("--quick", action="store_true",
                        help=f"only {len(QUICK)} nights and the greedy solver")  # fmt: skip
    parser.add_argument("--wall-clock", action="store_true",
                        help="the optimiser against the clock, not in its deterministic mode")
    parser.add_argument("--seed", type=int, default=2027, help="the suite's seed")
    parser.add_argument("--json", metavar="FILE", type=Path, help="also write the rows here")
    return parser.parse_args(argv)


def select(names: list[str], only: str | None, quick: bool) -> list[str]:
    if only is not None:
        if only not in names:
            sys.exit(f"bench_measurable: no night {only!r}; nights: {', '.join(names)}")
        return [only]
    return [n for n in names if n in QUICK] if quick else names


def main(argv: list[str] | None = None) -> None:
    args = parse_args(argv)
    nights = {n.name: n for n in night_suite.suite(args.seed)}
    names = select([DEMO, *nights], args.only, args.quick)
    solvers = ("greedy",) if args.quick else ("greedy", "optimize")
    print(f"Measurability benchmark on INVENTED nights (night_suite, seed {args.seed}) and the "
          "fictional demo night (configuration long).")  # fmt: skip
    settings = PlanSettings(time_limit_s=args.time_limit, deterministic=not args.wall_clock)
    mode = "against the clock" if args.wall_clock else "deterministic mode"
    limit = "" if args.quick else f" (limit {args.time_limit:g} s, {mode})"
    print(f"Blind (science sizes removed) vs aware planning with {' and '.join(solvers)}{limit}"
          f", {os.cpu_count()} cores; every science visit judged every {SAMPLE_S:g} s on the "
          "true sizes.\n")  # fmt: skip
    print(LEGEND + "\n")
    print(TITLE)
    print(HEADER)
    rows: list[Row] = []
    for name in names:
        case = demo_case() if name == DEMO else suite_case(nights[name])
        new = run_case(case, solvers, settings)
        for k, r in enumerate(new):
            print(show(r, k == 0), flush=True)
        rows += new
    summary = print_summary(rows)
    print_flags(rows)
    if args.json is not None:
        doc = {"seed": args.seed, "time_limit_s": args.time_limit, "invented": True,
               "deterministic": settings.deterministic,
               "solvers": solvers, "rows": [asdict(r) for r in rows], "summary": summary}
        args.json.write_text(json.dumps(doc, indent=2) + "\n")


if __name__ == "__main__":
    main()
