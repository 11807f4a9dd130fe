"""A replan after the seeing and the coherence time get worse (README "Conditions during
the night").  The night, array and catalog are the fictional demo's; which targets are
too faint is worked out here from the catalog's magnitudes and the array file's modes
with the limit rule of DOMAIN.md section 8 (common practice, no source): the tracking
limit moves by 2.5 log10(tau0 / tau0_ref), the guiding limit by -5 log10(seeing /
seeing_ref) (the modes' default coefficients, 1 and 2).
"""

from __future__ import annotations

import json
import math
import tomllib
from pathlib import Path

import pandas as pd
import pytest

from scheduler.cli.main import main
from scheduler.inputs.night_log import append_record
from scheduler.model.times import parse_utc

ROOT = Path(__file__).resolve().parent.parent
ARRAY = ROOT / "catalogs" / "demo_array.toml"
TARGETS = ROOT / "catalogs" / "demo_targets.csv"
SEEING_ARCSEC, COHERENCE_MS = 1.2, 3.0  # worse than every demo mode's reference
HOUR_S = 3600.0


def _too_faint(seeing_arcsec: float, coherence_ms: float) -> set[str]:
    """Science targets too faint for their mode under the conditions, from the files."""
    modes = {m["name"]: m for m in tomllib.loads(ARRAY.read_text())["modes"]}
    first = next(iter(modes))
    cat = pd.read_csv(TARGETS, comment="#", dtype=str, keep_default_na=False)
    out = set()
    for _, row in cat.iterrows():
        m = modes[row.get("mode") or first]
        track = m["tracking_limit_mag"] + 2.5 * math.log10(coherence_ms
                                                            / m["reference_coherence_ms"])
        guide = m["guiding_limit_mag"] - 5.0 * math.log10(seeing_arcsec
                                                           / m["reference_seeing_arcsec"])
        t_mag = row.get(f"mag_{m['tracking_band']}") or row.get("mag")
        g_mag = row.get(f"mag_{m['guiding_band']}")
        if (t_mag and float(t_mag) > track) or (g_mag and float(g_mag) > guide):
            out.add(row["name"])
    return out


@pytest.fixture(scope="module")
def night(tmp_path_factory):
    """The demo plan (greedy, deterministic), the first science visits done, then a
    conditions record at the start of the next science visit, and the replan."""
    folder = tmp_path_factory.mktemp("worse")
    plan = folder / "plan.json"
    assert main(["plan", "--array", str(ARRAY), "--config", "medium", "--targets",
                 str(TARGETS), "--night", "2027-04-18", "--solver", "greedy", "--out",
                 str(plan), "--quiet"]) == 0  # fmt: skip
    doc = json.loads(plan.read_text())
    science = [v for v in doc["visits"] if v["kind"] == "science"]
    now = science[2]["start_utc"]
    log = folder / "night.jsonl"
    for v in doc["visits"]:
        if v["end_s"] <= parse_utc(now):
            append_record(log, {"event": "done", "visit": v["id"], "at_utc": v["end_utc"]})
    assert main(["log", "conditions", "--log", str(log), "--plan", str(plan), "--seeing",
                 str(SEEING_ARCSEC), "--coherence-ms", str(COHERENCE_MS), "--at", now]) == 0
    out = folder / "new.json"
    assert main(["replan", "--plan", str(plan), "--log", str(log), "--now", now, "--out",
                 str(out), "--solver", "greedy", "--quiet"]) == 0  # fmt: skip
    return doc, json.loads(out.read_text()), parse_utc(now)


def test_targets_that_became_too_faint_leave_with_that_reason(night):
    doc, new, now_s = night
    faint = _too_faint(SEEING_ARCSEC, COHERENCE_MS)
    reference = _too_faint(0.8, 4.0)  # the demo modes' reference conditions
    planned_after = {v["target"] for v in doc["visits"] if v["start_s"] >= now_s}
    dropped = (faint - reference) & planned_after
    assert dropped, "the demo should plan a target that worse seeing takes out"
    assert not faint & {v["target"] for v in new["visits"]}
    why = {u["target"]: u["reason"] for u in new["unscheduled"]}
    for name in dropped:
        assert why[name].startswith("too faint"), (name, why.get(name))
    assert new["conditions"]["seeing_arcsec"] == SEEING_ARCSEC
    assert new["conditions"]["coherence_ms"] == COHERENCE_MS


def test_the_replan_takes_a_listed_backup(night):
    """The freed time goes to a target the first plan listed as a backup for an hour
    from now on (backups stay possible one step worse: seeing x 1.25, tau0 x 0.8)."""
    doc, new, now_s = night
    listed = {t for h in doc["backups"] if parse_utc(h["hour_utc"]) >= now_s - HOUR_S
              for t in h["targets"]}  # fmt: skip
    before = {v["target"] for v in doc["visits"]}
    taken = {v["target"] for v in new["visits"] if v["kind"] == "science"} - before
    assert taken & listed, (taken, listed)


def test_the_replan_passes_the_verifier_under_the_logged_conditions(night, tmp_path):
    """`opdplan verify` with the logged conditions accepts the replan; with the
    reference conditions (better seeing), its conditions block disagrees."""
    _, new, _ = night
    path = tmp_path / "new.json"
    path.write_text(json.dumps(new))
    base = ["verify", str(path), "--array", str(ARRAY), "--targets", str(TARGETS)]
    assert main([*base, "--seeing", str(SEEING_ARCSEC), "--coherence-ms",
                 str(COHERENCE_MS)]) == 0  # fmt: skip
    assert main([*base, "--seeing", "0.8", "--coherence-ms", "4.0"]) == 1
