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
from scheduler.model.semester import CalendarEntry, MonthWeather, Request, Semester, independent
from scheduler.semester.availability import Availability, semester_availability
from scheduler.semester.pool import build_scenario
from scheduler.semester.pressure import pressure
from scheduler.semester.realise import FIELDS, Outcome
from scheduler.semester.simulate import simulate
from scheduler.semester.verdicts import program_answers, request_answers

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
    months = tuple(independent(m, fraction) for m in range(1, 13))
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


def test_never_delay_feasible_gets_zero_with_the_sky_reason():
    """A target no delay setting reaches: no clear hours, no visit, and the reason
    names the delay range (README, *Will the proposals fit?*)."""
    array = _array(opd_max=1.0, far_east_m=3000.0)
    targets = _targets([("east", 200, -30, "science")])
    sem = _semester("2027-04-18", 2)
    scn = build_scenario(array, targets, sem, [Request("P", 0, "c", 2.0, 5.0, 2)])
    av = semester_availability(array, scn.targets, sem, {(0, "c")}, STEP_S)
    out = simulate(scn, 3, seed=1, workers=1)
    (row,) = request_answers(scn, out, av)
    assert av.hours[(0, "c")] == 0.0 and row.expected_hours == 0.0
    assert row.verdict == "does not fit" and row.reason.startswith("sky")
    assert "delay range" in row.detail


@pytest.fixture(scope="module")
def scenario():
    array = _array()
    targets = _targets([("s1", 200, -40, "science"), ("c1", 204, -37, "calibrator"),
                        ("s2", 230, -30, "science"), ("c2", 226, -27, "calibrator")])  # fmt: skip
    requests = [Request("P-one", 0, "c", 1.0, 5.0, 2), Request("P-two", 2, "c", 3.0, 5.0, 3)]
    sem = _semester("2027-04-18", 4, fraction=0.5)
    sem = Semester(sem.start, sem.end, sem.calendar,
                   tuple(MonthWeather(m, 0.5, 2.0, partial_nights=0.3, seeing_spread=0.3)
                         for m in range(1, 13)), "test")  # fmt: skip
    return build_scenario(array, targets, sem, requests)


def test_monte_carlo_is_the_same_serially_on_processes_and_on_dask(scenario):
    """Same seed, same numbers whatever runs it: this process, two local processes, a
    Dask LocalCluster of two worker processes."""
    a = simulate(scenario, 6, seed=11, workers=1)
    b = simulate(scenario, 6, seed=11, workers=2)
    assert np.array_equal(a.hours, b.hours) and np.array_equal(a.by_configuration,
                                                               b.by_configuration)
    from dask.distributed import Client, LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                      dashboard_address=None) as cluster, Client(cluster) as client:  # fmt: skip
        c = simulate(scenario, 6, seed=11, client=client)
    assert np.array_equal(a.hours, c.hours) and c.ks == tuple(range(6))
    d = simulate(scenario, 6, seed=12, workers=1)
    assert d.hours.shape == (6, len(FIELDS), 2) and not np.array_equal(a.hours, d.hours)


def test_clear_weather_small_request_completes(scenario):
    clear = build_scenario(scenario.array, _targets([("s1", 200, -40, "science"),
                                                    ("c1", 204, -37, "calibrator")]),
                           _semester("2027-04-18", 4, fraction=1.0),
                           [Request("P-one", 0, "c", 1.0, 5.0, 2)])  # fmt: skip
    out = simulate(clear, 3, seed=1, workers=1)
    av = semester_availability(clear.array, clear.targets, clear.semester, {(0, "c")}, STEP_S)
    (row,) = request_answers(clear, out, av)
    (program,) = program_answers(clear, out, [row])
    assert row.completion == 1.0 and row.verdict == "fits" and program.verdict == "fits"
    assert row.expected_hours >= 1.0
    # calibrators, acquisitions and transitions are charged on top of the time on target
    assert row.charged_hours > row.expected_hours


def _outcome(done, clear, open_, bright, charged=None) -> Outcome:
    """Hand-made realisations of one request (hours done; mean opportunities)."""
    n = len(done)
    hours = np.zeros((n, len(FIELDS), 1))
    hours[:, 0, 0] = done
    hours[:, 1, 0] = charged if charged is not None else np.asarray(done) * 2
    hours[:, 2:, 0] = (clear, open_, bright)
    return Outcome(tuple(range(n)), hours, ("c",), np.ones((n, 1, 2)))


