"""The independent verifier's own arithmetic (``scheduler.verify``), each check against
the outside reference named beside it (CHECKS.md, a published formula or table, or
"common practice, no source"): directions and delay, delay constants, carriage moves
and slews, horizon masks, angular distances, disk visibilities and their slopes,
magnitude limits, projected baselines; and its interpolated Sun and Moon against
astropy's direct transform.  Split from ``tests/test_verifier.py``; the shared helpers
are in ``tests/_verifier_cases.py``.

Data are the fictional demo scenario or invented here.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pytest
from _verifier_cases import ARCSEC, MAS, Doc, demo

from scheduler.astro.reference import body_altaz
from scheduler.model.array import ArrayModel, Mode, Overheads
from scheduler.model.conditions import Conditions
from scheduler.model.targets import Targets
from scheduler.verify.geometry import (
    altaz_from_enu,
    angle_between,
    angular_distance,
    azimuth_step,
    baseline_pairs,
    calibration_error,
    disk_visibility,
    enu_from_altaz,
    enu_from_hadec,
    first_null_x,
    implied_k,
    k_span,
    limb_darkened_disk,
    limb_darkened_slope,
    mask_altitude,
    measures,
    move_s,
    projected_lengths,
    projected_paths,
    squared_visibility_slope,
    uniform_disk,
)
from scheduler.verify.sequence import slew_s
from scheduler.verify.sky import body_enu

FIXTURES = (demo,)
"""Fixtures of ``tests/_verifier_cases.py``, imported so that pytest finds them by name."""


# ---------------------------------------------------------------- the verifier's own arithmetic

# CHECKS.md, "Interferometer geometry" (Thompson, Moran & Swenson section 4.1; formulas
# secondary, numbers computed outside the project): ENU baseline, latitude, hour angle,
# declination -> w (= b.s, metres), source elevation and azimuth (north through east).
TMS_TABLE = [
    ((100.0, 0.0, 0.0), -24.6, 2.0, -30.0, -43.3013, 62.8817, 251.7952),
    ((100.0, 0.0, 0.0), -24.6, 0.0, -30.0, 0.0, 84.6000, 180.0),
    ((100.0, 0.0, 0.0), -24.6, -3.0, -60.0, 35.3553, 42.9980, 151.0918),
    ((30.0, 40.0, 5.0), -24.6, 2.0, -30.0, -14.2363, 62.8817, 251.7952),
    ((0.0, 100.0, 0.0), -24.6, 4.0, 10.0, 36.2865, 22.0506, 293.0480),
]


@pytest.mark.parametrize("row", TMS_TABLE)
def test_direction_and_delay_match_the_tms_table(row: tuple[Any, ...]) -> None:
    """Thompson, Moran & Swenson section 4.1 (CHECKS.md; numbers computed, tabulated to
    1e-4 m and 1e-4 deg): the verifier's hour-angle formula gives the tabulated
    elevation and azimuth, and its projected paths give w = b.s."""
    baseline, lat, ha_h, dec, w, el, az = row
    s = enu_from_hadec(np.radians(ha_h * 15.0), np.radians(dec), math.radians(lat))
    alt_rad, az_rad = altaz_from_enu(s)
    assert math.degrees(float(alt_rad)) == pytest.approx(el, abs=1e-4)
    assert math.degrees(float(az_rad)) == pytest.approx(az, abs=1e-4)
    pds = projected_paths(s, np.array([[0.0, 0.0, 0.0], baseline]))
    assert float(pds[1] - pds[0]) == pytest.approx(w, abs=1e-4)


def test_altitude_azimuth_of_meeus_example_13b() -> None:
    """Meeus, Astronomical Algorithms (2nd ed.), Ex. 13.b (CHECKS.md, secondary):
    H = 64.352133 deg, dec -6 43' 11.61", latitude +38 55' 17" give altitude 15.1249 deg
    and azimuth 68.0337 deg from south westward, i.e. 248.0337 deg north through east."""
    dec = -(6 + 43 / 60 + 11.61 / 3600)
    lat = 38 + 55 / 60 + 17 / 3600
    s = enu_from_hadec(np.radians(64.352133), np.radians(dec), math.radians(lat))
    alt_rad, az_rad = altaz_from_enu(s)
    assert math.degrees(float(alt_rad)) == pytest.approx(15.1249, abs=1e-4)
    assert math.degrees(float(az_rad)) == pytest.approx(248.0337, abs=1e-4)


def test_k_span_and_implied_constant_by_hand() -> None:
    """DOMAIN.md section 3 (Thompson, Moran & Swenson's delay relation), computed by
    hand: stations at 0 and 100 m east, s = (0.6, 0, 0.8) so p.s = (0, 60) m; constant
    paths (10, 20) m; ranges 0..120 m.  K must lie in [max(10, -40), min(130, 80)] =
    [10, 80]; with K = 50 the lines add x = (40, 90) and both imply K = 50."""
    pds = projected_paths(np.array([0.6, 0.0, 0.8]), np.array([[0, 0, 0], [100.0, 0, 0]]))
    assert pds == pytest.approx([0.0, 60.0], abs=1e-12)
    low, high = k_span(pds, np.array([10.0, 20.0]), np.zeros(2), np.full(2, 120.0))
    assert (float(low), float(high)) == pytest.approx((10.0, 80.0), abs=1e-12)
    assert implied_k(np.array([40.0, 90.0]), pds, np.array([10.0, 20.0])) == pytest.approx(
        [50.0, 50.0], abs=1e-12)
    narrow = k_span(pds, np.array([10.0, 20.0]), np.zeros(2), np.array([120.0, 25.0]))
    assert float(narrow[0]) > float(narrow[1])  # line 2 can add at most 25 m: infeasible


def test_moves_and_slews_by_hand() -> None:
    """README.md, *The night queue* (common practice, no source), by hand: lines moving
    30 m at 1 m/s and 20 m at 0.5 m/s take 40 s; a slew from (alt 30, az 350) to
    (alt 40, az 20) moves 30 deg in azimuth the short way, 20 s at 1.5 deg/s plus 5 s."""
    assert move_s(np.array([10.0, 50.0]), np.array([40.0, 30.0]), np.array([1.0, 0.5])) == 40.0
    rad = math.radians
    assert slew_s(rad(30), rad(350), rad(40), rad(20), Overheads()) == pytest.approx(25.0)
    assert float(azimuth_step(rad(10), rad(350))) == pytest.approx(rad(20))
    assert float(azimuth_step(0.0, rad(180))) == pytest.approx(math.pi)


# horizon: README.md, *Inputs* ("linear in azimuth, wrapping at 360"), values by hand
DEMO_MASK = ((0.0, 30.0), (150.0, 30.0), (190.0, 46.0), (230.0, 38.0), (260.0, 30.0))
WRAP_MASK = ((30.0, 40.0), (300.0, 20.0))


@pytest.mark.parametrize(("mask", "az", "limit"), [
    (DEMO_MASK, 170.0, 38.0),  # half way from 30 (150) to 46 (190)
    (DEMO_MASK, 190.0, 46.0),
    (DEMO_MASK, 210.0, 42.0),  # half way from 46 to 38
    (DEMO_MASK, 275.0, 30.0),  # from 260 on to 360 (= 0): 30 to 30
    (WRAP_MASK, 0.0, 20.0 + 20.0 * 60.0 / 90.0),  # 300 -> 390 runs from 20 to 40
    (WRAP_MASK, 330.0, 20.0 + 20.0 * 30.0 / 90.0),
    (WRAP_MASK, 30.0, 40.0),
    (WRAP_MASK, 165.0, 40.0 - 20.0 * 135.0 / 270.0),
    (WRAP_MASK, 390.0, 40.0),  # azimuths wrap too
    (((100.0, 35.0),), 10.0, 35.0),  # one point: constant
    (((0.0, 30.0), (360.0, 40.0)), 180.0, 35.0),  # 0 and 360 are both ends of one turn
    (((0.0, 30.0), (360.0, 40.0)), 359.0, 30.0 + 10.0 * 359.0 / 360.0),
])  # fmt: skip
def test_horizon_mask_by_hand(mask: tuple[tuple[float, float], ...], az: float,
                              limit: float) -> None:  # fmt: skip
    """README.md, *Inputs*, horizon masks (common practice, no source): hand values."""
    rad_mask = tuple((math.radians(a), math.radians(h)) for a, h in mask)
    got = mask_altitude(rad_mask, np.array([math.radians(az)]))
    assert math.degrees(float(got[0])) == pytest.approx(limit, abs=1e-9)


def test_no_horizon_mask_is_no_limit() -> None:
    """README.md, *Inputs*: horizon is optional; a station without one has no limit of
    its own (common practice, no source)."""
    assert np.all(np.isneginf(mask_altitude((), np.array([0.0, 3.0]))))


@pytest.mark.parametrize(("a", "b", "deg"), [
    ((0.0, 0.0), (90.0, 0.0), 90.0),
    ((10.0, 20.0), (10.0, 30.0), 10.0),
    ((0.0, 60.0), (180.0, 60.0), 60.0),  # over the pole
    ((359.5, 0.0), (0.5, 0.0), 1.0),  # across ra = 0
    ((45.0, -89.0), (225.0, -89.0), 2.0),
])  # fmt: skip
def test_angular_distance_by_hand(a: tuple[float, float], b: tuple[float, float],
                                  deg: float) -> None:  # fmt: skip
    """Angles between directions on the sphere, values by hand (standard spherical
    geometry; common practice, no source)."""
    got = angular_distance(*np.radians(a), *np.radians(b))
    assert math.degrees(float(got)) == pytest.approx(deg, abs=1e-9)


def test_tiny_angles_stay_accurate() -> None:
    """One milliarcsecond between two directions is measured to 1e-6 of itself (an
    arccosine alone would lose it; numerical practice, no source)."""
    got = angular_distance(1.0, 0.3, 1.0, 0.3 + MAS)
    assert float(got) == pytest.approx(MAS, rel=1e-6)


@pytest.mark.parametrize(("x", "j1_x", "v"), [(1.0, 0.4400505857, 0.880101),
                                              (2.0, 0.5767248078, 0.576725),
                                              (3.0, 0.3390589585, 0.226039)])
def test_uniform_disk_values(x: float, j1_x: float, v: float) -> None:
    """Abramowitz & Stegun 1964, table 9.1 (CHECKS.md, confirmed): J1(1) = 0.4400505857,
    J1(2) = 0.5767248078, J1(3) = 0.3390589585, so V = 2 J1(x)/x = 0.880101, 0.576725,
    0.226039 (computed)."""
    assert float(uniform_disk(x)) == pytest.approx(2.0 * j1_x / x, abs=1e-10)
    assert float(uniform_disk(x)) == pytest.approx(v, abs=1e-6)


def test_uniform_disk_first_null_and_centre() -> None:
    """Abramowitz & Stegun table 9.5: the first zero of J1 is at x = 3.8317059702."""
    assert float(uniform_disk(3.8317059702)) == pytest.approx(0.0, abs=1e-9)
    assert float(uniform_disk(0.0)) == 1.0


@pytest.mark.parametrize(("theta_mas", "baseline_m", "v2"), [
    (1.0, 100.0, 0.804976), (0.44, 298.0, 0.685129), (2.0, 298.0, 0.015399)])
def test_disk_visibility_matches_checks(theta_mas: float, baseline_m: float, v2: float) -> None:
    """CHECKS.md, Visibilities (uniform disk, x = pi theta B / lambda at 1.65 um;
    computed): V^2 = 0.804976 (1 mas, 100 m), 0.685129 (0.44 mas, 298 m) and 0.015399
    (2 mas, 298 m, past the first null)."""
    assert disk_visibility(theta_mas * MAS, baseline_m, 1.65e-6) ** 2 == pytest.approx(v2,
                                                                                        abs=2e-6)


def test_interpolated_sun_and_moon_match_astropy(demo: tuple[Doc, ArrayModel, Targets]) -> None:
    """The Sun and Moon sampled every 10 minutes and interpolated agree with astropy's
    direct transform (the reference, CHECKS.md *Reference libraries*) at every instant
    (here 7 min apart, off the nodes) within 3 arcsec over the demo night."""
    doc, array, _ = demo
    site = array.site
    t = np.arange(doc["visits"][0]["start_s"], doc["visits"][-1]["end_s"], 421.0)
    for name in ("sun", "moon"):
        alt, az = body_altaz(name, math.degrees(site.latitude_rad),
                             math.degrees(site.longitude_rad), site.height_m, t)  # fmt: skip
        direct = enu_from_altaz(alt, az)
        worst = float(np.max(angle_between(body_enu(name, site, t), direct)))
        assert worst < 3.0 * ARCSEC, (name, worst / ARCSEC)


# ---------------------------------------------------------------- magnitude limits and measuring


def test_brightness_limits_by_hand() -> None:
    """DOMAIN.md section 8 and the rule of scheduler.model.conditions (common practice),
    by hand: tracking limit 7.5 + 1 x 2.5 log10(tau0 / 4 ms), guiding limit
    12 - 2 x 2.5 log10(seeing / 0.8 arcsec); log10 2 = 0.30103, log10 1.25 = 0.09691."""
    from scheduler.verify.observing import brightness_limits

    mode = Mode("m", tracking_limit_mag=7.5, guiding_limit_mag=12.0,
                reference_seeing_rad=0.8 * ARCSEC, reference_coherence_s=0.004)  # fmt: skip
    assert brightness_limits(mode, Conditions()) == pytest.approx((7.5, 12.0), abs=1e-12)
    got = brightness_limits(mode, Conditions(seeing_rad=1.6 * ARCSEC, coherence_s=0.002))
    assert got == pytest.approx((7.5 - 2.5 * 0.30103, 12.0 - 5.0 * 0.30103), abs=1e-5)
    got = brightness_limits(mode, Conditions().worse())  # seeing x 1.25, tau0 x 0.8
    assert got == pytest.approx((7.5 - 2.5 * 0.09691, 12.0 - 5.0 * 0.09691), abs=1e-5)
    assert brightness_limits(Mode("open"), Conditions(coherence_s=0.001)) == (math.inf,
                                                                             math.inf)


@pytest.mark.parametrize(("u", "values"), [
    (0.3, (0.885302, 0.593696, 0.252626)), (1.0, (0.903506, 0.653097, 0.345677))])
def test_limb_darkened_values(u: float, values: tuple[float, float, float]) -> None:
    """Hanbury Brown, Davis, Lake & Thompson 1974 (CHECKS.md, *Visibilities*; values
    computed): the linearly limb-darkened disk at x = 1, 2, 3."""
    got = limb_darkened_disk(np.array([1.0, 2.0, 3.0]), u)
    assert got == pytest.approx(values, abs=2e-6)


def test_limb_darkening_zero_is_the_uniform_disk() -> None:
    """CHECKS.md, *Visibilities*: u = 0 gives the uniform disk exactly (and NaN, no
    coefficient, is a uniform disk); the centre is 1 (Abramowitz & Stegun 9.1.7 for
    J1(x)/x -> 1/2)."""
    x = np.array([0.0, 0.3, 1.0, 2.5, 5.0])
    assert limb_darkened_disk(x, 0.0) == pytest.approx(uniform_disk(x), abs=1e-14)
    assert limb_darkened_disk(x, math.nan) == pytest.approx(uniform_disk(x), abs=1e-14)
    assert float(limb_darkened_disk(0.0, 0.6)) == pytest.approx(1.0, abs=1e-14)


def test_first_null_of_the_uniform_disk() -> None:
    """Abramowitz & Stegun table 9.5 (first zero of J1 at 3.8317059702) and CHECKS.md
    (the first null at theta = 1.2197 lambda / B, 4.151 mas for B = 100 m at
    1.65 um; Born & Wolf): a disk just smaller measures, just larger does not."""
    assert first_null_x(0.0) == pytest.approx(3.8317059702, abs=1e-9)
    assert first_null_x(0.0) / math.pi == pytest.approx(1.2197, abs=1e-4)
    for factor, inside in ((0.999, True), (1.001, False)):
        x = math.pi * 4.151 * factor * MAS * 100.0 / 1.65e-6
        assert bool(measures(np.array([x]), 0.0, 0.0)[0]) is inside


def test_limb_darkened_null_lies_beyond_the_uniform_disk() -> None:
    """DOMAIN.md section 8 and CHECKS.md (limb darkening raises V; Hanbury Brown et al.
    1974): the first null moves out as u grows, V is still positive at the uniform
    disk's null, and V vanishes at the null found."""
    nulls = [first_null_x(u) for u in (0.0, 0.3, 0.6, 1.0)]
    assert nulls == sorted(nulls) and nulls[1] > nulls[0] + 0.05
    for u, x0 in zip((0.3, 0.6, 1.0), nulls[1:], strict=True):
        assert float(limb_darkened_disk(3.8317059702, u)) > 0.0
        assert float(limb_darkened_disk(x0, u)) == pytest.approx(0.0, abs=1e-10)


def test_second_lobe_does_not_measure() -> None:
    """CHECKS.md, *Visibilities*: theta = 2 mas on 298 m at 1.65 um gives x = 5.50158,
    past the first null, with V^2 = 0.015399 above the 0.01 floor: it measures nothing;
    0.44 mas on 298 m (V^2 = 0.685129) does."""
    x = np.array([math.pi * 2.0 * MAS * 298.0 / 1.65e-6, math.pi * 0.44 * MAS * 298.0 / 1.65e-6])
    assert x == pytest.approx([5.50158, 1.21035], abs=1e-4)
    assert limb_darkened_disk(x, 0.0) ** 2 == pytest.approx([0.015399, 0.685129], abs=2e-6)
    assert list(measures(x, 0.0, 0.01)) == [False, True]


def test_squared_visibility_error_worked_values() -> None:
    """CHECKS.md, *Visibilities* (first-order propagation; computed with a central
    difference): theta = 1.0 mas, B = 100 m, lambda = 1.65 um: dV^2/dtheta = -0.355817
    per mas, sigma(V^2) = 0.0356 at 10 %; theta = 0.44 mas, B = 298 m: 0.0536 at 10 %
    (sigma grows with the projected length up to these: the largest over 0..B is at B)."""
    slope = float(squared_visibility_slope(MAS, 100.0, 1.65e-6)) * MAS
    assert slope == pytest.approx(-0.355817, abs=2e-6)
    assert calibration_error(MAS, 0.1 * MAS, 100.0, 1.65e-6, 0.0, 513) == pytest.approx(
        0.0356, abs=5e-5)
    assert calibration_error(0.44 * MAS, 0.044 * MAS, 298.0, 1.65e-6, 0.0, 513) == (
        pytest.approx(0.0536, abs=5e-5))


@pytest.mark.parametrize("u", [0.0, 0.3, 1.0])
def test_analytic_slope_matches_a_central_difference(u: float) -> None:
    """Numerical practice, no source: the analytic dV/dx agrees with a central
    difference of V (itself checked against CHECKS.md above) at x = 0.5 .. 4."""
    x = np.linspace(0.5, 4.0, 8)
    h = 1e-6
    numeric = (limb_darkened_disk(x + h, u) - limb_darkened_disk(x - h, u)) / (2 * h)
    assert limb_darkened_slope(x, u) == pytest.approx(numeric, abs=1e-8)


def test_projected_lengths_match_the_tms_table() -> None:
    """Thompson, Moran & Swenson section 4.1 (CHECKS.md): the projected baseline is
    sqrt(|B|^2 - w^2) with the tabulated w; leaning the direction towards the baseline
    only shortens it, and a quarter turn of lean leaves nothing."""
    rows = [r for r in TMS_TABLE if r[0] == (100.0, 0.0, 0.0)]
    for baseline, lat, ha_h, dec, w, _, _ in rows:
        s = enu_from_hadec(np.radians(ha_h * 15.0), np.radians(dec), math.radians(lat))
        got = projected_lengths(s[None, :], np.array([baseline]))
        assert float(got[0, 0]) == pytest.approx(math.sqrt(100.0**2 - w**2), abs=1e-3)
        lean = projected_lengths(s[None, :], np.array([baseline]), 15.0 * ARCSEC)
        assert float(lean[0, 0]) <= float(got[0, 0])
        assert float(projected_lengths(s[None, :], np.array([baseline]), math.pi / 2)[0, 0]) == 0


def test_baseline_pairs_by_hand() -> None:
    """Every pair of stations once, from the first to the second (common practice)."""
    names, vectors = baseline_pairs(("a", "b", "c"), np.array([[0, 0, 0], [3.0, 4, 0],
                                                                [0, 0, 1.0]]))
    assert names == ("a-b", "a-c", "b-c")
    assert vectors == pytest.approx(np.array([[3, 4, 0], [0, 0, 1], [-3, -4, 1.0]]))

