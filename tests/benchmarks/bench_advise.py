"""Benchmark: ``opdplan advise``, every set-up choice (configuration x routing of
stations to delay lines x fixed delays on the lines) ranked for tonight's pool, on the
fictional demo night (``catalogs/demo_array.toml``, ``demo_targets.csv``, 2027-04-18)
and on INVENTED scenarios built here from nights of ``night_suite.py``.

Scenarios.  The demo has 6 delay lines, 4 fixed-delay options on rail-2 and rail-4,
free routing and 3 configurations (compact, medium, long).  Each invented scenario takes
a suite night whose array has at least 6 delay lines (saltpan, larkstone, thornvale,
dustwillow, windgap), keeps its first 6 lines and its catalog, and edits the array
document before ``parse_array``: ``routing = {free = true}``; ``[[fixed_delays]]`` with
4 options ``0, s, 2s, 3s`` (s drawn 8-20 % of the line's range, rounded to 5 m) on 2
lines drawn from the 6; and 3 configurations of different station subsets: ``six``
(the stations fed tonight on the 6 kept lines, tonight's offsets), ``five`` and
``four`` (5 and 4 stations drawn from all the array's stations; a station fed tonight
keeps its line and offset, any other takes the first free line with no offset).  All
draws come from ``default_rng([seed, k])``; nothing real is named.

1. Speed goal (all combinations of a 6-line array with 4 fixed-delay options on 2
   lines and 3 configurations ranked in at most 10 s on 2 cores): wall time of
   ``rank_choices`` over all 3 configurations, exhaustive, top 5, 5-minute step (the
   command's defaults), on the night problem already built.  Median of 3 runs (1 with
   --quick), and the slowest run; PASS when the median is at most 10 s (the machine may
   be shared: the slowest run is shown, not judged).  Combinations and distinct choices
   (after merging equivalent ones) are those of the ranking's space reports.

2. Speed ratio against the straightforward way, measured in the same run: for a random
   sample (seeded) of 30 distinct choices of the configuration with the most distinct
   choices, each choice is made a configuration (``Choice.as_configuration``,
   ``ArrayModel.with_configuration``, ``beams``) and ``observable_windows`` is run on
   the problem with those beams (every target, 60 s grid with bisection), summing
   priority x observable hours over the science targets.  The mean time per choice is
   extrapolated to all combinations of that configuration (the straightforward way
   does not merge) and to its distinct choices; each is divided by the vectorised time
   of that configuration (its space report in the median run of 1).  Agreement: for the
   same sampled choices, ``score_choices`` hours per science target must match the
   windows' hours within one ranking step per window edge inside the night (edges at
   the night's start and end are exact in both); the worst difference and any target
   beyond the tolerance are reported (beyond it: a bug).

3. Quality: the ranking of 1 is planned like the command does
   (``advisor.plan_options``: the top 5, and each configuration's best and tonight's
   set-up) with the greedy queue and, unless --quick, the optimiser in its
   deterministic mode with a 2 s limit per choice.  Per scenario: the planned value of
   the advised best choice (best planned value) against tonight's set-up of the same
   configuration, and the same for the ranking's first choice (the hours' pick, before
   planning; ``wh``: its weighted hours over tonight's); medians over scenarios.  The
   suite places its targets within tonight's reach, so tonight's set-up is a strong
   baseline there: a ratio of 1 says the advice lost nothing.  Search: on every
   scenario (the demo only with --quick; all are enumerable) ``rank_choices`` is run
   again with ``max_exhaustive=0`` so that every configuration is searched
   (``searched_space``); per configuration, the best weighted hours found over the
   exhaustive best, and the choices the search scored.

The exit status stays 0 whatever is measured; only an exception makes it non-zero.

Run: ``python tests/benchmarks/bench_advise.py [--quick] [--seed 2027] [--json FILE]``
"""

from __future__ import annotations

import argparse
import copy
import json
import math
import os
import statistics
import time
from dataclasses import asdict, dataclass, replace
from pathlib import Path
from typing import Any

import night_suite
import numpy as np

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.advise.advisor import PlannedOption, plan_options
from scheduler.advise.rank import Ranking, rank_choices
from scheduler.advise.score import pool_sky, score_choices
from scheduler.advise.space import whole_space
from scheduler.cli.commands.common import load_inputs
from scheduler.geometry.windows import observable_windows
from scheduler.model.array import ArrayModel
from scheduler.model.plan import PlanSettings
from scheduler.model.problem import NightProblem

