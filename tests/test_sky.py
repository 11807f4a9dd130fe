"""Sidereal time, hour angle, horizontal coordinates, airmass and Earth rotation,
checked against published values (see /work/shared/CHECKS.md for sources and status).

Meeus = J. Meeus, Astronomical Algorithms, 2nd ed., Willmann-Bell 1998.
"""

import astropy.units as u
import erfa
import numpy as np
import pytest
from astropy.time import Time

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.geometry.sky import (
    airmass,
    altaz,
    enu_from_cirs,
    enu_from_hadec,
    enu_rate,
    hour_angle,
)
from scheduler.model.frames import ERA_RATE_RAD_S, OMEGA_EARTH_RAD_S, EarthFrame

# --- tolerances (one place per file) ---------------------------------------------
GMST_IAU1982_TOL_S = 1e-3  # CHECKS.md: 1 ms with the IAU 1982 model
GMST_IAU2006_TOL_S = 5e-3  # CHECKS.md: 5 ms with astropy's default IAU 2006 model
GAST_TOL_S = 1e-3  # CHECKS.md: 1 ms vs erfa.gst94
GMST_J2000_TOL_S = 1e-6  # CHECKS.md: IAU 1982 value at 2000-01-01 12h UT1
HOUR_ANGLE_TOL_DEG = 1e-5  # CHECKS.md, Meeus Ex. 13.b
ALTAZ_TOL_DEG = 1e-4  # CHECKS.md, Meeus Ex. 13.b (values given to 4 decimals)
HD2AE_TOL_RAD = 1e-11  # same formula as erfa.hd2ae: agreement to rounding
AIRMASS_FORMULA_RTOL = 1e-5  # CHECKS.md: formula values given to 5 decimals
AIRMASS_TABLE_RTOL = 5e-3  # CHECKS.md: formula agrees with the paper's table to 0.5%
RATE_FD_TOL = 1e-12  # 1/s, 1 s central difference vs analytic rate (|rate| ~ 7e-5 /s)
RATE_ABS_TOL = 1e-15  # 1/s, exact identities of the analytic rate
OMEGA_RTOL = 1e-15  # constants against IERS values (double precision)
ERA_DAY_TOL_RAD = 1e-11  # ERA advance over a day vs erfa.era00
SIDEREAL_DAY_TOL_S = 1e-3  # mean sidereal day given to 0.1 ms in CHECKS.md

SECONDS_PER_DAY = 86400.0


def _sexagesimal(h, m, s):
    return h + m / 60.0 + s / 3600.0


def _time_seconds_diff(angle_hours, expected_hours):
    """Difference in seconds of time between two sidereal times, wrapped to +-12 h."""
    d = (angle_hours - expected_hours + 12.0) % 24.0 - 12.0
    return d * 3600.0


# --- sidereal time ---------------------------------------------------------------

SIDEREAL_CASES = [
    # (UT1 instant, kind, astropy model, expected h m s, tolerance s, source)
    ("1987-04-10 00:00:00", "mean", "IAU1982", (13, 10, 46.3668), GMST_IAU1982_TOL_S,
     "Meeus Ex. 12.a GMST; secondary"),
    ("1987-04-10 00:00:00", "mean", None, (13, 10, 46.3668), GMST_IAU2006_TOL_S,
     "Meeus Ex. 12.a GMST vs astropy default IAU 2006; secondary"),
    ("1987-04-10 00:00:00", "apparent", "IAU1994", (13, 10, 46.1351), GAST_TOL_S,
     "Meeus Ex. 12.a GAST; secondary"),
    ("1987-04-10 19:21:00", "mean", "IAU1982", (8, 34, 57.0896), GMST_IAU1982_TOL_S,
     "Meeus Ex. 12.b GMST; secondary"),
    ("2000-01-01 12:00:00", "mean", "IAU1982", (18, 41, 50.54841), GMST_J2000_TOL_S,
     "IAU 1982 GMST (Aoki et al. 1982, A&A 105, 359); computed"),
]  # fmt: skip


