"""Semester availability, verdicts, pressure and completion odds.

Checks against the core's own nightly windows (the semester is their sum), against the
night's dark time (a circumpolar target with no delay limit is up all of it), and the
Monte Carlo against itself across executors (same seeds, same results serially and on
a Dask LocalCluster).  Rules are those of README.md (common practice, no source);
arrays and catalogs are invented test data.
"""

from __future__ import annotations

import datetime as dt
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
from scheduler.model.semester import CalendarEntry, Request, Semester
from scheduler.semester.availability import semester_availability
from scheduler.semester.fit import judge
from scheduler.semester.simulate import Scenario, odds, simulate

ROOT = Path(__file__).resolve().parent.parent
STEP_S = 300.0


def _array(opd_max=120.0, far_east_m=60.0, min_alt=30.0, moon=15.0):
    return parse_array({
        "site": {"name": "test", "latitude_deg": -26.1, "longitude_deg": -66.2, "height_m": 3000},
        "limits": {"min_altitude_deg": min_alt, "max_altitude_deg": 90.0,
                   "moon_separation_min_deg": moon},
        "stations": [
            {"name": "a", "east_m": 0, "north_m": 0, "up_m": 0, "internal_path_m": 40},
            {"name": "b", "east_m": far_east_m, "north_m": 20, "up_m": 0, "internal_path_m": 40},
        ],
        "delay_lines": [{"name": f"l{k}", "opd_min_m": 0, "opd_max_m": opd_max,
                         "max_rate_m_s": 1} for k in range(2)],
        "configurations": [{"name": "c", "feeds": {"l0": "a", "l1": "b"}}],
    }, "test.toml")  # fmt: skip


def _targets(rows):
    cols = {"name": [], "ra": [], "dec": [], "duration_min": [], "kind": [], "mag": []}
    for name, ra, dec, kind in rows:
        for key, value in zip(cols, (name, ra, dec, "30" if kind == "science" else "10", kind,
                                     "4"), strict=True):  # fmt: skip
            cols[key].append(str(value))
    return parse_targets(pd.DataFrame(cols), "test.csv")


def _semester(first, days, fraction=0.8):
    start = dt.date.fromisoformat(first)
    end = start + dt.timedelta(days=days - 1)
    months = tuple((m, fraction) for m in range(1, 13))
    return Semester(start, end, (CalendarEntry("c", start, end),), months, "test")


def test_availability_is_the_sum_of_nightly_windows():
    array, targets = _array(), _targets([("s1", 200, -40, "science"), ("s2", 150, -60, "science"),
                                         ("s3", 240, 5, "science")])  # fmt: skip
    sem = _semester("2027-04-18", 3)
    av = semester_availability(array, targets, sem, {(i, "c") for i in range(3)}, STEP_S)
    for night_date in sem.nights():
        night = find_night(array, night_date)
        windows = observable_windows(night_problem(array, array.beams("c"), targets, night))
        for i, w in enumerate(windows):
            # sampling at mid-cells: each window edge is off by at most half a cell
            tol_h = (len(w.observable) + 1) * STEP_S / 3600.0
            assert av.per_night[(i, "c")][night_date] == pytest.approx(w.hours, abs=tol_h)
    assert av.hours[(0, "c")] == pytest.approx(sum(av.per_night[(0, "c")].values()))


def test_circumpolar_target_without_delay_limit_gets_all_dark_time():
    array = _array(opd_max=1e4, min_alt=10.0, moon=0.0)
    targets = _targets([("pole", 30, -85, "science")])
    sem = _semester("2027-06-10", 2)
    av = semester_availability(array, targets, sem, {(0, "c")}, STEP_S)
    assert av.hours[(0, "c")] == pytest.approx(av.dark_hours, abs=1e-9)
    assert av.dark_hours > 20.0  # two southern winter nights


