"""Observing modes, brightness limits under the night's conditions, wind, and what the
queue does with them (invented arrays and catalogs; README "Observing modes").

Sources: the limit scaling of DOMAIN.md section 8 (common practice, no source: the
fringe tracker's limit moves by 2.5 log10(tau0 / tau0_ref), guiding worsens with seeing
as the flux per area of the seeing disk, 5 log10(seeing / seeing_ref)); the uniform-disk
visibility V = 2 J1(x)/x with scipy's J1 as the reference; azimuths from astropy's full
ICRS -> AltAz transform.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from _plan_cases import Case, array_dict
from scipy.special import j1

from scheduler.inputs.array_file import parse_array
from scheduler.model.brightness import faint_codes
from scheduler.model.conditions import Conditions, guiding_limit, tracking_limit
from scheduler.model.errors import InputError
from scheduler.model.plan import PlanSettings
from scheduler.model.reasons import Limit, limit_of
from scheduler.queue.planner import plan_night

ARCSEC = math.pi / 180 / 3600
MAS = ARCSEC / 1000
LIMIT_TOL_MAG = 1e-9  # the rule is plain arithmetic
TIME_TOL_S = 1e-3  # plan times are written to the millisecond
PLAN_S = 6.0

H_MODE = {"name": "h-low", "wavelength_um": 1.65, "bandwidth_um": 0.3, "tracking_band": "H",
          "tracking_limit_mag": 7.5, "guiding_band": "V", "guiding_limit_mag": 12.0,
          "reference_seeing_arcsec": 0.8, "reference_coherence_ms": 4.0, "setup_s": 0.0}
K_MODE = {**H_MODE, "name": "k-mid", "wavelength_um": 2.2, "tracking_band": "K",
          "tracking_limit_mag": 7.0, "setup_s": 900.0}  # fmt: skip
PADS = [(0.0, 0.0, 0.0, 50.0), (30.0, 20.0, 0.2, 58.0), (-20.0, 35.0, -0.3, 62.0)]


def _array(**limits):
    return parse_array(array_dict(PADS, limits=limits, modes=[H_MODE, K_MODE]), "arr.toml")


def _row(name, ra, dec, **extra):
    return {"name": name, "ra": str(ra), "dec": str(dec), "duration_min": "30",
            "needs_calibrator": "false", **extra}  # fmt: skip


# --- the limits and the conditions ----------------------------------------------------


def test_limits_at_the_reference_conditions_are_the_stated_ones():
    a = _array()
    for mode in a.modes:
        assert tracking_limit(mode, Conditions()) == mode.tracking_limit_mag
        assert guiding_limit(mode, Conditions()) == mode.guiding_limit_mag


@pytest.mark.parametrize("seeing_arcsec, tau_ms", [(1.6, 2.0), (0.5, 8.0), (1.0, 3.2)])
def test_limits_move_with_coherence_time_and_seeing(seeing_arcsec, tau_ms):
    """DOMAIN.md section 8 (common practice, no source): the tracking limit moves by
    2.5 log10(tau0/tau0_ref); the guiding limit by -5 log10(seeing/seeing_ref)."""
    mode = _array().mode("h-low")
    c = Conditions(seeing_rad=seeing_arcsec * ARCSEC, coherence_s=tau_ms * 1e-3)
    assert tracking_limit(mode, c) == pytest.approx(
        7.5 + 2.5 * math.log10(tau_ms / 4.0), abs=LIMIT_TOL_MAG)
    assert guiding_limit(mode, c) == pytest.approx(
        12.0 - 5.0 * math.log10(seeing_arcsec / 0.8), abs=LIMIT_TOL_MAG)


def test_one_step_worse_is_seeing_times_1_25_and_coherence_times_0_8():
    """The backups' "one step worse" (README; common practice, from memory)."""
    mode = _array().mode("h-low")
    c = Conditions().worse()
    assert c.seeing_for(mode) == pytest.approx(1.0 * ARCSEC)
    assert c.coherence_for(mode) == pytest.approx(3.2e-3)