@pytest.mark.parametrize("opportunities, head", [
    ((3, 3, 3), "sky"), ((8, 3.5, 3), "weather"), ((8, 7, 2.5), "conditions"),
    ((8, 7, 6), "lost to higher-ranked requests"),
])  # fmt: skip
def test_shortfall_reasons_follow_the_stated_order(opportunities, head):
    """4 visits needed (2 h in 30-min visits) and done in 1 of 4 realisations: the
    first rule of README's order that the opportunities break names the reason."""
    targets = _targets([("s1", 200, -40, "science")])
    sem = _semester("2027-04-18", 2)
    scn = build_scenario(_array(), targets, sem, [Request("P", 0, "c", 2.0, 5.0, 2)])
    av = Availability(hours={(0, "c"): 5.0}, lost={(0, "c"): {"altitude": 3.0}})
    (row,) = request_answers(scn, _outcome([2.0, 0.5, 1.0, 0.0], *opportunities), av)
    assert row.visits_needed == 4 and row.completion == 0.25
    assert row.verdict == "at risk" and row.reason.startswith(head), row.reason
    assert row.standard_error == pytest.approx((0.25 * 0.75 / 4) ** 0.5)


def test_programme_needs_all_its_requests_in_the_same_realisation():
    """Two requests each done in half the realisations, never together: each is at
    risk, the programme never completes."""
    targets = _targets([("s1", 200, -40, "science"), ("s2", 230, -30, "science")])
    scn = build_scenario(_array(), targets, _semester("2027-04-18", 2),
                         [Request("P", 0, "c", 1.0, 5.0, 2), Request("P", 1, "c", 1.0, 5.0, 3)])
    hours = np.zeros((4, len(FIELDS), 2))
    hours[:, 0, 0] = [1, 0, 1, 0]
    hours[:, 0, 1] = [0, 1, 0, 1]
    hours[:, 2:, :] = 9.0
    out = Outcome(tuple(range(4)), hours, ("c",), np.ones((4, 1, 2)))
    rows = request_answers(scn, out, Availability(hours={(0, "c"): 9.0, (1, "c"): 9.0}))
    (prog,) = program_answers(scn, out, rows)
    assert [r.completion for r in rows] == [0.5, 0.5] and prog.completion == 0.0
    assert prog.verdict == "does not fit" and prog.requested_hours == 2.0


def test_pressure_spreads_requests_over_their_sidereal_hours():
    """Hand-computed: 4 h asked on a target observable 2 h at LST 10h and 6 h at 11h,
    with efficiency 0.5 (science 1 h for 2 h used) needs 8 telescope hours: 2 at 10h and
    6 at 11h; usable dark time is the month's dark hours times its usable fraction
    (0.8 clear, no partial nights)."""
    targets = _targets([("s1", 200, -40, "science")])
    sem = _semester("2027-04-18", 2, fraction=0.8)
    scn = build_scenario(_array(), targets, sem, [Request("P", 0, "c", 4.0, 5.0, 2)])
    lst = np.zeros(24)
    lst[10], lst[11] = 2.0, 6.0
    dark = np.zeros(24)
    dark[10], dark[11] = 5.0, 3.0
    av = Availability(by_lst={(0, "c"): lst}, dark_lst_by_month={("c", 4): dark})
    out = Outcome((0,), np.zeros((1, len(FIELDS), 1)), ("c",), np.array([[[1.0, 2.0]]]))
    (p,) = pressure(scn, av, out)
    assert p.efficiency == 0.5
    assert p.requested_hours[10] == pytest.approx(2.0)
    assert p.requested_hours[11] == pytest.approx(6.0)
    assert p.usable_dark_hours[10] == pytest.approx(4.0)
    assert p.usable_dark_hours[11] == pytest.approx(2.4)
    assert p.ratio[11] == pytest.approx(2.5) and np.isnan(p.ratio[3])
    never = pressure(scn, Availability(dark_lst_by_month={("c", 4): dark}), out)[0]
    assert never.unplaced_hours == 8.0 and never.requested_hours.sum() == 0.0


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
                    + "[[weather]]\nmonth = 4\nclear_nights = 0.8\n")  # fmt: skip
    code = _fit(path, ROOT / "examples" / "demo_proposals.csv")
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and expected in err[0], err


def test_month_without_weather_and_bad_proposals(tmp_path, capsys):
    sem = tmp_path / "s.toml"
    sem.write_text("[semester]\nstart = '2027-04-25'\nend = '2027-05-05'\n[[calendar]]\n"
                   "configuration = 'compact'\nfrom = '2027-04-25'\nto = '2027-05-05'\n"
                   "[[weather]]\nmonth = 4\nclear_nights = 0.8\n")  # fmt: skip
    assert _fit(sem, ROOT / "examples" / "demo_proposals.csv") == 2
    assert "no [[weather]] table for month 5" in capsys.readouterr().err
    good = tmp_path / "good.toml"
    good.write_text(sem.read_text() + "[[weather]]\nmonth = 5\nclear_nights = 0.7\n")
    props = tmp_path / "p.csv"
    props.write_text("program,target,configuration,hours,priority\nP,Nobody-1,compact,2,5\n"
                     "P,Tide-05,nowhere,2,5\n")  # fmt: skip
    assert _fit(good, props) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 2 and "'Nobody-1' is not in" in err[0] and "'nowhere'" in err[1]


