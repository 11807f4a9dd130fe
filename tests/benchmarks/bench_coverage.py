"""Benchmark: what placing visits for (u, v) coverage buys, on the INVENTED nights of
``night_suite.py`` and the fictional demo night (configuration medium, 2027-04-18).

Imaging targets: on a suite night, the science rows that want two visits or more; on
the demo night, those and the rows with an ``ha_spread_h``.  Each of them is made to
want ``--visits`` visits (default 3) at priority ``--priority`` (default 10, the
suite's highest, so that the plans hold some of them; 0 keeps the row's), its
``min_visits`` left empty (it earns only with all its visits, the catalog's rule).  Each
night is then planned with the same solver and settings from catalogs that differ only
there:

- "bare": ``ha_spread_h`` empty on every row; the visits of a target only need the row's
  ``min_separation_min`` between them;
- "spread": ``ha_spread_h`` = ``--spread-h`` (default 1.5) on every imaging target, its
  ``min_separation_min`` kept;
- "campaign" (unless --no-campaign): the bare catalog with a campaign file (written to
  a temporary folder, read by ``load_campaign``) that asks for one visit more of each
  imaging target than it wants tonight, with ``ha_spread_h`` = --spread-h, and one visit
  of each counted as done the night before with tonight's configuration: it starts one
  sidereal day before the target's first observable window tonight that holds a visit
  (the same hour angle as the earliest visit possible tonight).  Tonight keeps the same
  number of visits left, each earning on its own, kept the spread away from the earlier
  one and valued by the coverage it can still add (``scheduler.queue.campaign``).

Every imaging target of every plan is judged here, apart from the planner's scoring:
its planned visits are sampled every --step-s seconds (default 60, both ends of each
visit), the hour angle ``H`` is the local Earth rotation angle less the right ascension
of the target's CIRS place (both from the CIO), ``d`` the declination of that place, and
every pair of stations in use gives a ground baseline turned into the equatorial frame
(X to hour angle 0 on the equator, Y east, Z to the pole) and projected by the closed
form ``u = X sin H + Y cos H``, ``v = -X sin d cos H + Y sin d sin H + Z cos d``.  The
figures of those samples and their mirrors come from ``scheduler.geometry.uv.coverage``
on the disk whose radius is the longest ground baseline: *filled*, the share of the
disk within a tenth of that radius of a sample, and the largest empty sector of
position angle (deg, modulo 180).  Checks of the judge: its (u, v) against
``scheduler.geometry.uv_night.target_tracks`` (largest difference, metres), and every
pair of visits of a spread target (with the earlier night's visit, for the campaign)
at least the spread apart in mid-visit hour angle; a closer pair is a planner bug,
listed under a FAIL (the exit status stays 0).

Per night and solver, for each plan: imaging targets with a visit, the median filled
share and median largest position-angle gap over them, imaging visits placed, the
plan's value (its summary; the bare and spread rules are the same), and the ratios
spread / bare.  The campaign table judges every plan with the earlier night's visit
added to each target's samples (medians over every target with samples, so over the
same targets for all three) and gives the campaign plan's value under the catalog's
rule (``science_value`` with the bare catalog's rule; the campaign's own rule counts a
partial sequence) beside its own.  Overall, per solver: the medians pooled over the
imaging targets of all nights (also over every imaging target, one without a visit
counting as filled 0 with a 180 deg gap), the medians over the targets visited in both
plans (where only the placing differs) with the median hour-angle span of their visits
tonight, the sums, and the ratios.

Solvers: the greedy dispatcher and, unless --quick, the optimiser in its deterministic
mode with a short limit (--time-limit, default 10 s), so that the plans differ only by
the catalogs, never by the machine's load.

Run: ``python tests/benchmarks/bench_coverage.py [--quick] [--time-limit 10] [--seed 2027]
[--only NAME] [--visits 3] [--priority 10] [--spread-h 1.5] [--step-s 60] [--no-campaign]
[--json FILE]``
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import math
import os
import statistics
import sys
import tempfile
import time
from collections.abc import Callable
from dataclasses import asdict, dataclass, field
from pathlib import Path

import night_suite
import numpy as np
import pandas as pd

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.cli.commands.common import load_inputs
from scheduler.geometry.uv import coverage
from scheduler.geometry.uv_night import FILL_FRACTION_OF_DISK, target_tracks
from scheduler.geometry.windows import observable_windows
from scheduler.inputs.array_file import parse_array
from scheduler.inputs.campaign_file import load_campaign
from scheduler.inputs.catalog import parse_targets, read_table
from scheduler.model.array import ArrayModel
from scheduler.model.campaign import CampaignState, DoneVisit
from scheduler.model.plan import Plan, PlanSettings, Visit
from scheduler.model.problem import NightProblem
from scheduler.model.targets import HOUR_ANGLE_RAD_PER_H, Targets
from scheduler.queue.campaign import campaign_night
from scheduler.queue.planner import plan_night
from scheduler.queue.scoring import science_value
from scheduler.queue.value import ValueRule

ROOT = Path(__file__).resolve().parents[2]
DEMO = "demo"
DEMO_ARRAY = ROOT / "catalogs" / "demo_array.toml"
DEMO_TARGETS = ROOT / "catalogs" / "demo_targets.csv"
DEMO_CONFIG = "medium"
DEMO_DATE = "2027-04-18"
DEFAULT_LIMIT_S = 10.0
DEFAULT_VISITS = 3
DEFAULT_SPREAD_H = 1.5
DEFAULT_PRIORITY = 10
DEFAULT_STEP_S = 60.0
SIDEREAL_DAY_S = 86164.0905  # the hour angle comes back after this many seconds
SPREAD_TOL_RAD = 2 * math.pi / SIDEREAL_DAY_S * 5.0  # 5 s of hour angle: timing rounding
EMPTY_GAP_DEG = 180.0  # the position-angle gap of a target with no visit


@dataclass(frozen=True)
class Case:
    """One night: its three problems (same targets, same order), the imaging targets
    (catalog indices), the earlier night's visit of each (POSIX s; absent: none), the
    spread asked for (rad)."""

    name: str
    problems: dict[str, NightProblem]
    imaging: tuple[int, ...]
    earlier: dict[int, tuple[float, float]]
    spread_rad: float


@dataclass(frozen=True)
class TargetScore:
    """One imaging target in one plan, as judged here."""

    target: str
    visits: int
    filled: float
    pa_gap_deg: float
    ha_span_h: float  # first to last mid-visit hour angle tonight (0 with < 2 visits)
    sampled: bool  # any samples: a visit tonight, or the earlier night's when counted


@dataclass(frozen=True)
class Score:
    """One plan as judged here (``targets``: the imaging targets, in catalog order)."""

    targets: tuple[TargetScore, ...]
    imaging_visits: int
    value: float  # the plan's own value (its summary)
    catalog_value: float  # the value under the bare catalog's rule
    too_close: tuple[str, ...] = ()  # pairs of visits closer in hour angle than the spread

    @property
    def visited(self) -> int:
        """Imaging targets with at least one visit."""
        return sum(t.visits > 0 for t in self.targets)

    @property
    def filled(self) -> float:
        """Median filled share over the imaging targets with samples (NaN: none)."""
        return median([t.filled for t in self.targets if t.sampled])

    @property
    def pa_gap_deg(self) -> float:
        """Median largest position-angle gap over the imaging targets with samples."""
        return median([t.pa_gap_deg for t in self.targets if t.sampled])


@dataclass(frozen=True)
class Row:
    night: str
    solver: str
    imaging: int  # imaging targets of the night
    bare: Score
    spread: Score
    campaign: Score | None  # None: --no-campaign
    bare_e: Score | None  # the bare plan with the earlier night's visit added
    spread_e: Score | None
    uv_check_m: float  # largest |(u, v) here - target_tracks| over the night's plans
    plan_s: dict[str, float] = field(default_factory=dict)  # wall time per variant


def median(xs: list[float]) -> float:
    return float(statistics.median(xs)) if xs else math.nan


def ratio(a: float, b: float) -> float:
    if math.isnan(a) or math.isnan(b):
        return math.nan
    if b > 0:
        return a / b
    return 1.0 if a <= 0 else math.inf


# --- the judge -------------------------------------------------------------------------


def equatorial_baselines(problem: NightProblem) -> np.ndarray:
    """(P, 3) every pair of stations in use (second minus first, pairs i < j), in the
    equatorial frame: X to hour angle 0 on the equator, Y east, Z to the pole."""
    pos = problem.beams.position_enu_m
    a, b = np.triu_indices(len(pos), k=1)
    e, n, up = (pos[b] - pos[a]).T
    lat = problem.night.frame.latitude_rad
    return np.column_stack([-math.sin(lat) * n + math.cos(lat) * up, e,
                            math.cos(lat) * n + math.sin(lat) * up])  # fmt: skip


def samples(spans: list[tuple[float, float]], step_s: float) -> np.ndarray:
    """Times every ``step_s`` within each span, both ends included."""
    parts = [np.append(np.arange(a, b, step_s), b) for a, b in spans if b > a]
    return np.concatenate(parts) if parts else np.zeros(0)


def uv_of(problem: NightProblem, i: int, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(u, v) metres, each (P, T), of target ``i`` at times ``t`` by the closed form."""
    xyz = equatorial_baselines(problem)
    h = hour_angle(problem, i, t)
    d = float(problem.di_rad[i])
    x, y, z = xyz[:, 0, None], xyz[:, 1, None], xyz[:, 2, None]
    u = x * np.sin(h) + y * np.cos(h)
    v = -x * math.sin(d) * np.cos(h) + y * math.sin(d) * np.sin(h) + z * math.cos(d)
    return u, v


