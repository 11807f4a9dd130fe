"""The fast semester availability against the reference path, and the ERFA Sun and Moon
against astropy.

Independent references:
- the per-night path the semester used before: ``evaluate_grid(night_problem(...), t)``
  of :mod:`scheduler.geometry.constraints` (every limit on the whole grid) on the same
  night and the same sample times.  The fast kernel reuses its directions and its
  arithmetic element by element, so every (target, night, sample) must get the same
  limit, hence the same reason family, exactly (no tolerance);
- astropy's full ``get_body`` + transform to CIRS seen from the site (CHECKS.md,
  'Reference libraries'), the path the Sun and Moon tracks took before the ERFA chain.
Twilight (Sun's centre at -12 deg): USNO, Rise, Set, and Twilight Definitions;
secondary (CHECKS.md 'Time and rotation').  The array, site and catalog are invented.
"""

from __future__ import annotations

import datetime as dt
import warnings

import numpy as np
import pandas as pd
import pytest
from astropy.coordinates import CIRS, get_body
from astropy.utils.exceptions import AstropyWarning

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.astro.ephemeris import body_track, location, node_times, to_time
from scheduler.astro.night import (
    MOON_NODE_S,
    SUN_NODE_S,
    _wrap_lon,
    body_tracks,
    find_night,
    local_noon_s,
)
from scheduler.astro.problem import night_problem
from scheduler.geometry.constraints import evaluate_grid
from scheduler.geometry.dark import DAY_S, EDGE_TOLERANCE_S
from scheduler.geometry.limit_grid import grid_limits
from scheduler.inputs.array_file import parse_array
from scheduler.inputs.catalog import parse_targets
from scheduler.model.conditions import Conditions
from scheduler.model.frames import BodyTrack
from scheduler.model.reasons import Limit, limit_of
from scheduler.semester.availability import FAMILIES, family, semester_availability

# dates past the bundled tables (2031, 2046) are meant: erfa's "dubious year" and
# astropy's mean polar motion there are expected, not news
pytestmark = [pytest.mark.filterwarnings("ignore:ERFA function:erfa.ErfaWarning"),
              pytest.mark.filterwarnings("ignore:Tried to get polar motions")]

# --- tolerances ----------------------------------------------------------------------
ARCSEC_RAD = np.pi / (180.0 * 3600.0)
# what the tracks are used for: the Sun's altitude changes by at most ~15 arcsec per
# second of time, so 10 arcsec moves a twilight edge by under a second; Moon limits are
# tens of degrees (common practice, no source)
SUN_USE_TOL_RAD = 10.0 * ARCSEC_RAD
MOON_USE_TOL_RAD = 60.0 * ARCSEC_RAD
# the ERFA chain is astropy's own (same routines and models): measured within 25 mas
# (astropy bends the Sun's own light by a few mas, we do not); a sign slip in aberration
# (20 arcsec) or light time (the Moon, ~1 arcsec) would fail it
SAME_CHAIN_TOL_RAD = 0.1 * ARCSEC_RAD
# night edges from either track: both bisect the same bracket to EDGE_TOLERANCE_S
NIGHT_EDGE_TOL_S = EDGE_TOLERANCE_S + 0.5
HOURS_TOL = 1e-9  # sums of the same sample counts, in hours
STEP_S = 300.0

