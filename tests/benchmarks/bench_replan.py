"""Benchmark: a replan of the demo night after a 90-minute closure.

Plans the demo night (configuration medium), logs the first two visits done and a
90-minute closure after them, then replans from inside the closure.  Prints the wall
time to a first verified plan (greedy/previous order) and to the final verified plan
with the default 3 s limit (goal: at most 3 s on 2 cores), and the final gap.

Run: ``python tests/benchmarks/bench_replan.py``
"""

from __future__ import annotations

import tempfile
import time
from pathlib import Path

from scheduler.catalog import parse_utc
from scheduler.plan_io import plan_dict, write_plan

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.cli.commands.common import load_inputs
from scheduler.inputs.night_log import append_record
from scheduler.model.plan import PlanSettings
from scheduler.model.times import iso_utc
from scheduler.queue.planner import plan_night
from scheduler.replan import prepare, replan_dict
from scheduler.verify import verify_plan

ROOT = Path(__file__).resolve().parents[2]


def replan_once(plan_path, log_path, now, solver, limit):
    t0 = time.perf_counter()
    array, ctx, origin, old, sit = prepare(str(plan_path), str(log_path), now)
    settings = PlanSettings(time_limit_s=limit)
    plan = plan_night(ctx, settings, solver, t0, origin)
    doc = replan_dict(ctx, array, plan, settings, origin, old, sit, str(plan_path))
    problems = verify_plan(doc, array, ctx.targets)
    assert not problems, problems
    return time.perf_counter() - t0, plan


def main() -> None:
    inputs = load_inputs(ROOT / "catalogs" / "demo_array.toml", "medium",
                         ROOT / "catalogs" / "demo_targets.csv", "2027-04-18")  # fmt: skip
    ctx = inputs.context()
    settings = PlanSettings(time_limit_s=15.0)
    plan = plan_night(ctx, settings, "optimize")
    folder = Path(tempfile.mkdtemp())
    plan_path, log_path = folder / "tonight.json", folder / "night.jsonl"
    doc = plan_dict(ctx, inputs.array, plan, settings)
    write_plan(plan_path, doc)
    a, b = doc["visits"][0], doc["visits"][1]
    for v in (a, b):
        append_record(log_path, {"event": "done", "visit": v["id"], "at_utc": v["end_utc"]})
    start = parse_utc(b["end_utc"])
    append_record(log_path, {"event": "closed", "from_utc": iso_utc(start),
                             "to_utc": iso_utc(start + 5400.0)})  # fmt: skip
    now = iso_utc(start + 1800.0)
    first, quick = replan_once(plan_path, log_path, now, "greedy", 3.0)
    total, full = replan_once(plan_path, log_path, now, "optimize", 3.0)
    s = full.summary
    print("replan of the demo night after a 90-minute closure (2 cores)")
    print(
        f"  first verified plan (greedy / previous order): {first:5.2f} s, "
        f"value {quick.summary['weighted_value']:.2f}"
    )
    print(
        f"  final verified plan, --time-limit 3         : {total:5.2f} s, "
        f"value {s['weighted_value']:.2f}, solver {s['solver']}"
    )
    print(
        f"  goal <= 3 s; final gap {s.get('gap', float('nan')):.1%} "
        f"(bound {s.get('bound')}, {s.get('bound_status')})"
    )


if __name__ == "__main__":
    main()