def uv_check(problem: NightProblem, i: int, spans: list[tuple[float, float]],
             step_s: float) -> float:  # fmt: skip
    """Largest difference (m) between the judge's (u, v) and ``target_tracks``'s."""
    tr = target_tracks(problem, i, spans, step_s)
    if not tr.t_s.size:
        return 0.0
    u, v = uv_of(problem, i, tr.t_s)
    du = np.abs(u - tr.uvw_m[..., 0]) + np.abs(v - tr.uvw_m[..., 1])
    return float(np.max(du))


def hour_angle(problem: NightProblem, i: int, t: np.ndarray | float) -> np.ndarray:
    """Hour angle (rad) of target ``i``: the local Earth rotation angle less the right
    ascension of its CIRS place (both counted from the CIO; polar motion and diurnal
    aberration, below an arcsecond, left out)."""
    return np.asarray(problem.night.frame.local_era(t) - problem.ri_rad[i])


def ha_apart(a: float, b: float) -> float:
    """Hour-angle difference (rad) of two hour angles, folded to [0, pi]."""
    return abs(math.remainder(a - b, 2 * math.pi))


def judge(problem: NightProblem, plan: Plan, case: Case, rule: ValueRule, step_s: float,
          with_earlier: bool, spread_rad: float) -> Score:  # fmt: skip
    """Judge the imaging targets of ``plan`` (``with_earlier``: the earlier night's visit
    added to each target's samples; ``spread_rad`` > 0: pairs of visits closer in hour
    angle are listed)."""
    disk = float(np.max(np.linalg.norm(equatorial_baselines(problem), axis=1), initial=0.0))
    mine: dict[int, list[Visit]] = {i: [] for i in case.imaging}
    for v in plan.visits:
        if v.is_science and v.target in mine:
            mine[v.target].append(v)
    scores, close = [], []
    for i in case.imaging:
        visits = mine[i]
        spans = [(v.start_s, v.end_s) for v in visits]
        mids = [hour_angle(problem, i, 0.5 * (v.start_s + v.end_s)) for v in visits]
        names = [v.id for v in visits]
        if with_earlier and i in case.earlier:
            spans.append(case.earlier[i])
            mids.append(hour_angle(problem, i, 0.5 * sum(case.earlier[i])))
            names.append(f"{problem.targets.names[i]} (earlier night)")
        if spread_rad > 0:
            for a in range(len(mids)):
                for b in range(a + 1, len(mids)):
                    gap = ha_apart(float(mids[a]), float(mids[b]))
                    if gap < spread_rad - SPREAD_TOL_RAD:
                        close.append(f"{names[a]} and {names[b]}: "
                                     f"{gap / HOUR_ANGLE_RAD_PER_H:.3f} h apart")  # fmt: skip
        tonight = [float(m) for m in mids[: len(visits)]]
        span_h = (max(ha_apart(x, tonight[0]) for x in tonight) / HOUR_ANGLE_RAD_PER_H
                  if len(tonight) > 1 else 0.0)  # fmt: skip
        if spans:
            u_m, v_m = uv_of(problem, i, samples(spans, step_s))
            cov = coverage(u_m, v_m, disk, FILL_FRACTION_OF_DISK * disk)
            filled, gap_deg = cov.fill, math.degrees(cov.position_angle_gap_rad)
        else:
            filled, gap_deg = 0.0, EMPTY_GAP_DEG
        scores.append(TargetScore(problem.targets.names[i], len(visits), round(filled, 4),
                                  round(gap_deg, 2), round(span_h, 3), bool(spans)))  # fmt: skip
    return Score(tuple(scores), sum(len(v) for v in mine.values()),
                 plan.summary.weighted_value,
                 round(science_value(list(plan.visits), rule), 4), tuple(close))  # fmt: skip