def test_weather_tables_are_checked_together(tmp_path, capsys):
    """A spell too short for its clear fraction (the chain needs P(clear -> lost) <= 1),
    a fraction above 1, an unknown key and a month twice: one line each."""
    path = tmp_path / "s.toml"
    path.write_text("[semester]\nstart = '2027-04-01'\nend = '2027-04-30'\n[[calendar]]\n"
                    "configuration = 'compact'\nfrom = '2027-04-01'\nto = '2027-04-30'\n"
                    "[[weather]]\nmonth = 4\nclear_nights = 0.2\nlost_spell_nights = 2\n"
                    "[[weather]]\nmonth = 4\nclear_nights = 1.5\nfog = 1\n")  # fmt: skip
    assert _fit(path, ROOT / "examples" / "demo_proposals.csv") == 2
    err = capsys.readouterr().err
    for expected in ("weather[0].lost_spell_nights: 2 is too short for clear_nights 0.2",
                     "weather[1].clear_nights: must be a number in [0, 1], got 1.5",
                     "weather[1].fog: unknown key"):
        assert expected in err, err
    assert "Traceback" not in err


def _fit(semester, proposals):
    return main(["fit", "--semester", str(semester), "--array",
                 str(ROOT / "catalogs" / "demo_array.toml"), "--targets",
                 str(ROOT / "catalogs" / "demo_targets.csv"), "--proposals", str(proposals),
                 "--json"])  # fmt: skip


def test_unknown_keys_and_a_bare_number_for_the_weather(tmp_path, capsys):
    """Misspelt keys inside tables and ``weather = 3`` are problems reported together
    (one line each), never a traceback."""
    path = tmp_path / "s.toml"
    path.write_text("weather = 3\n[semester]\nstart = '2027-04-01'\nend = '2027-04-30'\n"
                    "ende = 1\n[[calendar]]\nconfiguration = 'compact'\nfrom = '2027-04-01'\n"
                    "to = '2027-04-30'\n")  # fmt: skip
    code = _fit(path, ROOT / "examples" / "demo_proposals.csv")
    err = capsys.readouterr().err
    assert code == 2 and "Traceback" not in err
    assert "semester.ende: unknown key" in err
    assert "weather: must be an array of tables" in err


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


def test_fit_agrees_with_its_own_simulation_and_explains_every_shortfall(tmp_path, capsys):
    """The committee's answer end to end on the short demo semester: every verdict
    follows from its completion probability (README thresholds), every request short of
    fitting has a reason, a programme completes no more often than its least likely
    request, and the expected hours never exceed the charged ones."""
    plot = tmp_path / "pressure.png"
    code = main(["fit", "--semester", str(ROOT / "examples" / "demo_semester_short.toml"),
                 "--array", str(ROOT / "catalogs" / "demo_array.toml"), "--targets",
                 str(ROOT / "catalogs" / "demo_targets.csv"), "--proposals",
                 str(ROOT / "examples" / "demo_proposals.csv"), "--simulate", "12", "--seed",
                 "3", "--workers", "1", "--json", "--plot", str(plot)])  # fmt: skip
    assert code == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["simulation"]["realisations"] == 12 and doc["simulation"]["seed"] == 3
    assert plot.read_bytes().startswith(b"\x89PNG")
    seen = 0
    for prog in doc["programs"]:
        odds_ = [r["completion_probability"] for r in prog["requests"]]
        assert prog["completion_probability"] <= min(odds_) + 1e-9
        for r in prog["requests"]:
            p = r["completion_probability"]
            expected = "fits" if p >= 0.8 else ("at risk" if p >= 0.2 else "does not fit")
            assert r["verdict"] == expected
            assert (r["reason"] == "-") == (r["verdict"] == "fits"), r
            assert r["expected_hours"] <= r["charged_hours"] + 1e-9
            seen += 1
    assert seen == len(pd.read_csv(ROOT / "examples" / "demo_proposals.csv", comment="#"))
    ratios = [b for b in doc["pressure"] if b["configuration"] == "compact"]
    assert len(ratios) == 24 and all(b["usable_dark_hours"] >= 0 for b in ratios)


def test_unreachable_cluster_is_one_line(tmp_path, capsys):
    """A Dask scheduler that does not answer: one line naming --cluster, exit 2."""
    code = main(["fit", "--semester", str(ROOT / "examples" / "demo_semester_short.toml"),
                 "--array", str(ROOT / "catalogs" / "demo_array.toml"), "--targets",
                 str(ROOT / "catalogs" / "demo_targets.csv"), "--proposals",
                 str(ROOT / "examples" / "demo_proposals.csv"), "--simulate", "2",
                 "--cluster", "tcp://127.0.0.1:1"])  # fmt: skip
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and err[0].startswith("opdplan: error: --cluster"), err