ROOT = Path(__file__).resolve().parents[2]
DEMO = "demo"
DEMO_ARRAY = ROOT / "catalogs" / "demo_array.toml"
DEMO_TARGETS = ROOT / "catalogs" / "demo_targets.csv"
DEMO_NIGHT = "2027-04-18"
SUITE = ("saltpan", "larkstone", "thornvale", "dustwillow", "windgap")
QUICK_SUITE = ("saltpan", "dustwillow")
LINES = 6
OPTION_LINES = 2
OPTIONS = 4
OPTION_STEP = (0.08, 0.20)  # of the line's range
SUBSETS = (("five", 5), ("four", 4))  # besides "six", the stations fed tonight
GOAL_S = 10.0
STEP_S = 300.0  # --step-min 5, the command's default
TOP = 5  # --top, the command's default
RUNS, QUICK_RUNS = 3, 1
SAMPLE = 30
OPT_LIMIT_S = 2.0
EDGE_EPS_S = 1.0  # a window edge this near the night's start or end is the night's


@dataclass(frozen=True)
class Scenario:
    name: str
    description: str
    array: ArrayModel
    base: NightProblem
    configurations: tuple[str, ...]


@dataclass(frozen=True)
class Speed:
    """Part 1: the ranking's wall time (median, fastest, slowest run), combinations,
    distinct choices."""

    seconds: float
    best_s: float
    worst_s: float
    runs: int
    combinations: int
    distinct: int
    per_config: dict[str, tuple[int, int, float]]  # combinations, distinct, seconds
    passed: bool


@dataclass(frozen=True)
class Baseline:
    """Part 2: the straightforward way on a sample of one configuration's choices."""

    configuration: str
    sampled: int
    per_choice_s: float
    combinations: int
    distinct: int
    vectorised_s: float
    ratio_combinations: float  # per-choice x combinations / vectorised
    ratio_distinct: float  # per-choice x distinct / vectorised
    worst_diff_h: float  # |vectorised - windows| hours, one target of one choice
    worst_excess: float  # worst |diff| / tolerance (<= 1: agrees)
    worst_weighted_diff: float  # |weighted hours vectorised - windows|
    weighted_tolerance: float  # sum priority x edges x step (h) at that choice
    beyond: tuple[str, ...]  # (choice, target) pairs beyond the tolerance


@dataclass(frozen=True)
class Quality:
    """Part 3: planned values under one solver."""

    solver: str
    planned: int
    advised: str
    advised_changes: int
    advised_value: float
    tonight_value: float
    ratio: float
    top_ranked: str
    top_value: float
    top_ratio: float
    top_hours_ratio: float  # its weighted hours / tonight's (same configuration)
    seconds: float


@dataclass(frozen=True)
class Search:
    """Part 3: the search against the exhaustive best, per configuration."""

    per_config: dict[str, tuple[float, float, int, int]]  # exhaustive, searched, scored, distinct
    worst_ratio: float
    overall_ratio: float  # best over all configurations, searched / exhaustive
    seconds: float


# --- the scenarios ---------------------------------------------------------------------


def demo_scenario() -> Scenario:
    inputs = load_inputs(DEMO_ARRAY, "compact", DEMO_TARGETS, DEMO_NIGHT)
    configs = tuple(c.name for c in inputs.array.configurations)
    text = (f"fictional demo: {len(inputs.array.delay_lines)} lines, fixed delays on "
            f"{', '.join(f.line for f in inputs.array.fixed_delays)}, free routing, "
            f"configurations {', '.join(configs)}")  # fmt: skip
    return Scenario(DEMO, text, inputs.array, inputs.problem(), configs)