ARRAY = {
    "site": {"name": "test site", "latitude_deg": -31.4, "longitude_deg": 110.3,
             "height_m": 2400.0},
    "limits": {"min_altitude_deg": 30.0, "max_altitude_deg": 80.0,
               "sun_altitude_max_deg": -12.0, "moon_separation_min_deg": 20.0,
               "sun_separation_min_deg": 60.0, "wind_speed_max_m_s": 12.0,
               "wind_halfwidth_deg": 40.0},
    "stations": [
        {"name": "pad-a", "east_m": 0.0, "north_m": 0.0, "up_m": 0.0, "internal_path_m": 40.0},
        {"name": "pad-b", "east_m": 58.0, "north_m": 21.0, "up_m": 0.5, "internal_path_m": 47.0,
         "horizon": [[0.0, 30.0], [110.0, 30.0], [160.0, 52.0], [215.0, 38.0], [250.0, 30.0]]},
        {"name": "pad-c", "east_m": -33.0, "north_m": 64.0, "up_m": -0.3,
         "internal_path_m": 55.0},
        {"name": "pad-d", "east_m": 210.0, "north_m": -140.0, "up_m": 1.5,
         "internal_path_m": 120.0},
    ],
    "delay_lines": [
        {"name": "line-1", "opd_min_m": 0.0, "opd_max_m": 120.0, "max_rate_m_s": 1.0},
        {"name": "line-2", "opd_min_m": 0.0, "opd_max_m": 120.0, "max_rate_m_s": 1.0},
        {"name": "line-3", "opd_min_m": 0.0, "opd_max_m": 120.0, "max_rate_m_s": 1.0},
        {"name": "line-4", "opd_min_m": 0.0, "opd_max_m": 60.0, "max_rate_m_s": 1.0},
    ],
    "configurations": [
        # a horizon mask on pad-b; short baselines
        {"name": "masked", "feeds": {"line-1": "pad-a", "line-2": "pad-b", "line-3": "pad-c"}},
        # a 250 m baseline on a 60 m line: the delay range cuts much of the sky
        {"name": "tight", "feeds": {"line-1": "pad-a", "line-4": "pad-d"},
         "fixed_offsets_m": {"line-1": 30.0}},
    ],
    "modes": [
        {"name": "h", "wavelength_um": 1.65, "tracking_band": "H", "tracking_limit_mag": 6.0},
        {"name": "k", "wavelength_um": 2.2, "tracking_band": "K", "tracking_limit_mag": 5.5},
    ],
}  # fmt: skip
FIRST_NIGHT = dt.date(2027, 5, 3)
NIGHTS = [FIRST_NIGHT + dt.timedelta(days=k) for k in (0, 9, 18)]
N_UNIFORM, N_NEAR_MOON = 240, 20  # near the Moon: per test night


@pytest.fixture(scope="module")
def array():
    return parse_array(ARRAY, "test.toml")


@pytest.fixture(scope="module")
def tracks(array):
    return body_tracks(array, FIRST_NIGHT, FIRST_NIGHT + dt.timedelta(days=20))


def _moon_radec_deg(night) -> tuple[float, float]:
    """The Moon's CIRS direction at mid-night as (ra, dec) in degrees (CIRS and ICRS
    differ by under half a degree here: enough to place targets near it)."""
    mid = 0.5 * (night.start_s + night.end_s)
    x, y, z = (np.interp(mid, night.moon.t_nodes_s, night.moon.xyz[:, k]) for k in range(3))
    return float(np.degrees(np.arctan2(y, x)) % 360.0), float(np.degrees(np.arcsin(z)))