def test_faint_targets_in_each_band_and_the_plain_magnitude():
    """Tracking in the mode's band (mag_H for h-low, mag_K for k-mid), guiding in V; the
    plain ``mag`` stands for the tracking band; unknown magnitudes hold nothing back."""
    from _plan_cases import targets_frame

    from scheduler.inputs.catalog import parse_targets

    rows = [_row("ok", 150, -30, mag_H="7.4", mag_V="11.9"),
            _row("track", 150, -30, mag_H="7.6"),
            _row("guide", 150, -30, mag_H="5.0", mag_V="12.1"),
            _row("k-ok", 150, -30, mode="k-mid", mag_H="9.0", mag_K="6.9"),
            _row("k-track", 150, -30, mode="k-mid", mag_H="5.0", mag_K="7.1"),
            _row("plain", 150, -30, mag="7.8"),
            _row("unknown", 150, -30)]  # fmt: skip
    targets = parse_targets(targets_frame(rows), "t.csv")
    codes = faint_codes(targets, _array(), Conditions())
    limits = [int(limit_of(c)) for c in codes]
    assert limits == [Limit.OK, Limit.FAINT, Limit.FAINT, Limit.OK, Limit.FAINT,
                      Limit.FAINT, Limit.OK]  # fmt: skip
    # halving the coherence time brings the tracking limit 0.75 mag brighter
    worse = faint_codes(targets, _array(), Conditions(coherence_s=2e-3))
    assert int(limit_of(worse[0])) == Limit.FAINT


# --- array file and catalog -------------------------------------------------------------


def test_modes_load_in_si_units_and_bad_keys_are_reported_together():
    a = _array()
    k = a.mode("k-mid")
    assert k.wavelength_m == pytest.approx(2.2e-6) and k.setup_s == 900.0
    assert k.reference_seeing_rad == pytest.approx(0.8 * ARCSEC)
    bad = array_dict(PADS, modes=[{**H_MODE, "wavelength_um": -1.0},
                                  {**K_MODE, "name": "h-low", "colour": "red"},
                                  {"name": "no-wavelength"}])  # fmt: skip
    with pytest.raises(InputError) as info:
        parse_array(bad, "arr.toml")
    found = [str(p) for p in info.value.problems]
    for expected in ("modes[0].wavelength_um: must be a number", "modes[1].colour: unknown key",
                     "modes[1].name: duplicate name 'h-low'",
                     "modes[2].wavelength_um: missing required key"):
        assert any(expected in f for f in found), found
    with pytest.raises(InputError, match="limits.wind_halfwidth_deg"):
        parse_array(array_dict(PADS, limits={"wind_halfwidth_deg": 200.0}), "arr.toml")


def test_catalog_columns_are_checked(tmp_path, capsys):
    """A bad magnitude, limb darkening, diameter error and an unknown mode: one line each
    naming file, row and value, exit status 2, nothing written."""
    from scheduler.cli.main import main

    array = tmp_path / "a.toml"
    array.write_text(_toml(array_dict(PADS, modes=[H_MODE, K_MODE])))
    catalog = tmp_path / "t.csv"
    catalog.write_text("name,ra,dec,duration_min,mode,mag_H,limb_darkening,diameter_err_mas\n"
                       "a,150,-30,30,k-mid,7,0.3,0.01\n"
                       "b,150,-30,30,j-wide,7,0.3,0.01\n"
                       "c,150,-30,30,,abc,1.5,-0.2\n")  # fmt: skip
    out = tmp_path / "plan.json"
    code = main(["plan", "--array", str(array), "--config", "test", "--targets", str(catalog),
                 "--night", "2027-04-18", "--out", str(out), "--quiet"])  # fmt: skip
    err = capsys.readouterr().err
    assert code == 2 and not out.exists()
    for expected in ("row 3, column 'mode': 'j-wide' is not a mode",
                     "row 4, column 'mag_H'", "row 4, column 'limb_darkening'",
                     "row 4, column 'diameter_err_mas'"):
        assert expected in err, err
    assert "Traceback" not in err