def six_line_document(night: night_suite.Night, rng: np.random.Generator) -> dict[str, Any]:
    """The night's array document cut to 6 lines, with fixed-delay options, free routing
    and 3 configurations of different station subsets."""
    doc = copy.deepcopy(night.array)
    lines = doc["delay_lines"][:LINES]
    names = [d["name"] for d in lines]
    tonight = doc["configurations"][0]
    line_of = {st: ln for ln, st in tonight["feeds"].items() if ln in names}
    offsets = {ln: f for ln, f in tonight.get("fixed_offsets_m", {}).items() if ln in names}
    stations = [s["name"] for s in doc["stations"]]

    def config(name: str, chosen: list[str]) -> dict[str, Any]:
        feeds = {line_of[st]: st for st in chosen if st in line_of}
        free = [ln for ln in names if ln not in feeds]
        feeds.update(zip(free, [st for st in chosen if st not in line_of], strict=False))
        ordered = {ln: feeds[ln] for ln in names if ln in feeds}
        out: dict[str, Any] = {"name": name, "feeds": ordered,
                               "description": f"invented {len(chosen)}-station configuration"}
        kept = {ln: f for ln, f in offsets.items()
                if ln in ordered and line_of.get(ordered[ln]) == ln}  # fmt: skip
        if kept:
            out["fixed_offsets_m"] = kept
        return out

    configs = [config("six", list(line_of))]
    for name, size in SUBSETS:
        configs.append(config(name, [str(s) for s in rng.choice(stations, size, replace=False)]))
    fixed = []
    for k in sorted(rng.choice(LINES, OPTION_LINES, replace=False).tolist()):
        step = 5.0 * max(1, round(float(rng.uniform(*OPTION_STEP)) * lines[k]["opd_max_m"] / 5.0))
        fixed.append({"line": names[k], "options_m": [step * j for j in range(OPTIONS)]})
    doc["delay_lines"] = lines
    doc["configurations"] = configs
    doc["fixed_delays"] = fixed
    doc["routing"] = {"free": True}
    return doc


def suite_scenario(night: night_suite.Night, seed: int, k: int) -> Scenario:
    doc = six_line_document(night, np.random.default_rng([seed, k]))
    edited = replace(night, array=doc, config="six")
    array, targets = night_suite.load(edited)
    base = night_suite.problem(edited, (array, targets))
    sizes = "/".join(str(len(c.feeds)) for c in array.configurations)
    opts = "; ".join(f"{f.line} {'/'.join(f'{v:g}' for v in f.options_m)} m"
                     for f in array.fixed_delays)  # fmt: skip
    text = (f"invented, from suite night {night.name}: {len(array.delay_lines)} lines, "
            f"{len(array.stations)} stations, configurations six/five/four of {sizes} "
            f"stations, fixed delays {opts}, free routing, "
            f"{int(targets.is_science.sum())} science targets")  # fmt: skip
    return Scenario(f"{night.name}-6", text, array, base,
                    tuple(c.name for c in array.configurations))  # fmt: skip


# --- 1. speed goal ---------------------------------------------------------------------