def test_never_delay_feasible_gets_zero_with_the_delay_reason():
    array = _array(opd_max=1.0, far_east_m=3000.0)
    targets = _targets([("east", 200, -30, "science")])
    sem = _semester("2027-04-18", 2)
    av = semester_availability(array, targets, sem, {(0, "c")}, STEP_S)
    (row,) = judge([Request("P", 0, "c", 2.0, 5.0, 2)], av)
    assert av.hours[(0, "c")] == 0.0
    assert row.verdict == "does not fit" and "delay range" in row.reason


@pytest.fixture(scope="module")
def scenario():
    array = _array()
    targets = _targets([("s1", 200, -40, "science"), ("c1", 204, -37, "calibrator"),
                        ("s2", 230, -30, "science"), ("c2", 226, -27, "calibrator")])  # fmt: skip
    requests = (Request("P-one", 0, "c", 1.0, 5.0, 2), Request("P-two", 2, "c", 3.0, 5.0, 3))
    return Scenario(array, targets, _semester("2027-04-18", 4, fraction=0.5), requests)


def test_monte_carlo_is_reproducible_and_the_same_on_dask(scenario):
    a = simulate(scenario, 4, seed=11, workers=1)
    b = simulate(scenario, 4, seed=11, workers=1)
    assert np.array_equal(a, b)
    from dask.distributed import Client, LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=False) as cluster, \
            Client(cluster) as client:  # fmt: skip
        c = simulate(scenario, 4, seed=11, client=client)
    assert np.array_equal(a, c)
    d = simulate(scenario, 4, seed=12, workers=1)
    assert a.shape == d.shape == (4, 2)


def test_clear_weather_small_request_completes(scenario):
    clear = Scenario(scenario.array, scenario.targets, _semester("2027-04-18", 4, fraction=1.0),
                     scenario.requests[:1])  # fmt: skip
    done = simulate(clear, 3, seed=1, workers=1)
    (result,) = odds(clear, done)
    assert result["completion_probability"] == 1.0
    assert result["expected_hours"] >= clear.requests[0].hours


BAD = [
    ("[[calendar]]\nconfiguration = 'nowhere'\nfrom = '2027-04-01'\nto = '2027-04-10'\n",
     "calendar[0].configuration: 'nowhere' is not a configuration"),
    ("[[calendar]]\nconfiguration = 'compact'\nfrom = '2027-04-01'\nto = '2027-04-10'\n"
     "colour = 'blue'\n", "calendar[0].colour: unknown key"),
    ("[[calendar]]\nconfiguration = 'compact'\nfrom = '2027-04-01'\nto = '2027-04-20'\n"
     "[[calendar]]\nconfiguration = 'long'\nfrom = '2027-04-15'\nto = '2027-04-30'\n",
     "calendar[1]: overlaps calendar[0]"),
]  # fmt: skip


@pytest.mark.parametrize(("calendar", "expected"), BAD)
def test_bad_semester_files(tmp_path, capsys, calendar, expected):
    path = tmp_path / "s.toml"
    path.write_text("[semester]\nstart = '2027-04-01'\nend = '2027-04-30'\n" + calendar
                    + "[weather]\nusable_fraction = { 4 = 0.8 }\n")  # fmt: skip
    code = _fit(path, ROOT / "examples" / "demo_proposals.csv")
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and expected in err[0], err


def test_month_without_weather_and_bad_proposals(tmp_path, capsys):
    sem = tmp_path / "s.toml"
    sem.write_text("[semester]\nstart = '2027-04-25'\nend = '2027-05-05'\n[[calendar]]\n"
                   "configuration = 'compact'\nfrom = '2027-04-25'\nto = '2027-05-05'\n"
                   "[weather]\nusable_fraction = { 4 = 0.8 }\n")  # fmt: skip
    assert _fit(sem, ROOT / "examples" / "demo_proposals.csv") == 2
    assert "no statistics for month 5" in capsys.readouterr().err
    good = tmp_path / "good.toml"
    good.write_text(sem.read_text().replace("{ 4 = 0.8 }", "{ 4 = 0.8, 5 = 0.7 }"))
    props = tmp_path / "p.csv"
    props.write_text("program,target,configuration,hours,priority\nP,Nobody-1,compact,2,5\n"
                     "P,Tide-05,nowhere,2,5\n")  # fmt: skip
    assert _fit(good, props) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 2 and "'Nobody-1' is not in" in err[0] and "'nowhere'" in err[1]


