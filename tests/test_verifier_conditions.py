"""The independent verifier (``scheduler.verify``) under modes and conditions: the
call forms, conditions as the plan rounds them or states none, wind, unknown magnitudes,
well-known calibrators, set-up time after a change of mode, and ``opdplan verify`` with
conditions.  Split from ``tests/test_verifier.py``; the shared helpers are in
``tests/_verifier_cases.py``.

Data are the fictional demo scenario or invented here.
"""

from __future__ import annotations

import dataclasses
import json
import math
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from _verifier_cases import ARCSEC, Case, Doc, change_limits, change_modes, demo, mode_of, plan_case
from _verifier_mutations_observing import bracket_calibrator_diameters_poorly_known

from scheduler.model.array import ArrayModel, Mode
from scheduler.model.conditions import Conditions
from scheduler.model.targets import Targets
from scheduler.verify import verify_plan

FIXTURES = (demo, plan_case)
"""Fixtures of ``tests/_verifier_cases.py``, imported so that pytest finds them by name."""


# ---------------------------------------------------------------- modes and conditions


def test_old_and_new_call_forms_agree(plan_case: Case) -> None:
    """README.md, *The night queue*: the verifier is called with the plan, the array,
    the catalog and the settings (positionally, as before), and optionally with the
    conditions; the plan's own conditions (reference, no wind) give the same verdict
    as none."""
    c = plan_case
    assert verify_plan(c.doc, c.array, c.targets, c.settings) == []
    assert verify_plan(c.doc, c.array, c.targets, c.settings, None) == []
    assert verify_plan(c.doc, c.array, c.targets, c.settings, conditions=Conditions()) == []


def test_conditions_given_as_the_plan_rounds_them(plan_case: Case) -> None:
    """README.md, *Outputs*: the plan writes its conditions to 1e-4 (and wind azimuths
    in 0..360); conditions that round to them, or name the same azimuth, agree."""
    c = plan_case
    c.doc["conditions"] = {"seeing_arcsec": 0.7346, "coherence_ms": 5.1235,
                           "wind_speed_m_s": 3.0, "wind_from_deg": 0.0}  # fmt: skip
    c.conditions = Conditions(seeing_rad=0.73456789 * ARCSEC, coherence_s=5.12345e-3,
                              wind_speed_m_s=3.0, wind_from_rad=math.radians(359.99996))
    assert c.run() == []


def test_plan_without_conditions_block_is_judged_at_the_references(plan_case: Case) -> None:
    """README.md, *Outputs*: a plan that states no conditions is judged at each mode's
    reference with no wind (the demo plan holds there)."""
    del plan_case.doc["conditions"]
    assert plan_case.run() == []


def test_wind_at_the_limit_or_without_direction_is_allowed(plan_case: Case) -> None:
    """DOMAIN.md section 8: the wind limit applies ABOVE its speed, and only to a wind
    whose direction is known."""
    change_limits(plan_case, wind_speed_max_m_s=15.0, wind_halfwidth_rad=math.pi)
    plan_case.conditions = Conditions(wind_speed_m_s=15.0, wind_from_rad=0.0)
    plan_case.doc["conditions"].update(wind_speed_m_s=15.0, wind_from_deg=0.0)
    assert plan_case.run() == []
    plan_case.conditions = Conditions(wind_speed_m_s=30.0)
    plan_case.doc["conditions"].update(wind_speed_m_s=30.0, wind_from_deg=None)
    assert plan_case.run() == []


def test_wind_names_the_visit_pointing_into_it(plan_case: Case) -> None:
    """DOMAIN.md section 8 and astropy's full transform (CHECKS.md, *Reference
    libraries*; called here directly): a strong wind blowing from the azimuth at which
    the first planned science visit starts, 2 deg either side forbidden, catches that
    visit and spares visits pointing elsewhere."""
    from astropy import units as u
    from astropy.coordinates import AltAz, EarthLocation, SkyCoord
    from astropy.time import Time

    c, site = plan_case, plan_case.array.site
    v = c.doc["visits"][c.first_science()]
    where = EarthLocation.from_geodetic(lon=math.degrees(site.longitude_rad) * u.deg,
                                        lat=math.degrees(site.latitude_rad) * u.deg,
                                        height=site.height_m * u.m)  # fmt: skip
    frame = AltAz(obstime=Time(v["start_s"], format="unix", scale="utc"), location=where,
                  pressure=0 * u.hPa)  # fmt: skip
    az = SkyCoord(ra=v["ra_deg"] * u.deg, dec=v["dec_deg"] * u.deg).transform_to(frame).az.deg
    change_limits(c, wind_speed_max_m_s=10.0, wind_halfwidth_rad=math.radians(2.0))
    c.conditions = Conditions(wind_speed_m_s=12.0, wind_from_rad=math.radians(float(az)))
    c.doc["conditions"].update(wind_speed_m_s=12.0, wind_from_deg=float(az))
    found = c.run()
    assert {p.rule for p in found} == {"wind"}, found
    named = {p.where for p in found}
    assert v["id"] in named and len(named) < len(c.doc["visits"]), found


