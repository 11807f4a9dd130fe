"""The independent verifier: a plan opdplan makes passes it, and each kind of broken
plan is caught (mutation tests).  The verifier itself is checked against astropy's full
transform, which it uses; rules are those of README.md (common practice, no source)."""

from __future__ import annotations

import copy
from pathlib import Path

import pytest

from scheduler.commands.common import load_inputs
from scheduler.plan_io import plan_dict
from scheduler.plan_model import PlanSettings
from scheduler.planner import plan_night
from scheduler.verifier import verify_plan

ROOT = Path(__file__).resolve().parent.parent


@pytest.fixture(scope="module")
def planned(demo_greedy):
    inputs, _, _, doc = demo_greedy
    return inputs, doc


def test_greedy_plan_passes(planned):
    inputs, doc = planned
    assert len(doc["visits"]) >= 6
    assert verify_plan(doc, inputs.array, inputs.targets) == []


def _science_index(doc):
    return next(k for k, v in enumerate(doc["visits"]) if v["kind"] == "science" and k > 1)


def test_carriage_position_off_by_5_mm_is_caught(planned):
    inputs, doc = planned
    bad = copy.deepcopy(doc)
    line = bad["delay_lines"][1]["name"]
    bad["visits"][2]["opd_start_m"][line] += 0.005
    found = verify_plan(bad, inputs.array, inputs.targets)
    assert any("inconsistent with the geometry" in p for p in found), found


def test_shortened_transition_is_caught(planned):
    inputs, doc = planned
    bad = copy.deepcopy(doc)
    k = _science_index(bad)
    gap = bad["visits"][k]["start_s"] - bad["visits"][k - 1]["end_s"]
    bad["visits"][k - 1]["end_s"] += gap - 100.0  # leave only 100 s before the next visit
    assert any("transition of" in p for p in verify_plan(bad, inputs.array, inputs.targets))


def test_removed_calibrator_is_caught(planned):
    inputs, doc = planned
    bad = copy.deepcopy(doc)
    k = _science_index(bad)
    sci = bad["visits"][k]["id"]
    after = next(
        j for j in range(k + 1, len(bad["visits"])) if bad["visits"][j]["kind"] == "calibrator"
    )
    del bad["visits"][after]
    found = verify_plan(bad, inputs.array, inputs.targets)
    assert any(p.startswith(sci) and "calibrator" in p for p in found), found


def test_visit_moved_out_of_its_window_is_caught(planned):
    inputs, doc = planned
    bad = copy.deepcopy(doc)
    last = bad["visits"][-1]
    shift = 6 * 3600.0  # six hours earlier: the target is then low or delay-blocked
    last["start_s"] -= shift
    last["end_s"] -= shift
    found = verify_plan(bad, inputs.array, inputs.targets)
    assert any(p.startswith(last["id"]) for p in found), found


def test_visit_shifted_into_its_delay_infeasible_stretch_is_caught():
    """Move a visit into a stretch where the windows say the delay lines cannot reach:
    the verifier, with astropy's geometry and its own delay arithmetic, must say so."""
    from scheduler.constraints import DELAY_BASE
    from scheduler.windows import observable_windows

    inputs = load_inputs(ROOT / "catalogs" / "demo_array.toml", "long",
                         ROOT / "catalogs" / "demo_targets.csv", "2027-04-18")  # fmt: skip
    ctx = inputs.context()
    settings = PlanSettings()
    plan = plan_night(ctx, settings, "greedy")
    doc = plan_dict(ctx, inputs.array, plan, settings)
    windows = {w.name: w for w in observable_windows(ctx)}
    for v in doc["visits"]:
        length = v["end_s"] - v["start_s"]
        stretch = [(a, b) for a, b, code in windows[v["target"]].excluded
                   if code >= DELAY_BASE and b - a > length + 120.0]  # fmt: skip
        if stretch:
            break
    else:
        pytest.fail("the long configuration should delay-limit some scheduled target")
    bad = copy.deepcopy(doc)
    moved = next(x for x in bad["visits"] if x["id"] == v["id"])
    a, _ = stretch[0]
    moved["start_s"], moved["end_s"] = a + 60.0, a + 60.0 + length
    found = verify_plan(bad, inputs.array, inputs.targets)
    assert any(p.startswith(v["id"]) and "delay-feasible" in p for p in found), found