# --- the cases -------------------------------------------------------------------------


def imaging_rows(rows: list[dict[str, str]], demo: bool) -> list[int]:
    """Rows of the imaging targets (see the module docstring)."""
    out = []
    for k, r in enumerate(rows):
        if str(r.get("kind", "")).strip().lower() == "calibrator":
            continue
        many = float(r.get("visits") or 1) >= 2
        spread = demo and float(r.get("ha_spread_h") or 0) > 0
        if many or spread:
            out.append(k)
    return out


def variant_rows(rows: list[dict[str, str]], imaging: list[int], visits: int, priority: int,
                 spread_h: float | None) -> list[dict[str, str]]:  # fmt: skip
    """The rows with the imaging targets wanting ``visits`` visits at ``priority`` (0:
    the row's) and ``ha_spread_h`` set (None: emptied on every row)."""
    out = []
    for k, r in enumerate(rows):
        row = dict(r)
        row["ha_spread_h"] = "" if spread_h is None or k not in imaging else f"{spread_h:g}"
        if k in imaging:
            row["visits"] = str(visits)
            if priority > 0:
                row["priority"] = str(priority)
        out.append(row)
    return out


def earlier_visits(problem: NightProblem, imaging: tuple[int, ...]) -> dict[int, tuple[float,
                                                                                    float]]:
    """Per imaging target, a visit one sidereal day before the start of its first
    observable window tonight that holds a visit (none without such a window)."""
    idx = np.array(imaging, int)
    out = {}
    for i, w in zip(imaging, observable_windows(problem.subset(idx)), strict=True):
        d = float(problem.targets.duration_s[i])
        fits = [a for a, b in w.observable if b - a >= d]
        if fits:
            start = fits[0] - SIDEREAL_DAY_S
            out[i] = (start, start + d)
    return out