def _toml(doc: dict) -> str:
    """A small TOML writer for the invented array documents (tables and arrays of tables
    of plain values)."""
    def value(v):
        if isinstance(v, dict):
            return "{ " + ", ".join(f'"{k}" = {value(x)}' for k, x in v.items()) + " }"
        if isinstance(v, str):
            return f'"{v}"'
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        return repr(float(v)) if not isinstance(v, bool) else str(v).lower()

    lines = []
    for key, t in doc.items():
        for table in t if isinstance(t, list) else [t]:
            lines.append(f"[[{key}]]" if isinstance(t, list) else f"[{key}]")
            lines += [f"{k} = {value(v)}" for k, v in table.items()]
    return "\n".join(lines) + "\n"


# --- wind ---------------------------------------------------------------------------------


def _wind_case(speed_m_s):
    """Wind from the north (azimuth 0) at ``speed_m_s``; the limit is 12 m/s within
    45 deg.  At latitude -26.1 a target at dec +10 transits in the north, one at dec -60
    never leaves the southern half of the sky (cos A = sin(dec)/cos(lat) at rising)."""
    doc = array_dict(PADS, limits={"wind_speed_max_m_s": 12.0, "wind_halfwidth_deg": 45.0})
    rows = [_row("North", 180, 10), _row("South", 180, -60)]
    return Case(doc, rows, conditions=Conditions(wind_speed_m_s=speed_m_s, wind_from_rad=0.0))


def test_wind_above_the_limit_closes_the_sky_it_blows_from():
    from astropy import units as u
    from astropy.coordinates import AltAz, EarthLocation, SkyCoord
    from astropy.time import Time

    from scheduler.geometry.windows import observable_windows

    case = _wind_case(15.0)
    windows = {w.name: w for w in observable_windows(case.problem)}
    wind = [(a, b) for a, b, c in windows["North"].excluded if int(limit_of(c)) == Limit.WIND]
    assert wind, windows["North"].excluded
    assert not any(int(limit_of(c)) == Limit.WIND for _, _, c in windows["South"].excluded)
    site = case.array.site
    place = EarthLocation.from_geodetic(np.degrees(site.longitude_rad) * u.deg,
                                        np.degrees(site.latitude_rad) * u.deg,
                                        site.height_m * u.m)  # fmt: skip
    for a, b in wind:
        when = Time(0.5 * (a + b), format="unix")
        altaz = SkyCoord(180 * u.deg, 10 * u.deg).transform_to(
            AltAz(obstime=when, location=place, pressure=0 * u.hPa))
        off = abs((altaz.az.deg + 180.0) % 360.0 - 180.0)
        assert off < 45.0, off  # astropy's azimuth inside the closed sector
    calm = {w.name: w for w in observable_windows(_wind_case(10.0).problem)}
    assert not any(int(limit_of(c)) == Limit.WIND for _, _, c in calm["North"].excluded)


# --- set-up time, resolved targets and calibrators in the queue ------------------------


def test_mode_changes_cost_the_set_up_time_in_every_solver():
    """Targets alternating between two modes on one patch of sky: wherever consecutive
    visits change mode, the gap holds acquisition plus the new mode's set-up (README
    "Observing modes"), and the plan passes the independent verifier."""
    doc = array_dict(PADS, modes=[H_MODE, K_MODE])
    rows = [_row(f"S{k}", 150 + 4 * k, -30, mode=("k-mid" if k % 2 else "h-low"),
                 priority=str(1 + k % 3)) for k in range(8)]  # fmt: skip
    case = Case(doc, rows)
    s = PlanSettings(time_limit_s=PLAN_S)
    acquisition = case.array.overheads.acquisition_s
    for solver in ("greedy", "optimize"):
        plan = plan_night(case.problem, s, solver)
        assert case.problems(plan, s) == []
        changes = 0
        for prev, nxt in zip(plan.visits, plan.visits[1:], strict=False):
            modes = [case.problem.mode_of(v.target).name for v in (prev, nxt)]
            setup = case.array.mode(modes[1]).setup_s if modes[0] != modes[1] else 0.0
            changes += setup > 0
            assert nxt.start_s - prev.end_s >= acquisition + setup - TIME_TOL_S
        assert len(plan.visits) >= 3


