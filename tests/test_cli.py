"""The command line on the demo files: outputs follow the documented JSON shapes, bad
input gives one line per problem and exit status 2."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from scheduler.cli.main import main

ROOT = Path(__file__).resolve().parent.parent
ARRAY = str(ROOT / "catalogs" / "demo_array.toml")
TARGETS = str(ROOT / "catalogs" / "demo_targets.csv")
NIGHT = "2027-04-18"
OPD_TOL_M = 1e-6


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture(scope="module")
def windows_json():
    import contextlib
    import io

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        code = main(["windows", "--array", ARRAY, "--config", "long", "--targets", TARGETS,
                     "--night", NIGHT, "--json"])  # fmt: skip
    assert code == 0
    return json.loads(buf.getvalue())


def test_windows_json_shape(windows_json):
    night = windows_json["night"]
    assert night["start_utc"].endswith("Z") and night["end_utc"] < "2027-04-19T12:00:00Z"
    assert len(windows_json["targets"]) == 113
    for t in windows_json["targets"]:
        spans = t["observable"] + [[e["start_utc"], e["end_utc"]] for e in t["excluded"]]
        for a, b in spans:
            assert night["start_utc"] <= a <= b <= night["end_utc"]
        assert all(e["reason"] for e in t["excluded"])
    reasons = {e["reason"].split(":")[0] for t in windows_json["targets"] for e in t["excluded"]}
    assert "delay range" in reasons  # the long configuration limits the sky by delay


def test_delays_json_positions_are_valid(capsys):
    import tomllib

    code, out, _ = run(capsys, "delays", "--array", ARRAY, "--config", "long", "--ra", "14:30:00",
                       "--dec", "-40", "--night", NIGHT, "--json", "--step-min", "20")  # fmt: skip
    assert code == 0
    samples = json.loads(out)["samples"]
    lines = {d["name"]: d for d in tomllib.loads(Path(ARRAY).read_text())["delay_lines"]}
    feasible = [s for s in samples if s["feasible"]]
    assert feasible and len(feasible) < len(samples)
    for s in feasible:
        for name, x in s["opd_m"].items():
            assert lines[name]["opd_min_m"] - OPD_TOL_M <= x <= lines[name]["opd_max_m"] + OPD_TOL_M
    assert all(s["opd_m"] is None for s in samples if not s["feasible"])


def test_windows_view_renders(capsys):
    code, out, _ = run(capsys, "windows", "--array", ARRAY, "--config", "compact", "--targets",
                       TARGETS, "--night", NIGHT)  # fmt: skip
    assert code == 0
    assert "Tide-05" in out and "Advisory only" in out and "LST" in out


BAD = [
    (["--config", "nowhere"], "--config: configuration 'nowhere' is not one of"),
    (["--night", "18/04/2027"], "--night: '18/04/2027' is not a date"),
    (["--targets", "missing.csv"], "missing.csv: file not found"),
]


@pytest.mark.parametrize(("change", "expected"), BAD)
def test_bad_arguments_exit_2_with_one_line(capsys, change, expected):
    args = {"--array": ARRAY, "--config": "long", "--targets": TARGETS, "--night": NIGHT}
    args.update(dict(zip(change[::2], change[1::2], strict=True)))
    code, out, err = run(capsys, "windows", *[x for kv in args.items() for x in kv])
    assert code == 2 and out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("opdplan: error: ") and expected in lines[0]


def test_bad_array_file_reports_all_problems(tmp_path, capsys):
    text = Path(ARRAY).read_text().replace("latitude_deg = -26.1", "latitude_deg = -126.1")
    text = text.replace("max_rate_m_s = 0.8", "max_rate_m_s = -0.8")
    bad = tmp_path / "bad.toml"
    bad.write_text(text)
    code, _, err = run(capsys, "windows", "--array", str(bad), "--config", "long", "--targets",
                       TARGETS, "--night", NIGHT)  # fmt: skip
    lines = err.strip().splitlines()
    assert code == 2 and len(lines) == 2
    assert all(str(bad) in ln for ln in lines) and "Traceback" not in err


def test_polar_summer_is_a_clear_message(tmp_path, capsys):
    text = Path(ARRAY).read_text().replace("latitude_deg = -26.1", "latitude_deg = 78.0")
    arctic = tmp_path / "arctic.toml"
    arctic.write_text(text)
    code, _, err = run(capsys, "delays", "--array", str(arctic), "--config", "compact", "--ra",
                       "10", "--dec", "20", "--night", "2027-06-21")  # fmt: skip
    assert code == 2 and "no dark time" in err and len(err.strip().splitlines()) == 1