def campaign_problem(bare: NightProblem, array: ArrayModel, imaging: tuple[int, ...],
                     earlier: dict[int, tuple[float, float]], visits: int,
                     spread_h: float) -> NightProblem:  # fmt: skip
    """The bare night with a campaign file asking for one visit more than ``visits`` of
    each imaging target, the earlier night's ones done."""
    t, cfg = bare.targets, bare.beams.configuration
    lines = ['[campaign]\nname = "coverage benchmark (invented)"\n']
    for i in imaging:
        want = visits + (1 if i in earlier else 0)
        lines.append(f"[[targets]]\ntarget = {json.dumps(t.names[i])}\n"
                     f"visits = {{ {json.dumps(cfg)} = {want} }}\nha_spread_h = {spread_h:g}\n")
    night = bare.night.date - dt.timedelta(days=1)
    done = tuple(DoneVisit(night, f"{t.names[i]}#1", t.names[i], cfg, a, b, "benchmark")
                 for i, (a, b) in earlier.items())  # fmt: skip
    with tempfile.TemporaryDirectory(prefix="bench_coverage_") as folder:
        path = Path(folder) / "campaign.toml"
        path.write_text("\n".join(lines))
        campaign = load_campaign(path, t, array)
    return campaign_night(bare, CampaignState(campaign, done))


def make_case(name: str, rows: list[dict[str, str]], demo: bool, array: ArrayModel,
              problem_of: Callable[[Targets], NightProblem],
              args: argparse.Namespace) -> Case:  # fmt: skip
    """The case of a night from its catalog rows and a way to make its problem."""
    imaging = imaging_rows(rows, demo)
    modes = [m.name for m in array.modes]
    problems = {}
    for variant, spread in (("bare", None), ("spread", args.spread_h)):
        frame = pd.DataFrame(variant_rows(rows, imaging, args.visits, args.priority, spread))
        targets = parse_targets(frame, f"<{name} targets, {variant}>", modes)
        problems[variant] = problem_of(targets)
    bare = problems["bare"]
    if bare.targets.names != problems["spread"].targets.names:
        raise RuntimeError(f"{name}: the variants' catalogs differ in order")
    idx = tuple(bare.targets.index(str(rows[k]["name"]).strip()) for k in imaging)
    earlier: dict[int, tuple[float, float]] = {}
    if args.campaign:
        earlier = earlier_visits(bare, idx)
        problems["campaign"] = campaign_problem(bare, array, idx, earlier, args.visits,
                                                args.spread_h)  # fmt: skip
    return Case(name, problems, idx, earlier, args.spread_h * HOUR_ANGLE_RAD_PER_H)


