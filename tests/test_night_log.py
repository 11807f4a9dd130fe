"""The night log: append-only JSON Lines, checked when written and when read.

Contract of README.md (common practice, no source): a record is one line written whole;
only the last line may be cut short by a crash (reported, skipped, nothing before it
lost); a record appended after a cut line names it; any other damaged line is an error
naming its line; ``opdplan log`` refuses what the plan does not know.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from scheduler.cli.main import main
from scheduler.inputs.night_log import append_record, cut_last_line, read_log
from scheduler.model.errors import InputError

ROOT = Path(__file__).resolve().parent.parent
ARRAY = str(ROOT / "catalogs" / "demo_array.toml")
TARGETS = str(ROOT / "catalogs" / "demo_targets.csv")


def test_a_cut_last_line_is_skipped_and_nothing_is_lost(tmp_path):
    log = tmp_path / "night.jsonl"
    append_record(log, {"event": "done", "visit": "v#1", "at_utc": "2027-04-19T01:00:00Z"})
    append_record(log, {"event": "done", "visit": "v#2", "at_utc": "2027-04-19T02:00:00Z"})
    with open(log, "a") as f:
        f.write('{"schema":"opdplan-log/1","event":"do')  # a crash mid-write
    records, warnings = read_log(log)
    assert [r.visit for r in records] == ["v#1", "v#2"]
    assert len(warnings) == 1 and "line 3" in warnings[0]
    assert cut_last_line(log) == 3
    append_record(log, {"event": "aborted", "visit": "v#3", "at_utc": "2027-04-19T03:00:00Z"},
                  after_cut=cut_last_line(log))  # fmt: skip
    records, warnings = read_log(log)
    assert [r.visit for r in records] == ["v#1", "v#2", "v#3"]  # nothing lost
    assert len(warnings) == 1 and "line 3" in warnings[0]


def test_a_damaged_line_in_the_middle_is_an_error(tmp_path):
    log = tmp_path / "night.jsonl"
    append_record(log, {"event": "done", "visit": "v#1", "at_utc": "2027-04-19T01:00:00Z"})
    with open(log, "a") as f:
        f.write('{"schema":"opdplan-log/1","event":"do\n')  # damaged, then more records
    append_record(log, {"event": "done", "visit": "v#2", "at_utc": "2027-04-19T02:00:00Z"})
    with pytest.raises(InputError, match="line 2: damaged record"):
        read_log(log)


def test_nan_in_a_hand_edited_log_is_refused(tmp_path):
    log = tmp_path / "night.jsonl"
    log.write_text('{"schema":"opdplan-log/1","event":"carriages","at_utc":'
                   '"2027-04-19T01:00:00Z","opd_m":{"rail-1":NaN}}\n')  # fmt: skip
    with pytest.raises(InputError, match="finite metres"):
        read_log(log)


@pytest.fixture(scope="module")
def plan_file(tmp_path_factory):
    folder = tmp_path_factory.mktemp("logplan")
    plan = folder / "plan.json"
    assert main(["plan", "--array", ARRAY, "--config", "medium", "--targets", TARGETS,
                 "--night", "2027-04-18", "--solver", "greedy", "--out", str(plan)]) == 0
    return plan, json.loads(plan.read_text())


@pytest.mark.parametrize(
    ("args", "expected"),
    [(["done", "--visit", "Nobody#1"], "visit 'Nobody#1' is not in"),
     (["out", "--station", "nowhere"], "station 'nowhere' is not one of"),
     (["carriages", "--at", "2027-04-19T01:00:00Z", "--opd", "rail-1=nan"], "finite"),
     (["carriages", "--at", "2027-04-19T01:00:00Z", "--opd", "rail-1=130"], "outside its range"),
     (["carriages", "--at", "2027-04-19T01:00:00Z", "--opd", "rail-9=30"],
      "delay line 'rail-9' is not one of"),
     (["done", "--visit", "Tide-05#1", "--at", "yesterday"], "--at: 'yesterday'"),
     (["conditions", "--seeing", "-1"], "--seeing: -1.0 is not in"),
     (["conditions", "--coherence-ms", "0"], "--coherence-ms: 0.0 is not in"),
     (["conditions", "--seeing", "1.0", "--wind-speed", "15"], "go together"),
     (["conditions", "--wind-speed", "15", "--wind-from", "400"], "--wind-from: 400.0"),
     (["conditions"], "give --seeing, --coherence-ms or --wind-speed")],
)  # fmt: skip
def test_log_refuses_what_the_plan_does_not_know(plan_file, tmp_path, capsys, args, expected):
    """Each refused record: exit 2, one line naming the value, the log untouched."""
    plan, _ = plan_file
    log = tmp_path / "night.jsonl"
    log.write_bytes(b"")
    capsys.readouterr()
    code = main(["log", *args[:1], "--log", str(log), "--plan", str(plan), *args[1:]])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and expected in err[0], err
    assert log.read_bytes() == b""


def test_log_accepts_a_good_record(plan_file, tmp_path):
    plan, doc = plan_file
    log = tmp_path / "night.jsonl"
    vid = doc["visits"][0]["id"]
    assert main(["log", "done", "--log", str(log), "--plan", str(plan), "--visit", vid,
                 "--at", "2027-04-19T01:00:00Z"]) == 0  # fmt: skip
    records, warnings = read_log(log)
    assert [r.visit for r in records] == [vid] and warnings == []


def test_conditions_records_are_read_back_and_the_latest_applies(plan_file, tmp_path):
    """Conditions are kept in time order; each record changes what it states and leaves
    the rest (README "Conditions during the night"; common practice, no source)."""
    import math

    from scheduler.model.log import Event
    from scheduler.replan.situation import conditions_at

    plan, doc = plan_file
    log = tmp_path / "night.jsonl"
    for argv in (["--seeing", "1.1", "--coherence-ms", "3.0", "--at", "2027-04-19T01:00:00Z"],
                 ["--wind-speed", "14", "--wind-from", "300", "--at", "2027-04-19T02:00:00Z"],
                 ["--seeing", "1.6", "--at", "2027-04-19T03:00:00Z"]):
        assert main(["log", "conditions", "--log", str(log), "--plan", str(plan), *argv]) == 0
    records, _ = read_log(log)
    assert [r.event for r in records] == [Event.CONDITIONS] * 3
    arcsec = math.pi / 180 / 3600
    at_230 = conditions_at(records, doc, 1808101800.0)  # 2027-04-19T02:30:00Z (calendar arithmetic)
    assert at_230.seeing_rad == pytest.approx(1.1 * arcsec)
    assert at_230.coherence_s == pytest.approx(3.0e-3)
    assert at_230.wind_speed_m_s == 14.0
    assert at_230.wind_from_rad == pytest.approx(math.radians(300.0))
    later = conditions_at(records, doc, 1808107200.0)  # 04:00Z
    assert later.seeing_rad == pytest.approx(1.6 * arcsec)
    assert later.coherence_s == pytest.approx(3.0e-3)
    before = conditions_at(records, doc, 1808094400.0)  # 00:26:40Z: none yet
    assert before.seeing_rad is None and before.wind_from_rad is None
