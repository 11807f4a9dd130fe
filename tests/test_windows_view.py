"""The windows view and document: events at window edges, the one rule for what limits a
target most, the margin profile, and the layout at 80 and 120 columns.

Outside references: astropy's full transform to AltAz (a general-purpose reference)
for the altitude at windows that open or close at the altitude limit.  The snapshots
are of the fictional demo night; set OPDPLAN_UPDATE_SNAPSHOTS=1 to rewrite them after
a deliberate change of the view, and read the difference before committing it.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import AltAz, EarthLocation, SkyCoord
from astropy.time import Time
from rich.console import Console

import scheduler.astro  # noqa: F401  (astropy offline)
from scheduler.cli.main import main
from scheduler.geometry.windows import TargetWindows
from scheduler.inputs.catalog import load_targets
from scheduler.model.reasons import Limit, horizon_code, most_limiting
from scheduler.views.windows_view import WindowsView, layout, profile

ROOT = Path(__file__).resolve().parent.parent
ARRAY = str(ROOT / "catalogs" / "demo_array.toml")
TARGETS = str(ROOT / "catalogs" / "demo_targets.csv")
SNAPSHOTS = Path(__file__).resolve().parent / "snapshots"
ALT_TOL_DEG = 0.05  # window edges are bisected to 0.5 s; refraction is not modelled


def _windows(config: str) -> dict:
    import contextlib
    import io

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        assert main(["windows", "--array", ARRAY, "--config", config, "--targets", TARGETS,
                     "--night", "2027-04-18", "--json"]) == 0  # fmt: skip
    return json.loads(buf.getvalue())


@pytest.fixture(scope="module")
def doc():
    return _windows("long")


def _render(doc: dict, width: int) -> str:
    console = Console(width=width, record=True, color_system=None, file=open(os.devnull, "w"))
    console.print(WindowsView(doc))
    return console.export_text()


@pytest.mark.parametrize("width", [80, 120])
def test_view_matches_its_snapshot_and_fits(doc, width):
    text = _render(doc, width)
    path = SNAPSHOTS / f"windows_long_{width}.txt"
    if os.environ.get("OPDPLAN_UPDATE_SNAPSHOTS"):
        path.parent.mkdir(exist_ok=True)
        path.write_text(text, encoding="utf-8")
    assert text == path.read_text(encoding="utf-8")
    assert max(len(line) for line in text.splitlines()) <= width
    for t in doc["targets"]:
        assert t["name"] in text


def test_narrow_drops_lst_wide_keeps_it(doc):
    narrow, wide = _render(doc, 80), _render(doc, 120)
    assert " LST " not in narrow and " LST " in wide
    assert "never: " in narrow and "not tonight: " in _render(doc, 200)
    rows = [{"target": t, "window": w, "of": t} for t in doc["targets"]
            for w in t["windows"] or [None]]  # fmt: skip
    opts_80, short_80, cells_80 = layout(rows, 80)
    opts_200, _, cells_200 = layout(rows, 200)
    assert short_80 and cells_80 >= 12 and "lst" in opts_200 and cells_200 >= cells_80


def test_windows_at_the_altitude_limit_are_at_thirty_degrees():
    """Where an edge is worded as rising above or setting below the limit, astropy puts
    the target at 30 deg there (no refraction; the compact configuration, whose
    carriages reach the whole sky above the limit)."""
    doc = _windows("compact")
    targets = load_targets(TARGETS)
    site = EarthLocation.from_geodetic(-66.2 * u.deg, -26.1 * u.deg, 3050 * u.m)
    names, times = [], []
    for t in doc["targets"]:
        for w in t["windows"]:
            if w["opens"] == "rises above 30 deg":
                names.append(t["name"])
                times.append(w["start_utc"])
            if w["closes"] == "sets below 30 deg":
                names.append(t["name"])
                times.append(w["end_utc"])
    assert len(names) >= 3
    idx = [targets.index(n) for n in names]
    star = SkyCoord(np.degrees(targets.ra_rad[idx]) * u.deg,
                    np.degrees(targets.dec_rad[idx]) * u.deg)  # fmt: skip
    alt = star.transform_to(AltAz(obstime=Time(times), location=site, pressure=0 * u.hPa)).alt
    assert np.all(np.abs(alt.deg - 30.0) < ALT_TOL_DEG + 0.01), alt.deg  # iso times: 1 s


def test_every_window_edge_is_worded_and_old_keys_stay(doc):
    for t in doc["targets"]:
        assert {"name", "kind", "observable", "excluded", "hours"} <= set(t)
        assert len(t["windows"]) == len(t["observable"])
        for w in t["windows"]:
            assert w["opens"] and w["closes"] and w["start_lst"] and w["end_lst"]
        values = t["margin"]["values"]
        assert t["margin"]["unit"] in ("m", "deg")
        assert (any(v is not None for v in values)) == bool(t["windows"])


def test_one_rule_names_the_altitude_for_a_star_mostly_below_it():
    """A calibrator 10.9 h below the altitude limit and 4 minutes behind a mask is
    limited by the altitude (the rule takes the limit that removes the most time)."""
    hours = 3600.0
    w = TargetWindows("Cal-X", ((11.0 * hours, 11.5 * hours),),
                      ((0.0, 10.9 * hours, int(Limit.LOW)),
                       (10.9 * hours, 11.0 * hours - 120.0, horizon_code(0))))  # fmt: skip
    assert w.main_reason() == Limit.LOW
    assert most_limiting({"Moon": 2.0, "delay range": 2.0}, ["delay range", "Moon"]) == (
        "delay range")
    assert most_limiting({}, []) is None


def test_profile_scales_to_the_best_margin_and_blanks_closed_time():
    assert profile([None, 1.0, 2.0, 4.0, None], 5) == " ▂▄█ "
    assert profile([None, None], 4) == "    "
    assert profile([2.0, 2.0, 1.0, 1.0], 2) == "█▄"  # each cell its tightest sample