def suite_case(night: night_suite.Night, args: argparse.Namespace) -> Case:
    array = parse_array(night.array, f"<{night.name} array>")
    return make_case(night.name, night.rows, False, array,
                     lambda targets: night_suite.problem(night, (array, targets)), args)


def demo_case(args: argparse.Namespace) -> Case:
    frame = read_table(DEMO_TARGETS)
    rows = [{str(k): "" if pd.isna(v) else str(v) for k, v in r.items()}
            for r in frame.to_dict("records")]  # fmt: skip
    plain = load_inputs(DEMO_ARRAY, DEMO_CONFIG, DEMO_TARGETS, DEMO_DATE)
    return make_case(DEMO, rows, True, plain.array,
                     lambda targets: load_inputs(DEMO_ARRAY, DEMO_CONFIG, targets,
                                                 DEMO_DATE).problem(), args)  # fmt: skip


def run_case(case: Case, solvers: tuple[str, ...], settings: PlanSettings,
             step_s: float) -> list[Row]:  # fmt: skip
    bare = case.problems["bare"]
    rule = ValueRule.of(bare.targets, settings)
    rows = []
    for solver in solvers:
        plans: dict[str, Plan] = {}
        wall: dict[str, float] = {}
        for variant, problem in case.problems.items():
            t0 = time.perf_counter()
            plans[variant] = plan_night(problem, settings, solver)
            wall[variant] = round(time.perf_counter() - t0, 2)
        spans: dict[int, list[tuple[float, float]]] = {}
        for p in plans.values():
            for v in p.visits:
                if v.is_science and v.target in case.imaging:
                    spans.setdefault(v.target, []).append((v.start_s, v.end_s))
        check = max((uv_check(bare, i, s, step_s) for i, s in spans.items()), default=0.0)
        spread = case.spread_rad
        scores = {key: judge(bare, plans[variant], case, rule, step_s, earlier, s)
                  for key, variant, earlier, s in (
                      ("bare", "bare", False, 0.0), ("spread", "spread", False, spread),
                      ("campaign", "campaign", True, spread), ("bare_e", "bare", True, 0.0),
                      ("spread_e", "spread", True, 0.0))
                  if variant in plans and (not earlier or "campaign" in plans)}  # fmt: skip
        rows.append(Row(case.name, solver, len(case.imaging), scores["bare"], scores["spread"],
                        scores.get("campaign"), scores.get("bare_e"), scores.get("spread_e"),
                        round(check, 6), wall))  # fmt: skip
    return rows


# --- the report ------------------------------------------------------------------------

LEGEND = """columns:
  img    imaging targets of the night      tgt    of them, with a visit in the plan
  fill   median filled share of the (u, v) disk, over the targets with samples
  gap    median largest position-angle gap (deg), over the same targets
  vis    imaging visits placed             value  the plan's value
  spread/bare, campaign/bare: the same figures' ratios ("-": no target to judge)"""


def num(x: float, width: int, digits: int) -> str:
    return f"{'-':>{width}s}" if math.isnan(x) else f"{x:{width}.{digits}f}"


def fmt(s: Score, value: float | None = None) -> str:
    v = s.value if value is None else value
    return (f"{s.visited:3d} {num(s.filled, 5, 3)} {num(s.pa_gap_deg, 5, 1)} "
            f"{s.imaging_visits:3d} {v:7.1f}")


def fmt_ratio(a: Score, b: Score, a_value: float | None = None,
              b_value: float | None = None) -> str:  # fmt: skip
    va = a.value if a_value is None else a_value
    vb = b.value if b_value is None else b_value
    return (f"{num(ratio(a.filled, b.filled), 5, 2)} "
            f"{num(ratio(a.pa_gap_deg, b.pa_gap_deg), 5, 2)} "
            f"{num(ratio(a.imaging_visits, b.imaging_visits), 4, 2)} "
            f"{num(ratio(va, vb), 5, 2)}")  # fmt: skip