def test_unknown_magnitudes_are_not_judged(plan_case: Case) -> None:
    """DOMAIN.md section 8 (brightness rule of the brief): with every limit far too bright
    for any star, a catalog without magnitudes holds nothing back; the plain ``mag``
    column stands for each mode's tracking band (README.md, *Inputs*)."""
    c = plan_case
    change_modes(c, tracking_limit_mag=-10.0, guiding_limit_mag=-10.0)
    c.targets = dataclasses.replace(c.targets, band_mags=(),
                                    mag=np.full(len(c.targets), np.nan))  # fmt: skip
    assert c.run() == []
    c.targets = dataclasses.replace(c.targets, mag=np.full(len(c.targets), 3.0))
    found = c.run()
    assert {p.rule for p in found} == {"brightness"}, found
    assert all("fringe tracking" in p.message for p in found)
    assert len(found) == len(c.doc["visits"])


def test_well_known_calibrators_pass(plan_case: Case) -> None:
    """CHECKS.md, *Visibilities* (x = 0.92308: dV^2/dtheta = -0.355817 per mas at 1 mas,
    so sigma(V^2) = 0.0071 for a 2 % diameter error): the calibrators of the
    poorly-known mutation, each with a diameter error of 2 %, suit again."""
    bracket_calibrator_diameters_poorly_known(plan_case)
    t = plan_case.targets
    err = np.where(~t.is_science, 0.02 * t.diameter_rad, t.diameter_err_rad)
    plan_case.targets = dataclasses.replace(t, diameter_err_rad=err)
    assert plan_case.run() == []


def test_set_up_only_after_a_change_of_mode(plan_case: Case) -> None:
    """DOMAIN.md section 8: set-up time is paid when the mode changes, not otherwise.
    With an hour of set-up for every mode, every visit named by rule transition follows
    a visit of another catalog mode."""
    c = plan_case
    change_modes(c, setup_s=3600.0)
    vs, t = c.doc["visits"], c.targets
    names = [mode_of(c, t.index(v["target"])).name for v in vs]
    changed = {vs[k]["id"] for k in range(1, len(vs)) if names[k] != names[k - 1]}
    found = c.run()
    assert {p.rule for p in found} == {"transition"}
    assert changed and {p.where for p in found} == changed, found


def _two_modes(c: Case) -> tuple[ArrayModel, Targets, tuple[str, ...]]:
    """The demo catalog's first three targets X, Y, Z in invented modes a (300 s of
    set-up), b (900 s) and the empty mode (the first, a); the fourth in mode 'gone'."""
    modes = (Mode("a", setup_s=300.0), Mode("b", setup_s=900.0))
    t = c.targets
    names = ("a", "b", "", "gone") + ("",) * (len(t) - 4)
    return dataclasses.replace(c.array, modes=modes), dataclasses.replace(t, mode=names), \
        t.names[:4]


def test_setup_seconds_by_hand(plan_case: Case) -> None:
    """DOMAIN.md section 8 (changing mode costs set-up time) and README.md, *Replanning*
    (an unknown pointing is the worst case), by hand: the next visit's mode's set-up
    when the mode changes, none when it stays (the empty mode is the first); an unknown
    previous target pays when the array has more than one mode; a catalog mode the
    array lacks (reported by rule mode) pays nothing."""
    from scheduler.verify.observing import setup_s

    array, targets, (x, y, z, gone) = _two_modes(plan_case)
    assert setup_s(array, targets, x, y) == 900.0
    assert setup_s(array, targets, y, x) == 300.0
    assert setup_s(array, targets, x, z) == 0.0 and setup_s(array, targets, z, x) == 0.0
    assert setup_s(array, targets, None, y) == 900.0
    assert setup_s(array, targets, "Nowhere-99", x) == 300.0
    assert setup_s(array, targets, gone, y) == 0.0 and setup_s(array, targets, y, gone) == 0.0
    one = dataclasses.replace(array, modes=(Mode("a", setup_s=300.0),))
    assert setup_s(one, targets, None, x) == 0.0


def test_verify_command_takes_conditions(demo: tuple[Doc, ArrayModel, Targets],
                                         tmp_path: Path) -> None:  # fmt: skip
    """README.md, *Commands* (``opdplan verify``): with no conditions the plan's own
    hold (exit 0); better seeing than the plan states is a ``conditions`` problem
    (exit 1); a wind speed without its direction is an input error."""
    from rich.console import Console

    from scheduler.cli.commands import verify as command
    from scheduler.cli.parser import build_parser
    from scheduler.model.errors import InputError

    doc, _, _ = demo
    path = tmp_path / "plan.json"
    path.write_text(json.dumps(doc), encoding="utf-8")
    root = Path(__file__).resolve().parent.parent / "catalogs"
    base = ["verify", str(path), "--array", str(root / "demo_array.toml"), "--targets",
            str(root / "demo_targets.csv")]  # fmt: skip
    parser = build_parser("test")

    def run(*extra: str) -> Any:
        return command.run(parser.parse_args([*base, *extra]), 0.0, Console(file=None))

    assert run().exit_code == 0
    result = run("--seeing", "0.6")
    assert result.exit_code == 1
    assert result.json["problems"] == ["conditions.seeing_arcsec: [conditions] the plan says "
                                       "null, the conditions given 0.6"]
    with pytest.raises(InputError):
        run("--wind-speed", "5")
