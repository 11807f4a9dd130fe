"""Replanning mid-night from a plan, the night log and the time now.

Rules checked are those of the replanning contract in README.md (common practice, no
source): done visits are never repeated, nothing starts before now or before a closure
ends, the first transition leaves from the logged carriage paths, a station out frees
the targets only its baselines blocked, and every replan passes the independent
verifier.  The night is the fictional demo night; other data are invented.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from scheduler.astro.night import find_night
from scheduler.astro.problem import night_problem
from scheduler.cli.main import main
from scheduler.geometry.windows import observable_windows
from scheduler.inputs.array_file import parse_array
from scheduler.inputs.catalog import parse_targets
from scheduler.inputs.night_log import append_record
from scheduler.model.reasons import Limit, limit_of
from scheduler.model.times import iso_utc, parse_night, parse_utc
from scheduler.replan.diff import plan_diff

ROOT = Path(__file__).resolve().parent.parent
ARRAY = str(ROOT / "catalogs" / "demo_array.toml")
TARGETS = str(ROOT / "catalogs" / "demo_targets.csv")
TIME_TOL_S = 1.0
CLOSURE_S = 5400.0  # a 90-minute closure


@pytest.fixture(scope="module")
def tonight(tmp_path_factory):
    folder = tmp_path_factory.mktemp("night")
    plan = folder / "tonight.json"
    args = ["plan", "--array", ARRAY, "--config", "medium", "--targets", TARGETS,
            "--night", "2027-04-18", "--solver", "greedy", "--out", str(plan)]  # fmt: skip
    assert main(args) == 0
    return folder, plan, json.loads(plan.read_text())


def _replan(plan, log, now, out, *extra, solver="greedy"):
    return main(["replan", "--plan", str(plan), "--log", str(log), "--now", now,
                 "--out", str(out), "--solver", solver, *extra])  # fmt: skip


def _iso(t_s: float) -> str:
    return iso_utc(float(np.round(t_s)))


def _closure_log(tmp_path, doc):
    """Two visits done, a 90-minute closure after them, carriages parked at 60 m."""
    first, second = doc["visits"][0], doc["visits"][1]
    log = tmp_path / "night.jsonl"
    append_record(log, {"event": "done", "visit": first["id"], "at_utc": first["end_utc"]})
    append_record(log, {"event": "done", "visit": second["id"], "at_utc": second["end_utc"]})
    closure_end = parse_utc(second["end_utc"]) + CLOSURE_S
    append_record(log, {"event": "closed", "from_utc": second["end_utc"],
                        "to_utc": _iso(closure_end)})  # fmt: skip
    x = {ln: 60.0 for ln in first["opd_end_m"]}
    parked = parse_utc(second["end_utc"]) + 300.0  # parked when the domes closed
    append_record(log, {"event": "carriages", "at_utc": _iso(parked), "opd_m": x})
    return log, first, second, closure_end


@pytest.mark.parametrize("solver", ["greedy", "optimize"])
def test_closure_and_done_visits(tonight, tmp_path, solver):
    """Done visits are not repeated, nothing starts before the closure ends, the first
    transition covers the carriage moves from the logged 60 m, and the file verifies."""
    folder, plan, doc = tonight
    before = plan.read_bytes()
    log, first, second, closure_end = _closure_log(tmp_path, doc)
    now = _iso(parse_utc(second["end_utc"]) + 600.0)
    out = tmp_path / "new.json"
    assert _replan(plan, log, now, out, "--time-limit", "4", solver=solver) == 0
    new = json.loads(out.read_text())
    ids = [v["id"] for v in new["visits"]]
    assert first["id"] not in ids and second["id"] not in ids
    assert {v["id"] for v in new["done"]} == {first["id"], second["id"]}
    assert all(v["start_s"] >= closure_end - TIME_TOL_S for v in new["visits"])
    assert new["replanned_from"]["now_utc"].startswith(now[:-1])
    v0 = new["visits"][0]
    rates = {d["name"]: d["max_rate_m_s"] for d in new["delay_lines"]}
    need = max(abs(v0["opd_start_m"][ln] - 60.0) / rates[ln] for ln in rates) + 480.0
    assert v0["start_s"] - closure_end >= need - TIME_TOL_S
    assert set(new["diff"]) == {"kept", "moved", "dropped", "added"}
    assert main(["verify", str(out), "--array", ARRAY, "--targets", TARGETS]) == 0
    assert plan.read_bytes() == before  # the old plan is untouched
    if solver == "optimize":
        assert new["summary"]["solver"] != "greedy" or new["summary"]["report"]["status"]


def test_station_out_reduces_the_configuration(tonight, tmp_path):
    _, plan, doc = tonight
    log = tmp_path / "night.jsonl"
    now = doc["visits"][3]["start_utc"]
    append_record(log, {"event": "out", "station": "jasper", "at_utc": now})
    out = tmp_path / "new.json"
    assert _replan(plan, log, now, out) == 0
    new = json.loads(out.read_text())
    assert new["out"] == ["jasper"]
    assert "rail-6" not in {d["name"] for d in new["delay_lines"]}  # jasper fed rail-6
    assert all(v["start_s"] >= parse_utc(now) - TIME_TOL_S for v in new["visits"])


def test_out_station_frees_targets_it_alone_blocked():
    """Two short baselines and one long one: a target that only the long baseline's
    delay blocks becomes observable when its station is out (DOMAIN.md section 3: the
    K span is a max/min over the lines in use)."""
    array = parse_array({
        "site": {"name": "test", "latitude_deg": -26.1, "longitude_deg": -66.2, "height_m": 3000},
        "stations": [
            {"name": "near", "east_m": 0, "north_m": 0, "up_m": 0, "internal_path_m": 50},
            {"name": "next", "east_m": 20, "north_m": 0, "up_m": 0, "internal_path_m": 50},
            {"name": "far", "east_m": 400, "north_m": 0, "up_m": 0, "internal_path_m": 50},
        ],
        "delay_lines": [{"name": f"l{k}", "opd_min_m": 0, "opd_max_m": 100, "max_rate_m_s": 1}
                        for k in range(3)],
        "configurations": [{"name": "c", "feeds": {"l0": "near", "l1": "next", "l2": "far"}}],
    })  # fmt: skip
    targets = parse_targets(pd.DataFrame({"name": ["east-low"], "ra": ["170"], "dec": ["-20"],
                                          "duration_min": ["30"]}), "test")  # fmt: skip
    night = find_night(array, parse_night("2027-04-18"))
    full = observable_windows(night_problem(array, array.beams("c"), targets, night))[0]
    less = observable_windows(
        night_problem(array, array.beams("c", frozenset({"far"})), targets, night))[0]
    assert any(limit_of(code) == Limit.DELAY for _, _, code in full.excluded)
    assert less.hours > full.hours
    assert not any(limit_of(code) == Limit.DELAY for _, _, code in less.excluded)


def test_diff_on_a_constructed_case():
    """Kept within a minute, moved, dropped, added (README.md's definition)."""
    old = [{"id": "a", "start_s": 0.0, "start_utc": "x"}, {"id": "b", "start_s": 100.0,
           "start_utc": "y"}, {"id": "c", "start_s": 200.0, "start_utc": "z"},
           {"id": "d", "start_s": 300.0, "start_utc": "w"}]  # fmt: skip
    new = [{"id": "b", "start_s": 130.0, "start_utc": "y2"},
           {"id": "c", "start_s": 900.0, "start_utc": "z2"},
           {"id": "e", "start_s": 1000.0, "start_utc": "v"}]  # fmt: skip
    d = plan_diff(old, new, done={"a"})
    assert d == {"kept": ["b"], "moved": [{"id": "c", "from_utc": "z", "to_utc": "z2"}],
                 "dropped": ["d"], "added": ["e"]}  # fmt: skip


def test_warnings_reach_stderr_in_json_mode(tonight, tmp_path, capsys):
    """A record later than --now and a planned visit that should be over but has no done
    record are both reported on standard error, also with --json."""
    _, plan, doc = tonight
    log = tmp_path / "night.jsonl"
    late = doc["visits"][5]
    append_record(log, {"event": "done", "visit": late["id"], "at_utc": late["end_utc"]})
    now = doc["visits"][3]["start_utc"]
    capsys.readouterr()
    code = _replan(plan, log, now, tmp_path / "new.json", "--json")
    captured = capsys.readouterr()
    assert code == 0
    json.loads(captured.out)  # standard output stays pure JSON
    assert "later than --now" in captured.err
    assert f"{doc['visits'][0]['id']} was planned to end" in captured.err


@pytest.mark.parametrize(
    ("record", "now_shift", "expected"),
    [({"event": "done", "visit": "nobody#1", "at_utc": "2027-04-19T01:00:00Z"}, 0.0,
      "visit 'nobody#1' is not in"),
     ({"event": "out", "station": "nowhere", "at_utc": "2027-04-19T01:00:00Z"}, 0.0,
      "station 'nowhere' is not one of"),
     ({"event": "carriages", "at_utc": "2027-04-19T01:00:00Z", "opd_m": {"rail-9": 5.0}}, 0.0,
      "delay line 'rail-9' is not one of"),
     ({"event": "carriages", "at_utc": "2027-04-19T01:00:00Z", "opd_m": {"rail-1": 500.0}},
      0.0, "outside its range"),
     (None, 86400.0, "--now: "),
     ({"event": "closed", "from_utc": "2027-04-19T03:00:00Z", "to_utc": "2027-04-19T02:00:00Z"},
      0.0, "the closure ends before it starts"),
     ({"schema": "other/9", "event": "done"}, 0.0, "schema: expected 'opdplan-log/1'")],
)  # fmt: skip
def test_bad_replan_input(tonight, tmp_path, capsys, record, now_shift, expected):
    """Each bad log record or option: one line naming it, exit 2, nothing written."""
    _, plan, doc = tonight
    log = tmp_path / "night.jsonl"
    log.write_text("" if record is None else json.dumps({"schema": "opdplan-log/1", **record})
                   + "\n")  # fmt: skip
    now = _iso(parse_utc(doc["visits"][2]["start_utc"]) + now_shift)
    out = tmp_path / "new.json"
    capsys.readouterr()
    code = _replan(plan, log, now, out)
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and expected in err[0], err
    assert not out.exists()


def test_replan_of_a_plan_without_night_is_one_line(tonight, tmp_path, capsys):
    """A plan file missing a required field fails its JSON Schema: exit 2, one line that
    names the field, no traceback."""
    _, _, doc = tonight
    broken = dict(doc)
    del broken["night"]
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(broken))
    log = tmp_path / "night.jsonl"
    log.write_text("")
    capsys.readouterr()
    code = _replan(bad, log, doc["visits"][2]["start_utc"], tmp_path / "new.json")
    err = capsys.readouterr().err
    assert code == 2 and "'night' is a required property" in err and "Traceback" not in err