def _fit(semester, proposals):
    return main(["fit", "--semester", str(semester), "--array",
                 str(ROOT / "catalogs" / "demo_array.toml"), "--targets",
                 str(ROOT / "catalogs" / "demo_targets.csv"), "--proposals", str(proposals),
                 "--json"])  # fmt: skip


def test_unknown_keys_and_a_bare_number_for_the_weather(tmp_path, capsys):
    """Misspelt keys inside tables and ``usable_fraction = 3`` are problems reported
    together (one line each), never a traceback."""
    path = tmp_path / "s.toml"
    path.write_text("[semester]\nstart = '2027-04-01'\nend = '2027-04-30'\nende = 1\n"
                    "[[calendar]]\nconfiguration = 'compact'\nfrom = '2027-04-01'\n"
                    "to = '2027-04-30'\n[weather]\nusable_fraction = 3\n")  # fmt: skip
    code = _fit(path, ROOT / "examples" / "demo_proposals.csv")
    err = capsys.readouterr().err
    assert code == 2 and "Traceback" not in err
    assert "semester.ende: unknown key" in err
    assert "weather.usable_fraction: must map month numbers to fractions, got 3" in err


def test_bad_array_catalog_and_semester_are_reported_together(tmp_path, capsys):
    """Three bad inputs at once: one line for each file, exit 2."""
    array = tmp_path / "a.toml"
    array.write_text("[site]\nname = 'x'\n")
    catalog = tmp_path / "t.csv"
    catalog.write_text("name,ra\nA,1\n")
    sem = tmp_path / "s.toml"
    sem.write_text("[semester]\nstart = 'soon'\n")
    code = main(["fit", "--semester", str(sem), "--array", str(array), "--targets",
                 str(catalog), "--proposals", str(ROOT / "examples" / "demo_proposals.csv")])
    err = capsys.readouterr().err
    assert code == 2
    for name in ("a.toml", "t.csv", "s.toml"):
        assert name in err, err


def test_fit_success_path_with_simulation(tmp_path, capsys):
    """The committee's answer end to end on the short demo semester: every requested
    target has a verdict from the README's set, and the odds are probabilities."""
    code = main(["fit", "--semester", str(ROOT / "examples" / "demo_semester_short.toml"),
                 "--array", str(ROOT / "catalogs" / "demo_array.toml"), "--targets",
                 str(ROOT / "catalogs" / "demo_targets.csv"), "--proposals",
                 str(ROOT / "examples" / "demo_proposals.csv"), "--simulate", "2", "--seed",
                 "3", "--json"])  # fmt: skip
    assert code == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["targets"] and all(t["verdict"] in ("fits", "tight", "does not fit")
                                  for t in doc["targets"])  # fmt: skip
    odds_ = [p["completion_probability"] for p in doc["proposals"]]
    assert odds_ and all(0.0 <= p <= 1.0 for p in odds_)
    assert doc["simulation"] == {"realisations": 2, "seed": 3}


def test_unreachable_cluster_is_one_line(tmp_path, capsys):
    """A Dask scheduler that does not answer: one line naming --cluster, exit 2."""
    code = main(["fit", "--semester", str(ROOT / "examples" / "demo_semester_short.toml"),
                 "--array", str(ROOT / "catalogs" / "demo_array.toml"), "--targets",
                 str(ROOT / "catalogs" / "demo_targets.csv"), "--proposals",
                 str(ROOT / "examples" / "demo_proposals.csv"), "--simulate", "2",
                 "--cluster", "tcp://127.0.0.1:1"])  # fmt: skip
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and err[0].startswith("opdplan: error: --cluster"), err
