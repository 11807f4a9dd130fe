"""The set-up advisor: the reach of many choices at once, maps of the reachable sky,
the ranking's hours, enumeration and merging, and ``opdplan advise`` end to end.

Outside references: the delay feasibility by brute force (scan the common constant K
and test every carriage against its range: the definition of DOMAIN.md section 3,
independent of the closed-form max/min), astropy's full transform to the HADec frame
for hour angles, and the ``windows`` command's bisected windows for observable hours.
Facts of the trade (common practice, no source): an east-west array symmetric about
its centre reaches the same sky at hour angles +H and -H.
"""

from __future__ import annotations

import itertools
import json
import math
from dataclasses import replace
from pathlib import Path

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import EarthLocation, HADec, SkyCoord
from astropy.time import Time

import scheduler.astro  # noqa: F401  (astropy offline)
from scheduler.advise.rank import rank_choices
from scheduler.advise.score import pool_sky, score_choices
from scheduler.advise.search import searched_space
from scheduler.advise.space import space_size, whole_space
from scheduler.cli.commands.common import load_inputs
from scheduler.cli.main import main
from scheduler.geometry.reach import headroom_at, reach_map, sky_axes
from scheduler.geometry.sky import enu_from_hadec
from scheduler.geometry.windows import observable_windows
from scheduler.inputs.array_file import parse_array
from scheduler.model.choices import Choice
from scheduler.model.errors import InputError

ROOT = Path(__file__).resolve().parent.parent
ARRAY = str(ROOT / "catalogs" / "demo_array.toml")
TARGETS = str(ROOT / "catalogs" / "demo_targets.csv")
NIGHT = "2027-04-18"
K_STEP_M = 0.001  # brute-force scan of K


def _small_array(stations: list[tuple[str, float, float, float]], lines: int = 3,
                 free: bool = True) -> dict:  # fmt: skip
    """An invented array document: stations (name, east, north, internal path)."""
    return {
        "site": {"name": "test", "latitude_deg": -30.0, "longitude_deg": 0.0, "height_m": 0},
        "stations": [{"name": n, "east_m": e, "north_m": no, "up_m": 0.0, "internal_path_m": a}
                     for n, e, no, a in stations],
        "delay_lines": [{"name": f"dl{k}", "opd_min_m": 0.0, "opd_max_m": 40.0 + 10 * k,
                         "max_rate_m_s": 1.0} for k in range(lines)],
        "configurations": [{"name": "c", "feeds": {f"dl{k}": s[0] for k, s in
                                                   enumerate(stations[:lines])}}],
        "fixed_delays": [{"line": "dl1", "options_m": [0.0, 15.0, 30.0]}],
        "routing": {"free": free},
    }  # fmt: skip


def _brute_reachable(beams, lat, ha, dec, margin_m: float = 0.0) -> bool:
    """Some K puts every carriage inside its range (DOMAIN.md section 3), by scanning."""
    e, n, up = enu_from_hadec(ha, dec, lat)
    ps = beams.position_enu_m @ np.array([e, n, up])
    k = np.arange(-100.0, 200.0, K_STEP_M)  # wider than every K this array can need
    x = k[:, None] + ps[None, :] - beams.path_m[None, :]
    inside = (x >= beams.opd_min_m + margin_m) & (x <= beams.opd_max_m - margin_m)
    return bool(inside.all(axis=1).any())


def test_map_pixel_is_reachable_exactly_when_some_k_works():
    arr = parse_array(_small_array([("a", 0, 0, 10), ("b", 30, 20, 25), ("c", -25, 35, 5)]))
    beams = arr.beams("c")
    lat = arr.site.latitude_rad
    rng = np.random.default_rng(7)
    ha = rng.uniform(-np.pi / 2, np.pi / 2, 200)
    dec = rng.uniform(-np.pi / 2, np.pi / 4, 200)
    room = headroom_at(beams, lat, ha, dec)
    checked = 0
    for h, d, r in zip(ha, dec, room, strict=True):
        if abs(r) < 2 * K_STEP_M:  # too near the edge for the scan's resolution
            continue
        assert _brute_reachable(beams, lat, h, d) == (r >= 0), (h, d, r)
        checked += 1
    assert checked > 160
    assert (room >= 0).any() and (room < 0).any()