def speed(sc: Scenario, runs: int, seed: int) -> tuple[Speed, Ranking]:
    """Time ``rank_choices`` ``runs`` times; the median run's ranking is returned."""
    timed: list[tuple[float, Ranking]] = []
    for _ in range(runs):
        t0 = time.perf_counter()
        ranking = rank_choices(sc.array, sc.base, list(sc.configurations), TOP, STEP_S, seed)
        timed.append((time.perf_counter() - t0, ranking))
    timed.sort(key=lambda x: x[0])
    seconds, ranking = timed[len(timed) // 2]
    if not all(r.exhaustive for r in ranking.reports):
        raise RuntimeError(f"{sc.name}: a space was searched, not enumerated")
    per = {r.configuration: (r.combinations, r.distinct, r.seconds) for r in ranking.reports}
    worst = timed[-1][0]
    return Speed(seconds, timed[0][0], worst, runs, sum(v[0] for v in per.values()),
                 sum(v[1] for v in per.values()), per, seconds <= GOAL_S), ranking  # fmt: skip


# --- 2. the straightforward way --------------------------------------------------------


def interior_edges(observable: tuple[tuple[float, float], ...], start: float,
                   end: float) -> int:  # fmt: skip
    """Window edges strictly inside the night (the night's own ends are exact)."""
    return sum((a > start + EDGE_EPS_S) + (b < end - EDGE_EPS_S) for a, b in observable)


def baseline(sc: Scenario, ranking: Ranking, seed: int) -> Baseline:
    reports = {r.configuration: r for r in ranking.reports}
    cfg = max(sc.configurations, key=lambda c: reports[c].distinct)
    space = whole_space(sc.array, cfg)
    rng = np.random.default_rng([seed, 4242])
    picks = np.sort(rng.choice(len(space), min(SAMPLE, len(space)), replace=False))
    science = np.flatnonzero(sc.base.targets.is_science)
    priority = sc.base.targets.priority[science].astype(float)
    hours = np.zeros((len(picks), len(science)))
    edges = np.zeros((len(picks), len(science)), int)
    weighted = np.zeros(len(picks))
    night = sc.base.night
    spent = 0.0
    for row, c in enumerate(picks):
        t0 = time.perf_counter()
        name = f"{cfg}~sample"
        arr = sc.array.with_configuration(space.choice(int(c)).as_configuration(name))
        windows = observable_windows(replace(sc.base, beams=arr.beams(name)))
        weighted[row] = sum(p * windows[i].hours for p, i in zip(priority, science, strict=True))
        spent += time.perf_counter() - t0
        hours[row] = [windows[i].hours for i in science]
        edges[row] = [interior_edges(windows[i].observable, night.start_s, night.end_s)
                      for i in science]  # fmt: skip
    sky = pool_sky(replace(sc.base, beams=sc.array.beams(cfg)), STEP_S)
    lo, hi = space.constants(sc.array)
    vec = score_choices(sky, lo[picks], hi[picks])
    if not np.array_equal(sky.science, science):
        raise RuntimeError(f"{sc.name}: the scored targets are not the science targets")
    step_h = sky.step_s / 3600.0
    diff = np.abs(vec.hours - hours)
    tol = edges * step_h
    excess = np.where(tol > 0, diff / np.where(tol > 0, tol, 1.0),
                      np.where(diff > 1e-9, np.inf, 0.0))  # fmt: skip
    names = sc.base.targets.names
    beyond = tuple(f"choice {int(picks[r])} {names[science[t]]}: vectorised "
                   f"{vec.hours[r, t]:.3f} h, windows {hours[r, t]:.3f} h, "
                   f"{edges[r, t]} edge(s)" for r, t in zip(*np.nonzero(excess > 1.0),
                                                             strict=True))  # fmt: skip
    wdiff = np.abs(vec.weighted_hours - weighted)
    worst = int(np.argmax(wdiff))
    per_choice = spent / len(picks)
    vec_s = reports[cfg].seconds
    combos, distinct = reports[cfg].combinations, reports[cfg].distinct
    return Baseline(cfg, len(picks), per_choice, combos, distinct, vec_s,
                    per_choice * combos / vec_s, per_choice * distinct / vec_s,
                    float(diff.max()), float(excess.max()), float(wdiff[worst]),
                    float(np.sum(priority * edges[worst]) * step_h), beyond)  # fmt: skip


# --- 3. quality ------------------------------------------------------------------------


def quality(sc: Scenario, ranking: Ranking, solver: str, seed: int) -> Quality:
    settings = PlanSettings(time_limit_s=OPT_LIMIT_S, seed=seed, deterministic=True)
    t0 = time.perf_counter()
    planned = plan_options(sc.array, sc.base, ranking, settings, solver)
    seconds = time.perf_counter() - t0

    def tonight(cfg: str) -> PlannedOption:
        return next(p for p in planned
                    if p.option.is_current and p.option.choice.configuration == cfg)  # fmt: skip

    best = planned[0]
    first = next(p for p in planned if p.option is ranking.options[0])
    cfg_first = first.option.choice.configuration
    hours_now = next(o.weighted_hours for o in ranking.options
                     if o.is_current and o.choice.configuration == cfg_first)  # fmt: skip
    base_best = tonight(best.option.choice.configuration).value
    base_first = tonight(cfg_first).value
    return Quality(solver, len(planned), best.configuration.name, len(best.option.changes),
                   best.value, base_best, ratio(best.value, base_best),
                   first.configuration.name, first.value, ratio(first.value, base_first),
                   ratio(first.option.weighted_hours, hours_now), seconds)  # fmt: skip


def search(sc: Scenario, exhaustive: Ranking, seed: int) -> Search:
    t0 = time.perf_counter()
    searched = rank_choices(sc.array, sc.base, list(sc.configurations), TOP, STEP_S, seed,
                            max_exhaustive=0)  # fmt: skip
    seconds = time.perf_counter() - t0
    if any(r.exhaustive for r in searched.reports):
        raise RuntimeError(f"{sc.name}: max_exhaustive=0 still enumerated a space")
    scored = {r.configuration: r.distinct for r in searched.reports}
    exh_distinct = {r.configuration: r.distinct for r in exhaustive.reports}
    per = {}
    for cfg in sc.configurations:
        full = max(o.weighted_hours for o in exhaustive.options if o.choice.configuration == cfg)
        found = max(o.weighted_hours for o in searched.options if o.choice.configuration == cfg)
        per[cfg] = (full, found, scored[cfg], exh_distinct[cfg])
    overall = ratio(max(v[1] for v in per.values()), max(v[0] for v in per.values()))
    return Search(per, min(ratio(v[1], v[0]) for v in per.values()), overall, seconds)


# --- the report ------------------------------------------------------------------------


def ratio(a: float, b: float) -> float:
    if b > 0:
        return a / b
    return 1.0 if a <= 0 else math.inf


def parse_args(argv: list[str] | None = None) -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0] if __doc__ else "")
    parser.add_argument("--quick", action="store_true",
                        help=f"the demo and {len(QUICK_SUITE)} scenarios, one timing run, "
                        "greedy only, search on the demo only")  # fmt: skip
    parser.add_argument("--seed", type=int, default=2027, help="the suite's and the draws' seed")
    parser.add_argument("--json", metavar="FILE", type=Path, help="also write the figures here")
    return parser.parse_args(argv)