HEAD = f"{'night':12s} {'solver':8s} {'img':>3s}"
BLOCK = f"{'tgt':>3s} {'fill':>5s} {'gap':>5s} {'vis':>3s} {'value':>7s}"
RBLOCK = f"{'fill':>5s} {'gap':>5s} {'vis':>4s} {'value':>5s}"
SHORT = f"{'fill':>5s} {'gap':>5s}"


def show(r: Row) -> str:
    return (f"{r.night:12s} {r.solver:8s} {r.imaging:3d} | {fmt(r.bare)} | {fmt(r.spread)} | "
            f"{fmt_ratio(r.spread, r.bare)}")


def show_campaign(r: Row) -> str:
    assert r.campaign is not None and r.bare_e is not None and r.spread_e is not None
    c = r.campaign
    return (f"{r.night:12s} {r.solver:8s} {r.imaging:3d} | {num(r.bare_e.filled, 5, 3)} "
            f"{num(r.bare_e.pa_gap_deg, 5, 1)} | {num(r.spread_e.filled, 5, 3)} "
            f"{num(r.spread_e.pa_gap_deg, 5, 1)} | {fmt(c, c.catalog_value)} {c.value:7.1f} | "
            f"{fmt_ratio(c, r.bare_e, c.catalog_value)}")  # fmt: skip


def pooled(rows: list[Row], side: str) -> dict[str, float]:
    """Figures of one side pooled over the rows' nights: medians over the imaging targets
    with samples (``_all``: over every imaging target, one without samples counting as
    filled 0 with a 180 deg gap), sums."""
    scores: list[Score] = [getattr(r, side) for r in rows]
    targets = [t for s in scores for t in s.targets]
    seen = [t for t in targets if t.sampled]
    return {"filled_median": median([t.filled for t in seen]),
            "pa_gap_median_deg": median([t.pa_gap_deg for t in seen]),
            "filled_median_all": median([t.filled for t in targets]),
            "pa_gap_median_deg_all": median([t.pa_gap_deg for t in targets]),
            "imaging_visits": float(sum(s.imaging_visits for s in scores)),
            "value": round(sum(s.value for s in scores), 4),
            "catalog_value": round(sum(s.catalog_value for s in scores), 4),
            "imaging_targets": float(len(targets)),
            "targets_visited": float(sum(t.visits > 0 for t in targets)),
            "targets_sampled": float(len(seen))}  # fmt: skip


def paired(rows: list[Row], a: str, b: str) -> dict[str, float]:
    """Medians over the targets with samples in both plans."""
    pairs = [(x, y) for r in rows for x, y in zip(getattr(r, a).targets, getattr(r, b).targets,
                                                  strict=True) if x.sampled and y.sampled]
    return {"targets": float(len(pairs)),
            f"filled_median_{a}": median([x.filled for x, _ in pairs]),
            f"filled_median_{b}": median([y.filled for _, y in pairs]),
            f"pa_gap_median_deg_{a}": median([x.pa_gap_deg for x, _ in pairs]),
            f"pa_gap_median_deg_{b}": median([y.pa_gap_deg for _, y in pairs]),
            f"ha_span_median_h_{a}": median([x.ha_span_h for x, _ in pairs]),
            f"ha_span_median_h_{b}": median([y.ha_span_h for _, y in pairs])}  # fmt: skip


def ratios(a: dict[str, float], b: dict[str, float],
           value_key: str = "value") -> dict[str, float]:  # fmt: skip
    return {"filled": ratio(a["filled_median"], b["filled_median"]),
            "pa_gap": ratio(a["pa_gap_median_deg"], b["pa_gap_median_deg"]),
            "imaging_visits": ratio(a["imaging_visits"], b["imaging_visits"]),
            "value": ratio(a[value_key], b["value"])}  # fmt: skip


def ratio_text(q: dict[str, float]) -> str:
    return (f"filled {q['filled']:.3f}, PA gap {q['pa_gap']:.3f}, imaging visits "
            f"{q['imaging_visits']:.3f}, value {q['value']:.3f}")


def side_text(name: str, d: dict[str, float], value_key: str = "value") -> str:
    return (f"  {name:9s} filled {d['filled_median']:.3f}  PA gap {d['pa_gap_median_deg']:5.1f}"
            f" deg  (all targets: {d['filled_median_all']:.3f}, "
            f"{d['pa_gap_median_deg_all']:5.1f})  targets visited {d['targets_visited']:.0f}"
            f"  imaging visits {d['imaging_visits']:.0f}  value {d[value_key]:.1f}")