def test_map_agrees_with_the_delays_command(capsys):
    """Where ``delays`` says a star is feasible or limited by the delay range, the map
    at the star's hour angle and declination (astropy, HADec frame) says the same."""
    inp = load_inputs(ARRAY, "long", TARGETS, NIGHT)
    assert main(["delays", "--array", ARRAY, "--config", "long", "--ra", "14:30:00", "--dec",
                 "-40", "--night", NIGHT, "--step-min", "10", "--json"]) == 0  # fmt: skip
    doc = json.loads(capsys.readouterr().out)
    site = EarthLocation.from_geodetic(-66.2 * u.deg, -26.1 * u.deg, 3050 * u.m)
    when = Time([s["utc"] for s in doc["samples"]])
    hd = SkyCoord(217.5 * u.deg, -40 * u.deg).transform_to(
        HADec(obstime=when, location=site, pressure=0 * u.hPa))
    room = headroom_at(inp.beams, math.radians(-26.1), hd.ha.rad, hd.dec.rad)
    compared = {True: 0, False: 0}
    for s, r in zip(doc["samples"], room, strict=True):
        judged = s["feasible"] or s["status"].startswith("delay range")
        if not judged or abs(r) < 0.05:  # near an edge the map's simplifications show
            continue
        assert s["feasible"] == (r >= 0.002), (s, r)
        compared[s["feasible"]] += 1
    assert compared[True] >= 3 and compared[False] >= 3


def test_symmetric_east_west_array_gives_a_map_symmetric_in_hour_angle():
    doc = _small_array([("w", -40, 0, 20), ("m", 0, 0, 20), ("e", 40, 0, 20)])
    for line in doc["delay_lines"]:
        line["opd_max_m"] = 30.0
    arr = parse_array(doc)
    lat = arr.site.latitude_rad
    ha, dec = sky_axes(lat, math.radians(30), math.radians(1.5), math.radians(1.0))
    m = reach_map(arr.beams("c"), lat, (math.radians(30), math.radians(87)), ha, dec, 0.002)
    assert np.array_equal(m.reachable, m.reachable[:, ::-1])
    assert m.reachable.any() and (~m.reachable & ~np.isnan(m.headroom_m)).any()
    assert np.allclose(np.nan_to_num(m.headroom_m), np.nan_to_num(m.headroom_m[:, ::-1]),
                       atol=1e-9)  # fmt: skip


def test_ranking_hours_equal_the_windows_hours():
    """Tonight's set-up's observable hours per science target equal the ``windows``
    hours (bisected edges) within one ranking step per window edge, and the weighted
    sum uses the same priorities."""
    inp = load_inputs(ARRAY, "medium", TARGETS, NIGHT)
    problem = inp.problem()
    step_s = 120.0
    ranking = rank_choices(inp.array, problem, ["medium"], 3, step_s)
    now = next(o for o in ranking.options if o.is_current)
    hours = dict(now.hours)
    wins = observable_windows(problem)
    t = problem.targets
    total = 0.0
    for i in np.flatnonzero(t.is_science):
        w = wins[i]
        edges = 2 * len(w.observable)
        assert abs(hours.get(t.names[i], 0.0) - w.hours) <= edges * step_s / 3600 + 1e-9
        total += float(t.priority[i]) * w.hours
    assert now.weighted_hours == pytest.approx(total, rel=0.01)
    assert sum(float(t.priority[t.index(n)]) * h for n, h in hours.items()) == pytest.approx(
        now.weighted_hours, rel=1e-5)  # hours are kept to 4 decimals