def cores() -> str:
    usable = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else None
    return f"{os.cpu_count()} cores" + (f" ({usable} usable)" if usable is not None else "")


def main(argv: list[str] | None = None) -> None:
    args = parse_args(argv)
    runs = QUICK_RUNS if args.quick else RUNS
    solvers = ("greedy",) if args.quick else ("greedy", "optimize")
    nights = {n.name: n for n in night_suite.suite(args.seed)}
    chosen = QUICK_SUITE if args.quick else SUITE
    print(f"Set-up advice benchmark: the fictional demo night and INVENTED scenarios from "
          f"night_suite (seed {args.seed}); {cores()}; step {STEP_S / 60:g} min, top {TOP}.")
    print("Scenarios:")
    scenarios = [demo_scenario()]
    scenarios += [suite_scenario(nights[n], args.seed, SUITE.index(n)) for n in chosen]
    for sc in scenarios:
        print(f"  {sc.name:14s} {sc.description}")
    doc: dict[str, Any] = {"seed": args.seed, "quick": args.quick, "invented": True,
                           "cores": os.cpu_count(), "step_s": STEP_S, "goal_s": GOAL_S,
                           "scenarios": {}}  # fmt: skip

    print(f"\n1. Speed goal: every choice of the 3 configurations ranked in <= {GOAL_S:g} s "
          f"(rank_choices, median of {runs} run(s) against the goal)")
    print(f"{'scenario':14s} {'combos':>7s} {'distinct':>8s} {'median s':>8s} {'best s':>6s} "
          f"{'worst s':>7s}"
          f"  per configuration (combinations/distinct/s)")  # fmt: skip
    rankings: dict[str, Ranking] = {}
    speeds: dict[str, Speed] = {}
    for sc in scenarios:
        sp, rankings[sc.name] = speed(sc, runs, args.seed)
        speeds[sc.name] = sp
        per = "  ".join(f"{c} {v[0]}/{v[1]}/{v[2]:.2f}" for c, v in sp.per_config.items())
        print(f"{sc.name:14s} {sp.combinations:7d} {sp.distinct:8d} {sp.seconds:8.2f} "
              f"{sp.best_s:6.2f} {sp.worst_s:7.2f}  {'PASS' if sp.passed else 'FAIL'}  {per}",
              flush=True)  # fmt: skip
        doc["scenarios"][sc.name] = {"description": sc.description, "speed": asdict(sp)}
    every = all(s.passed for s in speeds.values())
    print(f"{'PASS' if every else 'FAIL'}: slowest median ranking "
          f"{max(s.seconds for s in speeds.values()):.2f} s, slowest run "
          f"{max(s.worst_s for s in speeds.values()):.2f} s (goal {GOAL_S:g} s)")

    print(f"\n2. Vectorised ranking vs the straightforward way ({SAMPLE} sampled choices of the "
          "configuration with the most distinct choices, observable_windows each)")
    print(f"{'scenario':14s} {'config':7s} {'ms/choice':>9s} {'vec s':>6s} {'x combos':>9s} "
          f"{'x distinct':>10s} {'worst dh':>8s} {'excess':>6s} {'worst dwh':>9s} "
          f"{'wh tol':>7s} beyond")  # fmt: skip
    bases: dict[str, Baseline] = {}
    for sc in scenarios:
        b = baseline(sc, rankings[sc.name], args.seed)
        bases[sc.name] = b
        print(f"{sc.name:14s} {b.configuration:7s} {b.per_choice_s * 1e3:9.1f} "
              f"{b.vectorised_s:6.2f} {b.ratio_combinations:9.0f} {b.ratio_distinct:10.0f} "
              f"{b.worst_diff_h:8.3f} {b.worst_excess:6.2f} {b.worst_weighted_diff:9.3f} "
              f"{b.weighted_tolerance:7.2f} {len(b.beyond)}", flush=True)  # fmt: skip
        doc["scenarios"][sc.name]["baseline"] = asdict(b)
    print(f"median speed-up: x{statistics.median(b.ratio_combinations for b in bases.values()):.0f}"
          f" against every combination, x"
          f"{statistics.median(b.ratio_distinct for b in bases.values()):.0f} against the "
          "distinct choices only")  # fmt: skip
    wrong = [(n, line) for n, b in bases.items() for line in b.beyond]
    if wrong:
        print(f"DISAGREE: {len(wrong)} (choice, target) pair(s) beyond one step per edge (a bug):")
        for n, line in wrong[:20]:
            print(f"  {n}: {line}")
    else:
        print("AGREE: vectorised hours within one ranking step per window edge everywhere")

    print(f"\n3. Quality: planned value of the advised best choice vs tonight's set-up of the "
          f"same configuration (plan_options; optimiser: deterministic, {OPT_LIMIT_S:g} s)")
    print(f"{'scenario':14s} {'solver':8s} {'plans':>5s} {'advised':14s} {'chg':>3s} "
          f"{'value':>8s} {'tonight':>8s} {'ratio':>6s} | {'ranked 1st':14s} {'value':>8s} "
          f"{'ratio':>6s} {'wh':>6s} {'s':>5s}")  # fmt: skip
    qualities: dict[str, list[Quality]] = {}
    for sc in scenarios:
        qualities[sc.name] = []
        for solver in solvers:
            q = quality(sc, rankings[sc.name], solver, args.seed)
            qualities[sc.name].append(q)
            print(f"{sc.name:14s} {solver:8s} {q.planned:5d} {q.advised:14s} "
                  f"{q.advised_changes:3d} {q.advised_value:8.1f} {q.tonight_value:8.1f} "
                  f"{q.ratio:6.3f} | {q.top_ranked:14s} {q.top_value:8.1f} {q.top_ratio:6.3f} "
                  f"{q.top_hours_ratio:6.3f} {q.seconds:5.1f}", flush=True)  # fmt: skip
        doc["scenarios"][sc.name]["quality"] = [asdict(q) for q in qualities[sc.name]]
    for k, solver in enumerate(solvers):
        adv = [qs[k].ratio for qs in qualities.values()]
        top = [qs[k].top_ratio for qs in qualities.values()]
        print(f"median over scenarios, {solver}: advised / tonight {statistics.median(adv):.3f}"
              f" (range {min(adv):.3f}-{max(adv):.3f}); ranked 1st / tonight "
              f"{statistics.median(top):.3f} (range {min(top):.3f}-{max(top):.3f})")  # fmt: skip
        doc[f"median_advised_ratio_{solver}"] = statistics.median(adv)
        doc[f"median_ranked_first_ratio_{solver}"] = statistics.median(top)

    searched = scenarios[:1] if args.quick else scenarios
    print("\n   Search (max_exhaustive=0: every configuration searched) vs the exhaustive best, "
          "weighted hours")
    print(f"{'scenario':14s} {'worst':>6s} {'overall':>7s} {'s':>5s}  per configuration "
          "(searched/exhaustive, choices scored of distinct)")  # fmt: skip
    for sc in searched:
        s = search(sc, rankings[sc.name], args.seed)
        per = "  ".join(f"{c} {v[1]:.1f}/{v[0]:.1f} ({v[2]} of {v[3]})"
                        for c, v in s.per_config.items())  # fmt: skip
        print(f"{sc.name:14s} {s.worst_ratio:6.3f} {s.overall_ratio:7.3f} {s.seconds:5.2f}  "
              f"{per}", flush=True)  # fmt: skip
        doc["scenarios"][sc.name]["search"] = asdict(s)
    if args.json is not None:
        args.json.write_text(json.dumps(doc, indent=2) + "\n")


if __name__ == "__main__":
    main()
