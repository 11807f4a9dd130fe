"""The fast geometry path against astropy's full ICRS -> AltAz transform.

Reference: CHECKS.md 'Reference libraries' -- astropy's full ICRS -> AltAz transform
(pressure = 0, no refraction) is the reference for the fast path: altitude/azimuth
within 1 arcsec and delays within 1 mm for baselines up to 300 m.

Sites, targets and stations here are invented test data.
"""

import warnings

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import AltAz, HADec, SkyCoord
from astropy.time import Time
from astropy.utils.exceptions import AstropyWarning
from conftest import build_beams

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.astro.ephemeris import earth_frame, location, radec_places, to_time
from scheduler.geometry.delay import projected_path
from scheduler.geometry.sky import altaz, enu_from_cirs, hour_angle, separation
from scheduler.model.array import Site

# --- tolerances --------------------------------------------------------------------
ARCSEC_RAD = np.pi / (180.0 * 3600.0)
DIRECTION_TOL_RAD = 1.0 * ARCSEC_RAD  # CHECKS.md: altitude/azimuth within 1 arcsec
DELAY_TOL_M = 1e-3  # CHECKS.md: projected-path differences within 1 mm up to 300 m
HOUR_ANGLE_TOL_RAD = 1.0 * ARCSEC_RAD  # on the sky: polar motion + diurnal aberration
MAX_BASELINE_M = 300.0

N_TARGETS = 200
N_TIMES = 13
HALF_SPAN_H = 6.0

SOUTH = Site("test-south", np.radians(-26.1), np.radians(-66.2), 3050.0)
NORTH = Site("test-north", np.radians(40.0), np.radians(15.3), 800.0)
CASES = {
    # invented test sites and reference instants (UTC)
    "south": (SOUTH, "2027-04-18T04:00:00"),
    "north": (NORTH, "2027-02-10T23:30:00"),
    # past the end of the bundled IERS tables: astropy falls back to mean polar
    # motion and extrapolated UT1; the fast path must still agree
    "south-beyond-tables": (SOUTH, "2028-06-15T05:00:00"),
}


@pytest.fixture(scope="module", params=sorted(CASES))
def geometry(request):
    """Fast-path and astropy directions for random targets x times at one site."""
    site, iso = CASES[request.param]
    t_ref = Time(iso, scale="utc").unix
    rng = np.random.default_rng(2027 + len(request.param))
    ra = rng.uniform(0.0, 2.0 * np.pi, N_TARGETS)
    dec = np.arcsin(rng.uniform(-1.0, 1.0, N_TARGETS))
    times = t_ref + np.linspace(-HALF_SPAN_H, HALF_SPAN_H, N_TIMES) * 3600.0

    frame = earth_frame(site, t_ref)
    with warnings.catch_warnings():  # "polar motion after IERS data" beyond the tables
        warnings.simplefilter("ignore", AstropyWarning)
        ri, di = radec_places(ra, dec, t_ref)
    fast = np.array(enu_from_cirs(ri[:, None], di[:, None], frame, times[None, :]))

    shape = (N_TARGETS, N_TIMES)
    coords = SkyCoord(
        ra=np.broadcast_to(ra[:, None], shape).ravel() * u.rad,
        dec=np.broadcast_to(dec[:, None], shape).ravel() * u.rad,
        frame="icrs",
    )
    obstime = to_time(np.broadcast_to(times[None, :], shape).ravel())
    loc = location(site)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", AstropyWarning)
        aa = coords.transform_to(AltAz(obstime=obstime, location=loc, pressure=0 * u.hPa))
        hadec = coords.transform_to(HADec(obstime=obstime, location=loc, pressure=0 * u.hPa))
    alt, az = aa.alt.to_value(u.rad).reshape(shape), aa.az.to_value(u.rad).reshape(shape)
    ref = np.array([np.cos(alt) * np.sin(az), np.cos(alt) * np.cos(az), np.sin(alt)])
    return {
        "site": site, "frame": frame, "times": times, "ri": ri, "fast": fast, "ref": ref,
        "alt": alt, "az": az, "ha": hadec.ha.to_value(u.rad).reshape(shape),
        "hadec_dec": hadec.dec.to_value(u.rad).reshape(shape),
    }  # fmt: skip


def test_direction_within_one_arcsec(geometry):
    """Angular separation of fast-path and astropy directions below 1 arcsec
    (CHECKS.md 'Reference libraries')."""
    sep = separation(*geometry["fast"], *geometry["ref"])
    assert np.max(sep) < DIRECTION_TOL_RAD


def test_altitude_and_azimuth_within_one_arcsec(geometry):
    """Altitude within 1 arcsec; azimuth within 1 arcsec on the sky (times cos alt)
    against astropy AltAz, pressure 0 (CHECKS.md 'Reference libraries')."""
    alt, az = altaz(*geometry["fast"])
    assert np.max(np.abs(alt - geometry["alt"])) < DIRECTION_TOL_RAD
    daz = np.angle(np.exp(1j * (az - geometry["az"]))) * np.cos(geometry["alt"])
    assert np.max(np.abs(daz)) < DIRECTION_TOL_RAD


def test_projected_path_differences_within_one_mm(geometry):
    """p_i . s - p_j . s from the fast path within 1 mm of astropy's for baselines
    up to 300 m (CHECKS.md 'Reference libraries'); invented station positions in a
    disk of 150 m radius, so every pair is at most 300 m apart."""
    rng = np.random.default_rng(11)
    radius = 150.0 * np.sqrt(rng.uniform(0, 1, 7))
    angle = rng.uniform(0, 2 * np.pi, 7)
    pos = np.column_stack([radius * np.cos(angle), radius * np.sin(angle), rng.uniform(-1, 1, 7)])
    pos = np.vstack([pos, [[150.0, 0.0, 0.0], [-150.0, 0.0, 0.0]]])  # one 300 m pair
    beams = build_beams(pos)
    assert beams.longest_baseline_m() <= MAX_BASELINE_M + 1e-9
    fast = projected_path(beams, *geometry["fast"])
    ref = projected_path(beams, *geometry["ref"])
    i, j = np.triu_indices(len(pos), k=1)
    diff = (fast[i] - fast[j]) - (ref[i] - ref[j])
    assert np.max(np.abs(diff)) < DELAY_TOL_M


def test_hour_angle_against_astropy_hadec(geometry):
    """scheduler.sky.hour_angle against astropy's observed HADec (pressure 0): its
    docstring neglects polar motion (< 1 arcsec); the reference also includes diurnal
    aberration (0.3 arcsec at most).  Compared on the sky (times cos dec)."""
    shape = geometry["ha"].shape
    ri = np.broadcast_to(geometry["ri"][:, None], shape)
    t = np.broadcast_to(geometry["times"][None, :], shape)
    h = hour_angle(ri, geometry["frame"], t)
    assert np.all((h > -np.pi) & (h <= np.pi))
    dh = np.angle(np.exp(1j * (h - geometry["ha"]))) * np.cos(geometry["hadec_dec"])
    assert np.max(np.abs(dh)) < HOUR_ANGLE_TOL_RAD