def test_every_combination_is_enumerated_and_equivalent_ones_merged():
    """Three lines of different ranges and one line with three fixed delays: 3! routings
    x 3 options; with two identical lines the merged space is smaller and every merged
    choice scores like the one kept."""
    doc = _small_array([("a", 0, 0, 10), ("b", 30, 20, 25), ("c", -25, 35, 5)])
    arr = parse_array(doc)
    assert space_size(arr, "c") == math.perm(3, 3) * 3
    space = whole_space(arr, "c")
    assert len(space) == 18 and space.merged.sum() == 18
    assert space.choice(0) == Choice.current(arr, "c")
    doc["delay_lines"][2]["opd_max_m"] = doc["delay_lines"][0]["opd_max_m"]  # dl0 == dl2
    twin = parse_array(doc)
    merged = whole_space(twin, "c")
    assert merged.merged.sum() == 18 and len(merged) < 18
    inp = load_inputs(ARRAY, "compact", TARGETS, NIGHT)
    lat = twin.site.latitude_rad
    rng = np.random.default_rng(3)
    ha, dec = rng.uniform(-1, 1, 200), rng.uniform(-1.2, 0.6, 200)
    every = [(r, o) for r in itertools.permutations(range(3)) for o in (0.0, 15.0, 30.0)]
    kept = {tuple(np.round(headroom_at(twin.beams_of(merged.choice(c).as_configuration("x")),
                                       lat, ha, dec), 9)) for c in range(len(merged))}
    for route, off in every:
        feeds = tuple((f"dl{r}", s) for r, s in zip(route, ("a", "b", "c"), strict=True))
        conf = Choice("c", feeds, tuple((ln, off if ln == "dl1" else 0.0) for ln, _ in feeds))
        room = headroom_at(twin.beams_of(conf.as_configuration("x")), lat, ha, dec)
        assert tuple(np.round(room, 9)) in kept
    assert inp is not None


def test_search_stays_between_tonight_and_the_exhaustive_best():
    inp = load_inputs(ARRAY, "long", TARGETS, NIGHT)
    problem = inp.problem()
    sky = pool_sky(problem, 600.0)
    whole = whole_space(inp.array, "long")
    best = score_choices(sky, *whole.constants(inp.array)).weighted_hours
    found = searched_space(inp.array, "long",
                           lambda s: score_choices(sky, *s.constants(inp.array)).weighted_hours,
                           seed=1)  # fmt: skip
    got = score_choices(sky, *found.constants(inp.array)).weighted_hours
    assert not found.exhaustive and found.choice(0) == Choice.current(inp.array, "long")
    assert best[0] <= got.max() <= best.max() + 1e-9


def test_a_choice_pasted_into_the_array_file_is_the_same_set_up(tmp_path):
    arr = parse_array(_small_array([("a", 0, 0, 10), ("b", 30, 20, 25), ("c", -25, 35, 5)]))
    space = whole_space(arr, "c")
    choice = space.choice(len(space) - 1)
    text = (ROOT / "catalogs" / "demo_array.toml").read_text()
    assert "[[fixed_delays]]" in text and "free = true" in text
    import tomllib

    conf = tomllib.loads(choice.toml("pasted"))["configurations"][0]
    assert conf["feeds"] == dict(choice.feeds)
    assert conf.get("fixed_offsets_m", {}) == {ln: f for ln, f in choice.offsets_m if f}


def test_bad_choices_in_the_array_file_are_reported_together(tmp_path):
    doc = _small_array([("a", 0, 0, 10), ("b", 30, 20, 25), ("c", -25, 35, 5)])
    doc["fixed_delays"] = [{"line": "dl9", "options_m": [0, 10]},
                           {"line": "dl1", "options_m": [5, 5]},
                           {"line": "dl2", "options_m": "many", "colour": 1}]
    doc["routing"] = {"free": "yes"}
    with pytest.raises(InputError) as info:
        parse_array(doc, "arr.toml")
    text = "\n".join(str(p) for p in info.value.problems)
    for expected in ("fixed_delays[0].line: delay line 'dl9' does not exist",
                     "fixed_delays[1].options_m: options must differ",
                     "fixed_delays[2].options_m: must list", "fixed_delays[2].colour: unknown",
                     "routing.free: must be true or false, got 'yes'"):  # fmt: skip
        assert expected in text, text


