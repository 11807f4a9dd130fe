"""``opdplan plan`` and ``opdplan verify`` on the command line: files written whole and
only on success, plan files of another schema or corrupted JSON refused in one line."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from astropy.table import Table

from scheduler.cli.main import main

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
    from scheduler.model.times import parse_utc

    assert table["t_min"][0] == pytest.approx(parse_utc(doc["visits"][0]["start_utc"]) / 86400
                                              + 40587.0, abs=1e-8)  # fmt: skip
    assert not [p for p in folder.iterdir() if p.name.startswith(".")]  # no temporary left
    # times to the millisecond (ISO 8601 allows a decimal fraction of the second), the
    # same instant as the seconds beside them, so stated carriage paths hold when printed
    for v in doc["visits"]:
        assert len(v["start_utc"]) == len("2027-04-19T00:00:00.000Z")
        assert parse_utc(v["start_utc"]) == pytest.approx(v["start_s"], abs=5e-4)
    assert "start_utc" in paths["csv"].read_text().splitlines()[0]
    assert doc["visits"][0]["start_utc"] in paths["csv"].read_text()


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
     ("[1, 2]", "schema: expected 'opdplan-plan/1', got None"),
     ('{"schema": "opdplan-plan/1", "visits": NaN}', "not valid JSON")],
)  # fmt: skip
def test_bad_plan_files(tmp_path, capsys, content, expected):
    path = tmp_path / "p.json"
    path.write_text(content)
    code = main(["verify", str(path), "--array", ARRAY, "--targets", TARGETS])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and expected in err[0] and str(path) in err[0]


def test_plan_missing_a_field_or_with_nan_fails_its_schema(written, tmp_path, capsys):
    """Published JSON Schema first (jsonschema): a visit without ``end_utc`` is a problem
    naming the field, exit 2, never ``valid: true``."""
    _, paths = written
    doc = json.loads(paths["json"].read_text())
    del doc["visits"][1]["end_utc"]
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(doc))
    capsys.readouterr()
    assert main(["verify", str(bad), "--array", ARRAY, "--targets", TARGETS]) == 2
    err = capsys.readouterr().err
    assert "visits[1]" in err and "'end_utc' is a required property" in err


def test_bad_input_writes_nothing(tmp_path, capsys):
    out = tmp_path / "never.json"
    args = BASE + ["--out", str(out)]
    args[args.index("--night") + 1] = "2027-13-01"
    assert main(args) == 2
    assert not out.exists() and list(tmp_path.iterdir()) == []
    args = BASE + ["--out", str(out), "--time-limit", "0"]
    assert main(args) == 2 and "--time-limit" in capsys.readouterr().err


def test_every_bad_input_is_reported_together(tmp_path, capsys):
    """A bad array, a bad catalog and a bad --night: three lines, exit 2, nothing written."""
    array = tmp_path / "a.toml"
    array.write_text("[site]\nname = 'x'\nlatitude_deg = 95\n")
    catalog = tmp_path / "t.csv"
    catalog.write_text("name,ra,dec,duration_min\nA,1,-100,30\n")
    out = tmp_path / "p.json"
    code = main(["plan", "--array", str(array), "--config", "c", "--targets", str(catalog),
                 "--night", "tomorrow", "--out", str(out)])  # fmt: skip
    err = capsys.readouterr().err
    assert code == 2 and not out.exists()
    assert "a.toml" in err and "t.csv" in err and "--night: 'tomorrow'" in err
    assert "Traceback" not in err