@pytest.mark.parametrize("iso, kind, model, hms, tol, source", SIDEREAL_CASES)
def test_astropy_sidereal_time(iso, kind, model, hms, tol, source):
    """astropy's Greenwich sidereal time against the published value (source in the
    case table: Meeus Ex. 12.a/12.b, secondary; IAU 1982 at J2000, computed)."""
    t = Time(iso, scale="ut1")
    kwargs = {} if model is None else {"model": model}
    st = t.sidereal_time(kind, "greenwich", **kwargs).hourangle
    assert abs(_time_seconds_diff(st, _sexagesimal(*hms))) < tol, source


ERFA_CASES = [
    # (UT1 instant, erfa routine, expected h m s, tolerance s, source)
    ("1987-04-10 00:00:00", "gmst82", (13, 10, 46.3668), GMST_IAU1982_TOL_S,
     "Meeus Ex. 12.a; secondary"),
    ("1987-04-10 00:00:00", "gst94", (13, 10, 46.1351), GAST_TOL_S, "Meeus Ex. 12.a; secondary"),
    ("1987-04-10 19:21:00", "gmst82", (8, 34, 57.0896), GMST_IAU1982_TOL_S,
     "Meeus Ex. 12.b; secondary"),
    ("2000-01-01 12:00:00", "gmst82", (18, 41, 50.54841), GMST_J2000_TOL_S,
     "Aoki et al. 1982; computed"),
]  # fmt: skip


@pytest.mark.parametrize("iso, routine, hms, tol, source", ERFA_CASES)
def test_erfa_sidereal_time(iso, routine, hms, tol, source):
    """erfa.gmst82 / erfa.gst94 against the published values (sources in the table)."""
    t = Time(iso, scale="ut1")
    if routine == "gmst82":
        angle = erfa.gmst82(t.jd1, t.jd2)
    else:  # gst94 takes UT1 only (TT not needed by the 1994 equation of the equinoxes)
        angle = erfa.gst94(t.jd1, t.jd2)
    hours = np.degrees(angle) / 15.0
    assert abs(_time_seconds_diff(hours, _sexagesimal(*hms))) < tol, source


# --- Meeus Ex. 13.b: hour angle and horizontal coordinates of Venus -------------
# Meeus Ex. 13.b (secondary): alpha 23h09m16.641s, delta -6d43m11.61s,
# phi +38d55m17s, L = 5h08m15.7s WEST (so east longitude is negative),
# apparent sidereal time at Greenwich 8h34m56.853s.
# Expected: H = 64.352133 deg, altitude 15.1249 deg,
# azimuth 68.0337 deg from the south westward = 248.0337 deg north through east.
VENUS_ALPHA_DEG = 15.0 * _sexagesimal(23, 9, 16.641)
VENUS_DELTA_DEG = -_sexagesimal(6, 43, 11.61)
MEEUS_LAT_DEG = _sexagesimal(38, 55, 17)
MEEUS_EAST_LON_DEG = -15.0 * _sexagesimal(5, 8, 15.7)
MEEUS_GAST_DEG = 15.0 * _sexagesimal(8, 34, 56.853)
MEEUS_H_DEG = 64.352133
MEEUS_ALT_DEG = 15.1249
MEEUS_AZ_DEG = 248.0337


def _meeus_frame():
    """An EarthFrame whose local rotation angle is Meeus's local apparent sidereal
    time, with no polar motion or diurnal aberration: the fast path then reduces to
    the textbook hour angle / declination to horizon rotation."""
    return EarthFrame(
        t_ref_s=0.0,
        local_era_rad=float(np.radians(MEEUS_GAST_DEG + MEEUS_EAST_LON_DEG)),
        xpl_rad=0.0,
        ypl_rad=0.0,
        diurab_rad=0.0,
        latitude_rad=float(np.radians(MEEUS_LAT_DEG)),
    )


def test_meeus_13b_hour_angle():
    """scheduler.sky.hour_angle gives Meeus Ex. 13.b's H = 64.352133 deg (secondary)
    from the local apparent sidereal time and the apparent right ascension."""
    h = hour_angle(np.radians(VENUS_ALPHA_DEG), _meeus_frame(), 0.0)
    assert abs(np.degrees(h) - MEEUS_H_DEG) < HOUR_ANGLE_TOL_DEG