@pytest.fixture(scope="module")
def advised(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("advise")
    maps = tmp / "maps"
    maps.mkdir()
    out = tmp / "advice.json"
    import contextlib
    import io

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        code = main(["advise", "--array", ARRAY, "--targets", TARGETS, "--night", NIGHT,
                     "--configs", "medium,long", "--top", "3", "--plot", str(maps), "--json"])
    assert code == 0
    out.write_text(buf.getvalue())
    return json.loads(buf.getvalue()), maps


def test_advise_plans_verifies_and_draws_each_choice(advised):
    doc, maps = advised
    choices = doc["choices"]
    assert {c["configuration"] for c in choices} == {"medium", "long"}
    assert sum(c["tonight"] for c in choices) == 2
    values = [c["planned"]["value"] for c in choices]
    assert values == sorted(values, reverse=True)
    assert all(c["planned"]["verified"] for c in choices)
    for c in choices:
        assert (maps / c["map"]).stat().st_size > 10_000
        m = json.loads((maps / c["map"].replace(".png", ".json")).read_text())
        assert len(m["reachable"]) == len(m["dec_deg"]) and len(m["reachable"][0]) == len(
            m["ha_h"])
        assert set(c["opens"]) <= set(c["open_targets"])
        assert not set(c["closes"]) & set(c["open_targets"])
    for s in doc["spaces"]:
        assert s["exhaustive"] and s["distinct"] <= s["combinations"]


def test_advise_opens_and_closes_against_tonight(advised):
    doc, _ = advised
    for c in doc["choices"]:
        now = next(x for x in doc["choices"] if x["tonight"]
                   and x["configuration"] == c["configuration"])  # fmt: skip
        assert set(c["opens"]) == set(c["open_targets"]) - set(now["open_targets"])
        assert set(c["closes"]) == set(now["open_targets"]) - set(c["open_targets"])


def test_advise_bad_options_are_reported_together(tmp_path, capsys):
    code = main(["advise", "--array", ARRAY, "--targets", TARGETS, "--night", NIGHT,
                 "--configs", "medium,nowhere", "--top", "0", "--step-min", "0.1",
                 "--plot", str(tmp_path / "missing")])  # fmt: skip
    err = capsys.readouterr().err
    assert code == 2
    for expected in ("--top: 0 is not in [1, 50]", "--step-min: 0.1 is not in",
                     "'nowhere' is not a configuration", "missing does not exist"):
        assert expected in err, err
    assert not list(tmp_path.iterdir())


def test_replace_keeps_beams_consistent():
    """A planned choice's configuration gives the beams the ranking scored."""
    inp = load_inputs(ARRAY, "long", TARGETS, NIGHT)
    space = whole_space(inp.array, "long")
    c = space.choice(5)
    beams = inp.array.beams_of(c.as_configuration("x"))
    lo, hi = space.constants(inp.array)
    assert np.allclose(beams.opd_min_m + beams.fixed_offset_m, lo[5])
    assert np.allclose(beams.opd_max_m + beams.fixed_offset_m, hi[5])
    assert replace(inp.problem(), beams=beams).beams.configuration == "x"


def test_counted_changes_are_the_listed_changes():
    """The tie-break's count of changes is the number of changes the table lists, and a
    line tonight does not feed takes only its own fixed-delay options."""
    from scheduler.advise.rank import _changes
    from scheduler.advise.space import options_per_line, tonight_offsets

    inp = load_inputs(ARRAY, "medium", TARGETS, NIGHT)
    space = whole_space(inp.array, "medium")
    counted = _changes(space, tonight_offsets(inp.array, "medium"))
    now = space.choice(0)
    listed = [len(space.choice(c).changes_from(now)) for c in range(0, len(space), 7)]
    assert list(counted[::7]) == listed
    doc = _small_array([("a", 0, 0, 10), ("b", 30, 20, 25)])
    doc["fixed_delays"] = [{"line": "dl2", "options_m": [10.0, 20.0]}]
    arr = parse_array(doc)
    assert options_per_line(arr, "c")[2] == (10.0, 20.0)
