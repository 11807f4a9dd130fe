"""The command line on the demo files: outputs follow the documented JSON shapes, bad
input gives one line per problem and exit status 2."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
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
    with open(TARGETS) as f:  # one entry per catalog row (the file's own row count)
        rows = sum(1 for line in f if line.strip() and not line.startswith("#")) - 1
    assert len(windows_json["targets"]) == rows
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


def test_delays_sample_whole_steps_and_state_positions_at_the_printed_instant(capsys):
    """Samples on whole multiples of the step in UTC, and the carriage positions at
    exactly the printed instant: the differences between lines equal the geometric
    delay differences p_i . s - p_j . s minus the fixed paths (DOMAIN.md section 3), with
    s from astropy's full ICRS -> AltAz transform at the printed time (CHECKS.md,
    reference libraries: within 1 mm for baselines up to 300 m)."""
    import tomllib

    import astropy.units as u
    from astropy.coordinates import AltAz, EarthLocation, SkyCoord
    from astropy.time import Time

    code, out, _ = run(capsys, "delays", "--array", ARRAY, "--config", "long", "--ra", "14:30:00",
                       "--dec", "-40", "--night", NIGHT, "--json", "--step-min", "10")  # fmt: skip
    assert code == 0
    samples = [s for s in json.loads(out)["samples"] if s["feasible"]]
    assert samples and all(s["utc"][14:19] in {f"{m:02d}:00" for m in range(0, 60, 10)}
                           for s in samples)  # fmt: skip
    doc = tomllib.loads(Path(ARRAY).read_text())
    site = doc["site"]
    config = next(c for c in doc["configurations"] if c["name"] == "long")
    stations = {s["name"]: s for s in doc["stations"]}
    where = EarthLocation.from_geodetic(site["longitude_deg"] * u.deg,
                                        site["latitude_deg"] * u.deg, site["height_m"] * u.m)
    for s in samples[:: max(1, len(samples) // 6)]:
        frame = AltAz(obstime=Time(s["utc"].replace("Z", ""), scale="utc"), location=where,
                      pressure=0 * u.hPa)  # fmt: skip
        aa = SkyCoord(ra=217.5 * u.deg, dec=-40 * u.deg).transform_to(frame)
        alt, az = aa.alt.rad, aa.az.rad
        vec = [np.cos(alt) * np.sin(az), np.cos(alt) * np.cos(az), np.sin(alt)]
        implied = []
        for line, st_name in config["feeds"].items():
            st = stations[st_name]
            p_s = st["east_m"] * vec[0] + st["north_m"] * vec[1] + st["up_m"] * vec[2]
            path = st["internal_path_m"] + config.get("fixed_offsets_m", {}).get(line, 0.0)
            implied.append(s["opd_m"][line] - p_s + path)  # K, the same for every line
        assert max(implied) - min(implied) <= DELAY_AT_PRINTED_TIME_TOL_M, (s["utc"], implied)


DELAY_AT_PRINTED_TIME_TOL_M = 0.001  # CHECKS.md: fast path vs astropy within 1 mm


def test_target_and_coordinates_together_are_refused(capsys):
    code, _, err = run(capsys, "delays", "--array", ARRAY, "--config", "long", "--ra", "10",
                       "--dec", "-30", "--target", "Tide-05", "--targets", TARGETS, "--night",
                       NIGHT)  # fmt: skip
    assert code == 2 and "either --target or --ra/--dec" in err


def test_night_past_the_earth_orientation_tables_is_warned(capsys):
    """A night decades ahead: one warning line on stderr saying what accuracy is lost
    (UT1-UTC is unknown beyond the bundled IERS predictions; common practice, from
    memory), and the command still runs."""
    code, out, err = run(capsys, "delays", "--array", ARRAY, "--config", "compact", "--ra",
                         "14:30:00", "--dec", "-40", "--night", "2045-04-18", "--json",
                         "--step-min", "60")  # fmt: skip
    assert code == 0 and json.loads(out)["samples"]
    warnings = [ln for ln in err.splitlines() if ln.startswith("opdplan: warning:")]
    assert len(warnings) == 1 and "Earth-orientation table" in warnings[0]
    assert "arcsec" in warnings[0] and "mm of delay" in warnings[0]
    code, _, err = run(capsys, "delays", "--array", ARRAY, "--config", "compact", "--ra",
                       "14:30:00", "--dec", "-40", "--night", NIGHT, "--json")  # fmt: skip
    assert code == 0 and "warning" not in err


def test_version(capsys):
    with pytest.raises(SystemExit) as stop:
        main(["--version"])
    assert stop.value.code == 0 and capsys.readouterr().out.startswith("opdplan ")