def _catalog(nights) -> pd.DataFrame:
    """Invented targets: varied declinations, some near the Moon of each night, every
    seventh too faint for its mode, every ninth with a large diameter, a few with a
    time window of two hours."""
    rng = np.random.default_rng(42)
    ra = list(rng.uniform(0.0, 360.0, N_UNIFORM))
    dec = list(rng.uniform(-88.0, 40.0, N_UNIFORM))
    for night in nights:
        mra, mdec = _moon_radec_deg(night)
        ra += list((mra + rng.uniform(-25.0, 25.0, N_NEAR_MOON)) % 360.0)
        dec += list(np.clip(mdec + rng.uniform(-25.0, 25.0, N_NEAR_MOON), -89.0, 89.0))
    n = len(ra)
    k = np.arange(n)
    window = np.where(k % 23 == 5, nights[1].start_s + 3600.0, np.nan)
    iso = [dt.datetime.fromtimestamp(w, dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
           if np.isfinite(w) else "" for w in window]  # fmt: skip
    iso_end = [dt.datetime.fromtimestamp(w + 7200.0, dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
               if np.isfinite(w) else "" for w in window]  # fmt: skip
    return pd.DataFrame({
        "name": [f"inv-{j:03d}" for j in k], "ra": [f"{x:.5f}" for x in ra],
        "dec": [f"{x:.5f}" for x in dec], "duration_min": ["20"] * n,
        "mode": ["k" if j % 4 == 1 else "h" for j in k],
        "mag": ["8.0" if j % 7 == 3 else "3.0" for j in k],
        "diameter_mas": [f"{rng.uniform(3.0, 14.0):.3f}" if j % 9 == 2 else "0.4" for j in k],
        "limb_darkening": ["0.3" if j % 2 else "" for j in k],
        "window_start_utc": iso, "window_end_utc": iso_end,
    })  # fmt: skip


@pytest.fixture(scope="module")
def nights(array, tracks):
    return [find_night(array, d, tracks) for d in NIGHTS]


@pytest.fixture(scope="module")
def targets(nights):
    return parse_targets(_catalog(nights), "invented.csv")


def _samples(night) -> np.ndarray:
    t = night.grid(STEP_S)[:-1] + 0.5 * STEP_S
    return t[t < night.end_s]


WINDY = Conditions(wind_speed_m_s=20.0, wind_from_rad=float(np.radians(250.0)))


@pytest.mark.parametrize("config", ["masked", "tight"])
@pytest.mark.parametrize("conditions", [None, WINDY], ids=["calm", "windy"])
def test_verdicts_equal_the_reference(array, targets, nights, config, conditions):
    """Every (target, night, sample): the same Limit as evaluate_grid (the reference
    path), hence the same reason family; every limit the configuration can meet occurs."""
    seen = set()
    for night in nights:
        problem = night_problem(array, array.beams(config), targets, night,
                                conditions=conditions)  # fmt: skip
        t = _samples(night)
        reference = limit_of(evaluate_grid(problem, t).code)
        fast = grid_limits(problem, t)
        assert fast.limit.shape == reference.shape == (len(targets), len(t))
        np.testing.assert_array_equal(fast.limit, reference)
        np.testing.assert_array_equal(family(fast.limit), family(reference))
        seen |= set(np.unique(fast.limit).tolist())
    expected = {Limit.OK, Limit.LOW, Limit.HIGH, Limit.SUN, Limit.MOON, Limit.RESOLVED,
                Limit.FAINT, Limit.TIME_WINDOW}  # fmt: skip
    expected.add(Limit.HORIZON if config == "masked" else Limit.DELAY)
    if conditions is WINDY:
        expected.add(Limit.WIND)
    assert expected <= seen, sorted(expected - seen)


def test_every_limit_has_its_family():
    """The families cover the reason codes: faint and over-resolved have their own,
    the Sun, wind and time windows are 'other' (the families the semester reports, as
    the task states them; no outside source)."""
    assert FAMILIES == ("ok", "altitude", "horizon mask", "delay range", "Moon",
                        "over-resolved", "too faint", "other")  # fmt: skip
    named = {Limit.OK: "ok", Limit.LOW: "altitude", Limit.HIGH: "altitude",
             Limit.HORIZON: "horizon mask", Limit.DELAY: "delay range", Limit.MOON: "Moon",
             Limit.RESOLVED: "over-resolved", Limit.FAINT: "too faint", Limit.SUN: "other",
             Limit.WIND: "other", Limit.TIME_WINDOW: "other"}  # fmt: skip
    assert set(named) == set(Limit)
    for limit, name in named.items():
        code = int(limit) + 16 * 3  # a detail must not change the family
        assert FAMILIES[int(family(np.array([code]))[0])] == name


class _Calendar:
    """The two methods availability uses of a semester: 'masked' for two nights, then
    'tight'."""

    def nights(self) -> list[dt.date]:
        return NIGHTS

    def configuration_on(self, night: dt.date) -> str | None:
        return "masked" if night <= NIGHTS[1] else "tight"


def _reference_sums(array, targets, nights):
    """Hours per target and configuration from evaluate_grid night by night."""
    cell_h = STEP_S / 3600.0
    out = {c: {"hours": 0.0, "elsewhere": 0.0, "lost": 0.0, "lst": 0.0, "nights": {}}
           for c in ("masked", "tight")}  # fmt: skip
    for night in nights:
        t = _samples(night)
        lst_h = np.floor(np.degrees(night.lst_rad(t)) / 15.0).astype(int) % 24
        for c, r in out.items():
            ev = evaluate_grid(night_problem(array, array.beams(c), targets, night), t)
            fam = family(ev.code)
            ok = fam == 0
            if _Calendar().configuration_on(night.date) != c:
                r["elsewhere"] += ok.sum(axis=1) * cell_h
                continue
            r["hours"] += ok.sum(axis=1) * cell_h
            up = ev.alt_rad > 0.0
            r["lost"] += np.stack([((fam == f) & up).sum(axis=1) * cell_h
                                   for f in range(len(FAMILIES))])  # fmt: skip
            r["lst"] += np.stack([(ok & (lst_h == h)).sum(axis=1) * cell_h
                                  for h in range(24)], axis=1)  # fmt: skip
            r["nights"][night.date] = ok.sum(axis=1) * cell_h
    return out


def test_semester_sums_equal_the_reference(array, targets, nights, tracks):
    """Hours, hours elsewhere, lost per family, per night and per LST hour from the
    fast path equal the sums of the reference path's verdicts (same tracks, same
    samples); the LST hours add up to the hours."""
    wanted = {(i, c) for i in range(len(targets)) for c in ("masked", "tight")}
    av = semester_availability(array, targets, _Calendar(), wanted, STEP_S, tracks=tracks)
    ref = _reference_sums(array, targets, nights)
    for c, r in ref.items():
        for i in range(len(targets)):
            key = (i, c)
            assert av.hours[key] == pytest.approx(r["hours"][i], abs=HOURS_TOL)
            assert av.up_elsewhere[key] == pytest.approx(r["elsewhere"][i], abs=HOURS_TOL)
            lost = [av.lost[key][f] for f in FAMILIES[1:]]
            np.testing.assert_allclose(lost, r["lost"][1:, i], atol=HOURS_TOL, rtol=0)
            np.testing.assert_allclose(av.by_lst[key], r["lst"][i], atol=HOURS_TOL, rtol=0)
            assert av.by_lst[key].sum() == pytest.approx(av.hours[key], abs=HOURS_TOL)
            assert av.per_night[key] == pytest.approx({d: h[i] for d, h in r["nights"].items()},
                                                      abs=HOURS_TOL)  # fmt: skip
            assert sum(av.per_month[key].values()) == pytest.approx(av.hours[key], abs=HOURS_TOL)
    total = sum(av.hours[(i, c)] for i in range(len(targets)) for c in ref)
    assert total > 0.0 and any(av.lost[(i, "tight")]["delay range"] > 0 for i in range(40))
    dark = sum(len(_samples(n)) for n in nights) * STEP_S / 3600.0
    assert av.dark_hours == pytest.approx(dark, abs=HOURS_TOL)
    assert av.dark_by_lst.sum() == pytest.approx(dark, abs=HOURS_TOL)
    by_config = sum(v.sum() for v in av.dark_lst_by_month.values())
    assert by_config == pytest.approx(dark, abs=HOURS_TOL)


# --- the Sun and Moon: the ERFA chain against astropy ------------------------------------

TRACK_CASES = [
    # (latitude deg, longitude deg, height m, first night, days)
    (-31.4, 110.3, 2400.0, dt.date(2027, 5, 3), 4),
    (47.5, -12.0, 300.0, dt.date(2031, 11, 20), 4),
]


def _astropy_track(name: str, site, t_nodes: np.ndarray) -> np.ndarray:
    """astropy's get_body seen from the site, transformed to CIRS (the old path)."""
    times, loc = to_time(t_nodes), location(site)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", AstropyWarning)
        c = get_body(name, times, location=loc).transform_to(CIRS(obstime=times, location=loc))
    xyz = c.cartesian.xyz.value.T
    return xyz / np.linalg.norm(xyz, axis=-1, keepdims=True)


def _angle(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    return np.arctan2(np.linalg.norm(np.cross(a, b), axis=-1), np.sum(a * b, axis=-1))


def _site_array(lat: float, lon: float, height: float):
    data = dict(ARRAY, site={"name": "t", "latitude_deg": lat, "longitude_deg": lon,
                             "height_m": height})  # fmt: skip
    return parse_array(data, "site.toml")


@pytest.mark.parametrize(("lat", "lon", "height", "first", "days"), TRACK_CASES)
@pytest.mark.parametrize(("body", "step_s", "use_tol"),
                         [("sun", SUN_NODE_S, SUN_USE_TOL_RAD),
                          ("moon", MOON_NODE_S, MOON_USE_TOL_RAD)])  # fmt: skip
def test_body_tracks_against_astropy(lat, lon, height, first, days, body, step_s, use_tol):
    """Node directions of the ERFA chain (epv00, moon98, pvtob, apcs, ab, c2i06a)
    against astropy's full get_body + CIRS transform at the same nodes."""
    site = _wrap_lon(_site_array(lat, lon, height).site)
    a = local_noon_s(first, site) - 3600.0
    track = body_track(body, site, a, a + days * DAY_S, step_s)
    np.testing.assert_array_equal(track.t_nodes_s, node_times(a, a + days * DAY_S, step_s))
    gap = _angle(track.xyz, _astropy_track(body, site, track.t_nodes_s))
    assert np.max(gap) < use_tol
    assert np.max(gap) < SAME_CHAIN_TOL_RAD
    np.testing.assert_allclose(np.linalg.norm(track.xyz, axis=-1), 1.0, atol=1e-15)


@pytest.mark.parametrize(("lat", "lon", "height", "first", "days"), TRACK_CASES)
def test_night_edges_with_either_track(lat, lon, height, first, days):
    """find_night with the ERFA tracks and with astropy's: the dark interval's ends
    (Sun's centre at -12 deg) agree to the bisection's resolution."""
    array = _site_array(lat, lon, height)
    site = _wrap_lon(array.site)
    fast = body_tracks(array, first, first + dt.timedelta(days=days - 1))
    old = tuple(BodyTrack(tr.name, tr.t_nodes_s, _astropy_track(tr.name, site, tr.t_nodes_s))
                for tr in fast)  # fmt: skip
    for k in range(days):
        date = first + dt.timedelta(days=k)
        a, b = find_night(array, date, fast), find_night(array, date, old)
        assert abs(a.start_s - b.start_s) <= NIGHT_EDGE_TOL_S
        assert abs(a.end_s - b.end_s) <= NIGHT_EDGE_TOL_S


def test_tracks_past_the_bundled_tables_stay_offline(monkeypatch):
    """Years past the bundled Earth-orientation tables: the tracks come from the
    extrapolated tables and nothing is downloaded (DOMAIN.md section 2: astropy must
    never download; every attempt to open a network connection is recorded here)."""
    import socket

    from astropy.utils import iers

    attempts: list[object] = []

    def refuse(*args, **kwargs):
        attempts.append(args)
        raise OSError("no network in this test")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)
    assert iers.conf.auto_download is False
    array = _site_array(-31.4, 110.3, 2400.0)
    sun, moon = body_tracks(array, dt.date(2046, 3, 1), dt.date(2046, 3, 2))
    assert attempts == []
    for tr in (sun, moon):
        assert np.all(np.isfinite(tr.xyz))
        np.testing.assert_allclose(np.linalg.norm(tr.xyz, axis=-1), 1.0, atol=1e-15)