def _ud_v2(theta_mas, baseline_m, wavelength_m):
    x = np.pi * theta_mas * MAS * baseline_m / wavelength_m
    return float((2 * j1(x) / x) ** 2)


def test_over_resolved_targets_are_left_out_with_the_baseline_and_v2():
    """Stations about 100 m apart (invented): a 10 mas star is past the first null on
    every baseline while the projection keeps them above 50 m (above 30 deg altitude:
    x >= pi 10 mas 50 m / 1.65 um = 4.6 > 3.83); a 4.5 mas star is past the null at full
    length but measurable where the projection halves a baseline: flagged when it is
    scheduled, never dropped as over-resolved (values with scipy's J1)."""
    pads = [(0.0, 0.0, 0.0, 50.0), (100.0, 0.0, 0.0, 50.0), (50.0, 90.0, 0.0, 50.0)]
    rows = [_row("Huge", 160, -30, diameter_mas="10"), _row("Half", 200, -30, diameter_mas="4.5"),
            _row("Small", 240, -30, diameter_mas="0.3")]  # fmt: skip
    case = Case(array_dict(pads, opd_max_m=200.0), rows)
    assert _ud_v2(4.5, 50.0, 1.65e-6) > 0.01 and np.pi * 4.5 * MAS * 100.0 / 1.65e-6 > 3.8317
    assert np.pi * 10 * MAS * 50.0 / 1.65e-6 > 3.8317
    plan = plan_night(case.problem, PlanSettings(time_limit_s=PLAN_S), "greedy")
    why = {u.target: u.text for u in plan.unscheduled}
    assert why["Huge"].startswith("over-resolved"), why
    assert "pad-" in why["Huge"]
    scheduled = {case.targets.names[v.target]: v for v in plan.visits}
    assert "Huge" not in scheduled and "Small" in scheduled
    assert scheduled["Small"].weak_baselines == ()
    assert not why.get("Half", "").startswith("over-resolved"), why
    assert scheduled["Half"].weak_baselines, "partly resolved, not flagged"


def test_calibrators_are_chosen_by_the_error_they_bring():
    """Two calibrators 2 deg from the science target: 0.6 mas with a 10 % error brings
    sigma(V^2) above 2 % on a 100 m baseline at 1.65 um, 0.15 mas far below (first-order
    propagation with scipy's J1, a central difference); only the second calibrates."""
    pads = [(0.0, 0.0, 0.0, 50.0), (100.0, 0.0, 0.0, 50.0)]

    def sigma(theta_mas):
        h = 1e-4 * theta_mas
        d = (_ud_v2(theta_mas + h, 100.0, 1.65e-6) - _ud_v2(theta_mas - h, 100.0, 1.65e-6))
        return abs(d / (2 * h)) * 0.1 * theta_mas

    assert sigma(0.9) > 0.02 > 0.002 > sigma(0.15)
    rows = [_row("Sci", 200, -30, needs_calibrator="true"),
            _row("Wide-cal", 202, -30, kind="calibrator", diameter_mas="0.9",
                 diameter_err_mas="0.09"),
            _row("Tiny-cal", 198, -30, kind="calibrator", diameter_mas="0.15",
                 diameter_err_mas="0.015")]  # fmt: skip
    case = Case(array_dict(pads, opd_max_m=200.0), rows)
    s = PlanSettings(time_limit_s=PLAN_S)
    plan = plan_night(case.problem, s, "greedy")
    used = {case.targets.names[v.target] for v in plan.visits}
    assert "Sci" in used and "Tiny-cal" in used and "Wide-cal" not in used
    assert case.problems(plan, s) == []