def pair_text(p: dict[str, float], a: str, b: str, label: str) -> str:
    return (f"  {label} ({p['targets']:.0f}): filled {p[f'filled_median_{a}']:.3f} -> "
            f"{p[f'filled_median_{b}']:.3f}, PA gap {p[f'pa_gap_median_deg_{a}']:.1f} -> "
            f"{p[f'pa_gap_median_deg_{b}']:.1f} deg, hour-angle span tonight "
            f"{p[f'ha_span_median_h_{a}']:.2f} -> {p[f'ha_span_median_h_{b}']:.2f} h")


def print_summary(rows: list[Row]) -> dict[str, object]:
    """Overall figures per solver; returns them for --json."""
    out: dict[str, object] = {}
    lines = []
    for solver in dict.fromkeys(r.solver for r in rows):
        mine = [r for r in rows if r.solver == solver]
        b, s = pooled(mine, "bare"), pooled(mine, "spread")
        q = ratios(s, b)
        pair = paired(mine, "bare", "spread")
        print(f"\n{solver}, {len(mine)} nights, {b['imaging_targets']:.0f} imaging targets:")
        print(side_text("bare", b))
        print(side_text("spread", s))
        print(pair_text(pair, "bare", "spread", "visited in both"))
        entry: dict[str, object] = {
            "bare": b, "spread": s, "spread_over_bare": q, "visited_in_both": pair,
            "median_night_value_ratio": median([ratio(r.spread.value, r.bare.value)
                                                for r in mine])}  # fmt: skip
        lines.append(f"spread/bare, {solver}: {ratio_text(q)}")
        if mine[0].campaign is not None:
            be, se, c = (pooled(mine, k) for k in ("bare_e", "spread_e", "campaign"))
            qc = ratios(c, be, "catalog_value")
            cpair = paired(mine, "bare_e", "campaign")
            print("  with the earlier night's visit in the samples:")
            print(side_text("bare", be))
            print(side_text("spread", se))
            print(side_text("campaign", c, "catalog_value") + f" (own rule {c['value']:.1f})")
            entry.update(bare_with_earlier=be, spread_with_earlier=se, campaign=c,
                         campaign_over_bare=qc, campaign_sampled_in_both=cpair)
            lines.append(f"campaign/bare (with the earlier visit), {solver}: {ratio_text(qc)}"
                         " (value under the catalog's rule)")  # fmt: skip
        out[solver] = entry
    print()
    for line in lines:
        print(line)
    check = max(r.uv_check_m for r in rows)
    print(f"judge vs target_tracks: largest (u, v) difference {check * 1e3:.2f} mm")
    close = [(r, side, c) for r in rows for side in ("spread", "campaign")
             for c in (getattr(r, side).too_close if getattr(r, side) else ())]  # fmt: skip
    if close:
        print(f"FAIL: {len(close)} pair(s) of visits closer in hour angle than the spread "
              "(a planner bug):")  # fmt: skip
        for r, side, c in close:
            print(f"  {r.night} {r.solver} {side}: {c}")
    else:
        print("PASS: every pair of visits of a spread target is the spread apart in hour angle")
    out.update(uv_check_m=check, too_close=len(close))
    return out


def row_doc(r: Row) -> dict[str, object]:
    """A row for --json: its fields, and each plan's medians and targets visited."""
    doc = asdict(r)
    for side in ("bare", "spread", "campaign", "bare_e", "spread_e"):
        s: Score | None = getattr(r, side)
        if s is not None:
            doc[side].update(filled_median=s.filled, pa_gap_median_deg=s.pa_gap_deg,
                             targets_visited=s.visited)  # fmt: skip
    return doc


def finite(x: object) -> object:
    """``x`` with every NaN or infinite number replaced by None (strict JSON)."""
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if isinstance(x, dict):
        return {k: finite(v) for k, v in x.items()}
    if isinstance(x, list | tuple):
        return [finite(v) for v in x]
    return x


