"""Array-file validation: every documented problem is caught, named and reported
together (the contract of the array file in README.md)."""

from __future__ import annotations

import copy
import math

import pytest

from scheduler.inputs.array_file import load_array, parse_array
from scheduler.model.errors import InputError

GOOD = {
    "site": {"name": "test site", "latitude_deg": -20.0, "longitude_deg": 30.0, "height_m": 100.0},
    "stations": [
        {"name": "alpha", "east_m": 0.0, "north_m": 0.0, "up_m": 0.0, "internal_path_m": 10.0},
        {"name": "beta", "east_m": 50.0, "north_m": 10.0, "up_m": 0.0, "internal_path_m": 20.0,
         "horizon": [[90.0, 40.0], [0.0, 30.0]]},
    ],
    "delay_lines": [
        {"name": "l1", "opd_min_m": 0.0, "opd_max_m": 120.0, "max_rate_m_s": 1.0},
        {"name": "l2", "opd_min_m": 0.0, "opd_max_m": 120.0, "max_rate_m_s": 0.5},
    ],
    "configurations": [
        {"name": "c1", "feeds": {"l1": "alpha", "l2": "beta"}, "fixed_offsets_m": {"l2": 5.0}}
    ],
}  # fmt: skip


def problems(data) -> list[str]:
    with pytest.raises(InputError) as info:
        parse_array(data, "arr.toml")
    return [str(p) for p in info.value.problems]


def test_good_file_loads_in_si_units():
    a = parse_array(GOOD, "arr.toml")
    assert math.isclose(a.site.latitude_rad, math.radians(-20.0))
    assert math.isclose(a.limits.min_altitude_rad, math.radians(30.0))  # documented default
    beams = a.beams("c1")
    assert beams.line_names == ("l1", "l2")
    assert list(beams.path_m) == [10.0, 25.0]
    assert a.station("beta").horizon[0][0] == 0.0  # mask points sorted by azimuth


def mutate(fn):
    data = copy.deepcopy(GOOD)
    fn(data)
    return data


CASES = [
    ("missing key", lambda d: d["site"].pop("height_m"), "site.height_m: missing required key"),
    ("unknown key", lambda d: d["site"].update(elevation=3), "site.elevation: unknown key"),
    ("unknown station key", lambda d: d["stations"][0].update(x=1), "stations[0].x: unknown key"),
    ("latitude", lambda d: d["site"].update(latitude_deg=95.0), "site.latitude_deg: 95.0 is out"),
    ("opd range", lambda d: d["delay_lines"][1].update(opd_min_m=130.0),
     "delay_lines[1].opd_min_m: opd_min_m (130.0) must be less"),
    ("rate", lambda d: d["delay_lines"][0].update(max_rate_m_s=0.0),
     "delay_lines[0].max_rate_m_s: must be positive"),
    ("duplicate station", lambda d: d["stations"][1].update(name="alpha"),
     "stations[1].name: duplicate name 'alpha'"),
    ("unknown station", lambda d: d["configurations"][0]["feeds"].update(l2="gamma"),
     "configurations[0].feeds.l2: station 'gamma' does not exist"),
    ("unknown line", lambda d: d["configurations"][0]["feeds"].update(l9="alpha"),
     "configurations[0].feeds.l9: delay line 'l9' does not exist"),
    ("not a number", lambda d: d["stations"][0].update(east_m="ten"),
     "stations[0].east_m: must be a finite number"),
    ("offset for unused line", lambda d: d["configurations"][0].update(fixed_offsets_m={"l3": 1.0}),
     "configurations[0].fixed_offsets_m.l3"),
]  # fmt: skip


@pytest.mark.parametrize(("label", "change", "expected"), CASES, ids=[c[0] for c in CASES])
def test_each_problem_is_named(label, change, expected):
    found = problems(mutate(change))
    assert any(p.startswith("arr.toml: " + expected) for p in found), found


def test_problems_are_reported_together():
    def two(d):
        d["site"]["latitude_deg"] = -100.0
        d["delay_lines"][0]["max_rate_m_s"] = -1.0

    found = problems(mutate(two))
    assert len(found) == 2


def test_bad_toml_and_missing_file(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("[site\nname=1")
    with pytest.raises(InputError, match="not valid TOML"):
        load_array(bad)
    with pytest.raises(InputError, match="file not found"):
        load_array(tmp_path / "none.toml")


def test_out_removes_lines():
    a = parse_array(GOOD, "arr.toml")
    assert a.beams("c1", frozenset({"beta"})).line_names == ("l1",)
    with pytest.raises(KeyError, match="did you mean 'c1'"):
        a.beams("c1x")
