"""Benchmark: a replan of the demo night after a 90-minute closure, as an operator runs it.

Plans the fictional demo night (configuration medium), logs the first two visits done
and a 90-minute closure after them, then runs ``opdplan replan --time-limit 3`` as a
fresh process from inside the closure, several times: the wall time of the whole
command (interpreter start-up, loading, planning, verification, writing; goal at most
3 s on 2 cores), the value against the greedy replan of the same situation, the proven
gap (goal at most 10 %) and the dark time left idle at the end of the night.

Run: ``python tests/benchmarks/bench_replan.py [--runs 3]``
"""

from __future__ import annotations

import argparse
import json
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.inputs.night_log import append_record
from scheduler.model.times import iso_utc, parse_utc

ROOT = Path(__file__).resolve().parents[2]
COMMAND = [sys.executable, "-c", "from scheduler.cli.main import entry; entry()"]


def opdplan(*args: str) -> tuple[float, int]:
    t0 = time.perf_counter()
    done = subprocess.run([*COMMAND, *args], capture_output=True, text=True)
    if done.returncode != 0:
        raise SystemExit(f"opdplan {args[0]} failed: {done.stderr}")
    return time.perf_counter() - t0, done.returncode


def setup(folder: Path) -> tuple[Path, Path, str]:
    plan, log = folder / "tonight.json", folder / "night.jsonl"
    opdplan("plan", "--array", str(ROOT / "catalogs" / "demo_array.toml"), "--config", "medium",
            "--targets", str(ROOT / "catalogs" / "demo_targets.csv"), "--night", "2027-04-18",
            "--time-limit", "15", "--quiet", "--out", str(plan))  # fmt: skip
    doc = json.loads(plan.read_text())
    a, b = doc["visits"][0], doc["visits"][1]
    for v in (a, b):
        append_record(log, {"event": "done", "visit": v["id"], "at_utc": v["end_utc"]})
    start = parse_utc(b["end_utc"])
    append_record(log, {"event": "closed", "from_utc": iso_utc(start),
                        "to_utc": iso_utc(start + 5400.0)})  # fmt: skip
    return plan, log, iso_utc(start + 1800.0)


def replan(plan: Path, log: Path, now: str, out: Path, solver: str) -> tuple[float, dict]:
    wall, _ = opdplan("replan", "--plan", str(plan), "--log", str(log), "--now", now, "--out",
                      str(out), "--solver", solver, "--time-limit", "3", "--quiet")  # fmt: skip
    return wall, json.loads(out.read_text())


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--runs", type=int, default=3)
    args = parser.parse_args()
    folder = Path(tempfile.mkdtemp())
    plan, log, now = setup(folder)
    _, greedy = replan(plan, log, now, folder / "greedy.json", "greedy")
    print("replan of the fictional demo night after a 90-minute closure, --time-limit 3, "
          "whole command as a fresh process (2 cores)")  # fmt: skip
    walls = []
    for k in range(args.runs):
        wall, doc = replan(plan, log, now, folder / f"replan-{k}.json", "optimize")
        walls.append(wall)
        s = doc["summary"]
        idle = parse_utc(doc["night"]["end_utc"]) - doc["visits"][-1]["end_s"]
        print(f"  run {k + 1}: {wall:4.2f} s, value {s['weighted_value']:.2f} (greedy "
              f"{greedy['summary']['weighted_value']:.2f}), bound {s['bound']:.2f} "
              f"{s['bound_status']}, gap {s['gap']:.1%}, idle at the end {idle / 60:.0f} min")
    print(f"  median wall {statistics.median(walls):.2f} s (goal <= 3 s); gap goal <= 10 %")


if __name__ == "__main__":
    main()
