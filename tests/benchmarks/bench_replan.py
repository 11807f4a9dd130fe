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

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.cli.commands.common import load_inputs
from scheduler.inputs.night_log import append_record
from scheduler.model.plan import PlanSettings
from scheduler.model.times import iso_utc, parse_utc
from scheduler.output.files import write_one
from scheduler.output.plan_document import document_bytes, plan_document, replan_document
from scheduler.queue.planner import plan_night
from scheduler.replan.load import load_replan
from scheduler.verify import verify_plan

ROOT = Path(__file__).resolve().parents[2]


def replan_once(plan_path, log_path, now, solver, limit):
    t0 = time.perf_counter()
    rp = load_replan(str(plan_path), str(log_path), now)
    settings = PlanSettings(time_limit_s=limit)
    plan = plan_night(rp.problem, settings, solver, t0, rp.origin)
    doc = replan_document(rp.problem, rp.array, plan, settings, rp.origin, rp.previous,
                          rp.situation, str(plan_path))  # fmt: skip
    problems = verify_plan(doc, rp.array, rp.problem.targets, settings)
    assert not problems, problems
    return time.perf_counter() - t0, plan


def main() -> None:
    inputs = load_inputs(ROOT / "catalogs" / "demo_array.toml", "medium",
                         ROOT / "catalogs" / "demo_targets.csv", "2027-04-18")  # fmt: skip
    ctx = inputs.problem()
    settings = PlanSettings(time_limit_s=15.0)
    plan = plan_night(ctx, settings, "optimize")
    folder = Path(tempfile.mkdtemp())
    plan_path, log_path = folder / "tonight.json", folder / "night.jsonl"
    doc = plan_document(ctx, inputs.array, plan, settings)
    write_one(plan_path, document_bytes(doc))
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
        f"value {quick.summary.weighted_value:.2f}"
    )
    print(
        f"  final verified plan, --time-limit 3         : {total:5.2f} s, "
        f"value {s.weighted_value:.2f}, solver {s.solver}"
    )
    print(
        f"  goal <= 3 s; final gap {s.gap if s.gap is not None else float('nan'):.1%} "
        f"(bound {s.bound}, {s.report.bound_status})"
    )


if __name__ == "__main__":
    main()