def test_replan_never_overwrites_the_plan_unless_asked(tonight, tmp_path, capsys):
    _, plan, doc = tonight
    log = tmp_path / "night.jsonl"
    log.write_text("")
    before = plan.read_bytes()
    assert _replan(plan, log, doc["visits"][2]["start_utc"], plan) == 2
    assert "--overwrite" in capsys.readouterr().err
    assert plan.read_bytes() == before


def _invented_files(folder: Path) -> tuple[str, str]:
    """An invented array at latitude -45 and a catalog of short targets near the south
    celestial pole (up all night, no calibrators needed), plus one time-critical target
    with a window late in the night."""
    import tomllib

    doc = tomllib.loads(Path(ARRAY).read_text())
    doc["site"]["latitude_deg"] = -45.0
    text = Path(ARRAY).read_text().replace("latitude_deg = -26.1", "latitude_deg = -45.0")
    array = folder / "south.toml"
    array.write_text(text)
    rows = ["name,ra,dec,priority,duration_min,needs_calibrator,window_start_utc,window_end_utc"]
    for k in range(40):
        rows.append(f"Pole-{k:02d},{k * 9.0:.1f},{-75 - (k % 5):.1f},{1 + k % 5},20,false,,")
    rows.append("Late-01,200.0,-78.0,3,20,false,2027-04-19T06:30:00Z,2027-04-19T07:30:00Z")
    catalog = folder / "pole.csv"
    catalog.write_text("\n".join(rows) + "\n")
    assert doc["site"]["latitude_deg"] == -45.0
    return str(array), str(catalog)


