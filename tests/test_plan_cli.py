"""``opdplan plan`` and ``opdplan verify`` on the command line: files written whole and
only on success, plan files of another schema or corrupted JSON refused in one line."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from astropy.table import Table

from scheduler.cli import main

ROOT = Path(__file__).resolve().parent.parent
ARRAY = str(ROOT / "catalogs" / "demo_array.toml")
TARGETS = str(ROOT / "catalogs" / "demo_targets.csv")
BASE = ["plan", "--array", ARRAY, "--config", "medium", "--targets", TARGETS,
        "--night", "2027-04-18", "--solver", "greedy"]  # fmt: skip


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    folder = tmp_path_factory.mktemp("plan")
    paths = {k: folder / f"plan.{k}" for k in ("json", "csv", "xml")}
    code = main(BASE + ["--out", str(paths["json"]), "--csv", str(paths["csv"]),
                        "--votable", str(paths["xml"])])  # fmt: skip
    assert code == 0
    return folder, paths


def test_files_are_complete_and_consistent(written):
    folder, paths = written
    doc = json.loads(paths["json"].read_text())
    assert doc["schema"] == "opdplan-plan/1" and doc["summary"]["verified"] is True
    ids = [v["id"] for v in doc["visits"]]
    csv_ids = paths["csv"].read_text().splitlines()[1:]
    assert [row.split(",")[0] for row in csv_ids] == ids
    table = Table.read(paths["xml"], format="votable")
    # IVOA ObsLocTAP 1.0 column names and units (TAP schema table of the recommendation)
    for name in ("target_name", "obs_id", "s_ra", "s_dec", "t_min", "t_max", "execution_status"):
        assert name in table.colnames
    assert list(table["obs_id"]) == ids
    assert str(table["t_min"].unit) == "d" and str(table["s_ra"].unit) == "deg"
    # MJD of the first start agrees with its ISO time (MJD 40587 = 1970-01-01, calendar fact)
    from scheduler.catalog import parse_utc

    assert table["t_min"][0] == pytest.approx(parse_utc(doc["visits"][0]["start_utc"]) / 86400
                                              + 40587.0, abs=1e-8)  # fmt: skip
    assert not [p for p in folder.iterdir() if p.name.startswith(".")]  # no temporary left


def test_verify_accepts_and_rejects(written, tmp_path, capsys):
    _, paths = written
    assert main(["verify", str(paths["json"]), "--array", ARRAY, "--targets", TARGETS]) == 0
    doc = json.loads(paths["json"].read_text())
    doc["visits"][1]["start_s"] -= 4 * 3600.0
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(doc))
    capsys.readouterr()
    assert main(["verify", str(bad), "--array", ARRAY, "--targets", TARGETS]) == 1
    assert json.loads(capsys.readouterr().out)["valid"] is False


@pytest.mark.parametrize(
    ("content", "expected"),
    [('{"schema": "other/2", "visits": []}', "schema: expected 'opdplan-plan/1', got 'other/2'"),
     ('{"schema": "opdplan-plan/1", "visits": [', "not valid JSON"),
     ("[1, 2]", "schema: expected 'opdplan-plan/1', got None")],
)  # fmt: skip
def test_bad_plan_files(tmp_path, capsys, content, expected):
    path = tmp_path / "p.json"
    path.write_text(content)
    code = main(["verify", str(path), "--array", ARRAY, "--targets", TARGETS])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and expected in err[0] and str(path) in err[0]


def test_bad_input_writes_nothing(tmp_path, capsys):
    out = tmp_path / "never.json"
    args = BASE + ["--out", str(out)]
    args[args.index("--night") + 1] = "2027-13-01"
    assert main(args) == 2
    assert not out.exists() and list(tmp_path.iterdir()) == []
    args = BASE + ["--out", str(out), "--time-limit", "0"]
    assert main(args) == 2 and "--time-limit" in capsys.readouterr().err