def parse_args(argv: list[str] | None = None) -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0] if __doc__ else "")
    parser.add_argument("--time-limit", type=float, default=DEFAULT_LIMIT_S, metavar="S",
                        help=f"optimiser time limit per plan (default {DEFAULT_LIMIT_S:g} s)")
    parser.add_argument("--quick", action="store_true", help="the greedy solver only")
    parser.add_argument("--only", metavar="NAME", help="one night (a suite night or 'demo')")
    parser.add_argument("--seed", type=int, default=2027, help="the suite's seed")
    parser.add_argument("--visits", type=int, default=DEFAULT_VISITS,
                        help=f"visits each imaging target wants (default {DEFAULT_VISITS})")
    parser.add_argument("--priority", type=int, default=DEFAULT_PRIORITY,
                        help="priority of the imaging targets (default "
                        f"{DEFAULT_PRIORITY}, the suite's highest; 0: the catalog's)")
    parser.add_argument("--spread-h", type=float, default=DEFAULT_SPREAD_H, metavar="H",
                        help=f"ha_spread_h of the spread plans (default {DEFAULT_SPREAD_H:g})")
    parser.add_argument("--step-s", type=float, default=DEFAULT_STEP_S, metavar="S",
                        help=f"the judge's sampling step (default {DEFAULT_STEP_S:g} s)")
    parser.add_argument("--no-campaign", dest="campaign", action="store_false",
                        help="leave out the campaign plans")
    parser.add_argument("--json", metavar="FILE", type=Path, help="also write the numbers here")
    args = parser.parse_args(argv)
    if not 2 <= args.visits <= 10:
        parser.error("--visits must be 2-10")
    if not 0 <= args.priority <= 1000:
        parser.error("--priority must be 0-1000")
    if not 0 < args.spread_h <= 12:
        parser.error("--spread-h must be in (0, 12]")
    if not 1 <= args.step_s <= 900:
        parser.error("--step-s must be 1-900")
    return args


def main(argv: list[str] | None = None) -> None:
    args = parse_args(argv)
    nights = {n.name: n for n in night_suite.suite(args.seed)}
    names = [DEMO, *nights]
    if args.only is not None:
        if args.only not in names:
            sys.exit(f"bench_coverage: no night {args.only!r}; nights: {', '.join(names)}")
        names = [args.only]
    solvers = ("greedy",) if args.quick else ("greedy", "optimize")
    settings = PlanSettings(time_limit_s=args.time_limit, deterministic=True)
    limit = "" if args.quick else f" (limit {args.time_limit:g} s, deterministic mode)"
    print(f"Coverage benchmark on INVENTED nights (night_suite, seed {args.seed}) and the "
          f"fictional demo night (configuration {DEMO_CONFIG}, {DEMO_DATE}).")  # fmt: skip
    prio = f"priority {args.priority}" if args.priority else "the catalog's priority"
    print(f"Imaging targets want {args.visits} visits at {prio}; bare (catalog separations "
          f"only) vs spread (ha_spread_h {args.spread_h:g})"
          + (" vs a campaign with one visit done the night before" if args.campaign else "")
          + f"; {' and '.join(solvers)}{limit}, {os.cpu_count()} cores; (u, v) judged every "
          f"{args.step_s:g} s.\n")  # fmt: skip
    print(LEGEND + "\n")
    print(f"{'':25s} | {'bare':^27s} | {'spread':^27s} | {'spread/bare':^22s}")
    print(f"{HEAD} | {BLOCK} | {BLOCK} | {RBLOCK}")
    rows: list[Row] = []
    t0 = time.perf_counter()
    for name in names:
        case = demo_case(args) if name == DEMO else suite_case(nights[name], args)
        new = run_case(case, solvers, settings, args.step_s)
        for r in new:
            print(show(r), flush=True)
        rows += new
    if args.campaign:
        print("\nwith the earlier night's visit in every plan's samples; campaign value under "
              "the catalog's rule, then its own:")  # fmt: skip
        print(f"{'':25s} | {'bare':^11s} | {'spread':^11s} | {'campaign':^35s} | "
              f"{'campaign/bare':^22s}")  # fmt: skip
        print(f"{HEAD} | {SHORT} | {SHORT} | {BLOCK} {'own':>7s} | {RBLOCK}")
        for r in rows:
            print(show_campaign(r))
    summary = print_summary(rows)
    print(f"({time.perf_counter() - t0:.0f} s)")
    if args.json is not None:
        doc = {"seed": args.seed, "time_limit_s": args.time_limit, "invented": True,
               "deterministic": True, "visits": args.visits, "priority": args.priority,
               "spread_h": args.spread_h, "step_s": args.step_s, "solvers": solvers,
               "rows": [row_doc(r) for r in rows], "summary": summary}  # fmt: skip
        args.json.write_text(json.dumps(finite(doc), indent=2) + "\n")


if __name__ == "__main__":
    main()