def test_meeus_13b_altaz_from_hadec():
    """enu_from_hadec + altaz give Meeus Ex. 13.b's altitude 15.1249 deg and azimuth
    248.0337 deg north through east (68.0337 deg from the south; secondary)."""
    h = np.radians(MEEUS_GAST_DEG + MEEUS_EAST_LON_DEG - VENUS_ALPHA_DEG)
    alt, az = altaz(*enu_from_hadec(h, np.radians(VENUS_DELTA_DEG), np.radians(MEEUS_LAT_DEG)))
    assert abs(np.degrees(alt) - MEEUS_ALT_DEG) < ALTAZ_TOL_DEG
    assert abs(np.degrees(az) - MEEUS_AZ_DEG) < ALTAZ_TOL_DEG


def test_meeus_13b_altaz_through_fast_path():
    """The fast path (enu_from_cirs) with polar motion and diurnal aberration switched
    off reproduces Meeus Ex. 13.b (secondary)."""
    e, n, up = enu_from_cirs(
        np.radians(VENUS_ALPHA_DEG), np.radians(VENUS_DELTA_DEG), _meeus_frame(), 0.0
    )
    alt, az = altaz(e, n, up)
    assert abs(np.degrees(alt) - MEEUS_ALT_DEG) < ALTAZ_TOL_DEG
    assert abs(np.degrees(az) - MEEUS_AZ_DEG) < ALTAZ_TOL_DEG


def test_altaz_against_erfa_hd2ae():
    """enu_from_hadec + altaz against erfa.hd2ae (reference library, CHECKS.md
    'Reference libraries'; Meeus ch. 13 formulas) over a random grid of hour angles,
    declinations and latitudes (random numbers are invented test data)."""
    rng = np.random.default_rng(20270418)
    ha = rng.uniform(-np.pi, np.pi, 500)
    dec = np.arcsin(rng.uniform(-1.0, 1.0, 500))
    lat = np.arcsin(rng.uniform(-0.99, 0.99, 500))
    alt, az = altaz(*enu_from_hadec(ha, dec, lat))
    az_ref, alt_ref = erfa.hd2ae(ha, dec, lat)
    assert np.max(np.abs(alt - alt_ref)) < HD2AE_TOL_RAD
    daz = np.angle(np.exp(1j * (az - az_ref))) * np.cos(alt_ref)
    assert np.max(np.abs(daz)) < HD2AE_TOL_RAD


# --- airmass ---------------------------------------------------------------------

KY_FORMULA_CASES = [
    # zenith angle deg -> Kasten & Young 1989 formula value (CHECKS.md, computed)
    (0.0, 0.99971),
    (30.0, 1.15399),
    (45.0, 1.41260),
    (60.0, 1.99429),
    (70.0, 2.90315),
    (80.0, 5.58604),
    (85.0, 10.30579),
    (90.0, 37.91961),
]


@pytest.mark.parametrize("z_deg, expected", KY_FORMULA_CASES)
def test_airmass_kasten_young_formula(z_deg, expected):
    """Kasten & Young 1989 (Applied Optics 28, 4735) formula values; computed."""
    x = airmass(np.radians(90.0 - z_deg))
    assert x == pytest.approx(expected, rel=AIRMASS_FORMULA_RTOL)


KY_TABLE_CASES = [
    # elevation deg -> Kasten & Young 1989 Table II (CHECKS.md, secondary, single copy)
    (0.0, 38.0868),
    (1.0, 26.2595),
    (5.0, 10.3164),
    (10.0, 5.5841),
]


@pytest.mark.parametrize("el_deg, expected", KY_TABLE_CASES)
def test_airmass_kasten_young_table(el_deg, expected):
    """Kasten & Young 1989 Table II: the formula agrees with the table to 0.5%
    (secondary)."""
    x = airmass(np.radians(el_deg))
    assert x == pytest.approx(expected, rel=AIRMASS_TABLE_RTOL)


# --- Earth rotation --------------------------------------------------------------