def test_replan_fills_the_rest_of_the_night_and_keeps_the_time_critical_target(tmp_path):
    """After a 90-minute closure, the replan uses the night to its end: with targets up
    all night and no calibrators needed, the dark time left after its last visit is too
    short for one more visit (its length and an acquisition); the time-critical target
    planned before is planned again.  (The README's replanning contract; common
    practice, no source.)"""
    array, catalog = _invented_files(tmp_path)
    plan = tmp_path / "plan.json"
    assert main(["plan", "--array", array, "--config", "medium", "--targets", catalog,
                 "--night", "2027-04-18", "--time-limit", "5", "--out", str(plan),
                 "--quiet"]) == 0  # fmt: skip
    doc = json.loads(plan.read_text())
    assert "Late-01" in {v["target"] for v in doc["visits"]}
    first = doc["visits"][0]
    log = tmp_path / "night.jsonl"
    append_record(log, {"event": "done", "visit": first["id"], "at_utc": first["end_utc"]})
    closed = parse_utc(first["end_utc"])
    append_record(log, {"event": "closed", "from_utc": _iso(closed),
                        "to_utc": _iso(closed + CLOSURE_S)})  # fmt: skip
    out = tmp_path / "new.json"
    assert _replan(plan, log, _iso(closed + 600), out, "--time-limit", "4", "--quiet",
                   solver="optimize") == 0  # fmt: skip
    new = json.loads(out.read_text())
    assert "Late-01" in {v["target"] for v in new["visits"]}
    left = parse_utc(new["night"]["end_utc"]) - new["visits"][-1]["end_s"]
    assert left < 20 * 60 + 480.0, f"{left / 60:.1f} min of dark time left idle"
