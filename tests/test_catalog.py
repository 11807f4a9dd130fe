"""Catalog validation and coordinate parsing."""

from __future__ import annotations

import math

import pandas as pd
import pytest

from scheduler.inputs.catalog import load_targets, parse_angle, parse_targets
from scheduler.model.errors import InputError
from scheduler.model.times import parse_utc

ANGLE_TOL_DEG = 1e-9


@pytest.mark.parametrize(
    ("text", "hours", "degrees"),
    [
        # sexagesimal arithmetic: h*15 + m/4 + s/240 (common practice, no source)
        ("12:00:00", True, 180.0),
        ("23:09:16.641", True, 347.31933750),
        ("-06:43:11.61", False, -6.71989167),
        ("-00:30:00", False, -0.5),
        ("+45 30 00", False, 45.5),
        ("123.25", True, 123.25),  # decimal degrees are taken as degrees even for RA
    ],
)
def test_parse_angle(text, hours, degrees):
    assert math.isclose(parse_angle(text, hours), degrees, abs_tol=1e-7)


def frame(**cols):
    base = {
        "name": ["a", "b"],
        "ra": ["10", "20"],
        "dec": ["-10", "-20"],
        "duration_min": ["30", "10"],
    }
    base.update(cols)
    return pd.DataFrame(base)


def problems(df) -> list[str]:
    with pytest.raises(InputError) as info:
        parse_targets(df, "t.csv")
    return [str(p) for p in info.value.problems]


def test_defaults_and_passthrough():
    t = parse_targets(frame(notes=["x", "y"]), "t.csv")
    assert t.is_science.all() and t.needs_calibrator.all()
    assert list(t.visits) == [1, 1] and list(t.priority) == [1.0, 1.0]
    assert list(t.extra.columns) == ["notes"]
    assert math.isclose(t.duration_s[0], 1800.0)


CASES = [
    ("ra out of range", dict(ra=["400", "20"]), "t.csv: row 2, column 'ra'"),
    ("dec out of range", dict(dec=["-95", "-20"]), "t.csv: row 2, column 'dec'"),
    ("unparsable", dict(dec=["abc", "-20"]), "t.csv: row 2, column 'dec': 'abc' is neither"),
    ("negative duration", dict(duration_min=["30", "-5"]), "t.csv: row 3, column 'duration_min'"),
    ("duplicate", dict(name=["a", "a"]), "t.csv: row 3, column 'name': duplicate name 'a'"),
    ("kind", dict(kind=["star", "science"]), "t.csv: row 2, column 'kind'"),
    ("bad window", dict(window_start_utc=["2027-01-01T05:00:00Z", ""],
                        window_end_utc=["2027-01-01T04:00:00Z", ""]), "window ends before"),
]  # fmt: skip


@pytest.mark.parametrize(("label", "cols", "expected"), CASES, ids=[c[0] for c in CASES])
def test_each_problem_is_named(label, cols, expected):
    found = problems(frame(**cols))
    assert any(expected in p for p in found), found


def test_missing_column_and_many_problems():
    assert problems(frame().drop(columns=["dec"])) == [
        "t.csv: column 'dec': missing required column"
    ]
    assert len(problems(frame(ra=["400", "x"], dec=["100", "0"]))) == 3


def test_csv_with_comment_header_counts_file_lines(tmp_path):
    path = tmp_path / "c.csv"
    path.write_text("# comment\nname,ra,dec,duration_min\nok,1,2,3\nbad,1,99,3\n")
    with pytest.raises(InputError, match="row 4, column 'dec'"):
        load_targets(path)


def test_ecsv_and_votable_round_trip(tmp_path):
    from astropy.table import Table

    table = Table({"name": ["a", "b"], "ra": [10.0, 20.0], "dec": [-10.0, -20.0],
                   "duration_min": [30.0, 10.0], "kind": ["science", "calibrator"]})  # fmt: skip
    for ext, fmt in ((".ecsv", "ascii.ecsv"), (".xml", "votable")):
        path = tmp_path / f"t{ext}"
        table.write(path, format=fmt)
        t = load_targets(path)
        assert t.names == ("a", "b") and list(t.is_science) == [True, False]


def test_parse_utc_z_suffix():
    # 2027-01-01T00:00:00Z is 1798761600 s after 1970-01-01 (calendar arithmetic)
    assert parse_utc("2027-01-01T00:00:00Z") == 1798761600.0