def test_enu_rate_matches_finite_difference():
    """enu_rate equals the time derivative of enu_from_hadec with dH/dt = omega
    (hour angle grows at the Earth's rotation rate: common practice, no source;
    central difference over random invented test directions)."""
    rng = np.random.default_rng(7)
    ha = rng.uniform(-np.pi, np.pi, 300)
    dec = np.arcsin(rng.uniform(-1.0, 1.0, 300))
    lat = np.arcsin(rng.uniform(-0.99, 0.99, 300))
    dt = 1.0
    plus = np.array(enu_from_hadec(ha + OMEGA_EARTH_RAD_S * dt, dec, lat))
    minus = np.array(enu_from_hadec(ha - OMEGA_EARTH_RAD_S * dt, dec, lat))
    numeric = (plus - minus) / (2.0 * dt)
    analytic = np.array(enu_rate(*enu_from_hadec(ha, dec, lat), lat))
    assert np.max(np.abs(numeric - analytic)) < RATE_FD_TOL


def test_enu_rate_magnitude_and_orthogonality():
    """A direction turns at omega cos(dec) and stays a unit vector (ds/dt . s = 0):
    rigid rotation about the pole, common practice, no source."""
    rng = np.random.default_rng(8)
    ha = rng.uniform(-np.pi, np.pi, 300)
    dec = np.arcsin(rng.uniform(-1.0, 1.0, 300))
    lat = np.arcsin(rng.uniform(-0.99, 0.99, 300))
    s = np.array(enu_from_hadec(ha, dec, lat))
    ds = np.array(enu_rate(*s, lat))
    speed = np.linalg.norm(ds, axis=0)
    assert np.max(np.abs(speed - OMEGA_EARTH_RAD_S * np.cos(dec))) < RATE_ABS_TOL
    assert np.max(np.abs(np.sum(s * ds, axis=0))) < RATE_ABS_TOL


def test_rotation_constants_iers():
    """omega = 7.292115146706979e-5 rad/s, from the ERA rate 1.00273781191135448
    rev per UT1 day (IERS Conventions 2010; confirmed)."""
    assert OMEGA_EARTH_RAD_S == pytest.approx(7.292115146706979e-5, rel=OMEGA_RTOL)
    assert ERA_RATE_RAD_S == pytest.approx(
        2.0 * np.pi * 1.00273781191135448 / SECONDS_PER_DAY, rel=OMEGA_RTOL
    )
    assert ERA_RATE_RAD_S == pytest.approx(OMEGA_EARTH_RAD_S, rel=OMEGA_RTOL)


@pytest.mark.parametrize("iso", ["1987-04-10 00:00:00", "2027-04-18 03:00:00"])
def test_era_rate_against_erfa_era00(iso):
    """The ERA advance over one UT1 day from ERA_RATE_RAD_S equals erfa.era00's
    (IAU 2000 ERA, reference library; IERS Conventions 2010, confirmed)."""
    t0 = Time(iso, scale="ut1")
    t1 = t0 + 1.0 * u.day
    advance = np.mod(erfa.era00(t1.jd1, t1.jd2) - erfa.era00(t0.jd1, t0.jd2), 2.0 * np.pi)
    ours = np.mod(ERA_RATE_RAD_S * SECONDS_PER_DAY, 2.0 * np.pi)
    assert abs(advance - ours) < ERA_DAY_TOL_RAD


def test_mean_sidereal_day_from_gmst82():
    """GMST (IAU 1982, erfa.gmst82) turns once in a mean sidereal day of 86164.0905 s
    (computed from Aoki et al. 1982, CHECKS.md).  It differs from 2 pi / omega
    (86164.0989 s, the stellar day; computed from the IERS ERA rate) by
    precession: the fast path uses the ERA rate, not the GMST rate."""
    t0 = Time("2000-01-01 12:00:00", scale="ut1")
    # one UT1 day turns GMST by one revolution plus ~0.986 deg
    g0 = erfa.gmst82(t0.jd1, t0.jd2)
    g1 = erfa.gmst82(t0.jd1, t0.jd2 + 1.0)
    rate = (2.0 * np.pi + np.mod(g1 - g0, 2.0 * np.pi)) / SECONDS_PER_DAY
    assert 2.0 * np.pi / rate == pytest.approx(86164.0905, abs=SIDEREAL_DAY_TOL_S)
    assert 2.0 * np.pi / ERA_RATE_RAD_S == pytest.approx(86164.0989, abs=SIDEREAL_DAY_TOL_S)
