"""Fringe visibility of resolved stars on projected baselines, and the calibration error
a diameter uncertainty brings.  Every expected value comes from outside the project:

- A&S = Abramowitz & Stegun, Handbook of Mathematical Functions (1964), tables 9.1 and
  9.5 (J1 and its first zero); scipy.special.j1 as a general-purpose reference;
- the first null of a uniform disk at theta = 1.2197 lambda / B (standard optics, e.g.
  Born & Wolf, Principles of Optics);
- the linearly limb-darkened disk of Hanbury Brown, Davis, Lake & Thompson 1974, MNRAS
  167, 475 (values of CHECKS.md, computed from the published formula);
- TMS = Thompson, Moran & Swenson, Interferometry and Synthesis in Radio Astronomy,
  section 4.1 (the (u, v, w) table of tests/test_delay.py);
- sigma(V^2) = |dV^2/dtheta| sigma_theta, first-order propagation, against a numerical
  derivative of scipy's J1 (CHECKS.md worked values).
"""

import numpy as np
import pytest
from conftest import build_beams
from scipy.special import j1, jv
from test_delay import LAT_TMS_DEG, TMS_ROWS

from scheduler.geometry.delay import baseline_names, projected_baselines, projected_path
from scheduler.geometry.sky import enu_from_hadec
from scheduler.geometry.visibility import (
    UD_FIRST_NULL_X,
    disk_visibility,
    first_null_x,
    squared_visibility_error,
    uniform_disk_visibility,
    usable,
)

MAS = np.pi / 180 / 3600 / 1000
H_BAND_M = 1.65e-6

# --- tolerances --------------------------------------------------------------------
TABLE_TOL = 1e-9  # A&S tabulate J1 to 10 decimals
CHECK_TOL = 1e-6  # CHECKS.md values given to 6 decimals
SIGMA_RTOL = 5e-3  # CHECKS.md sigma(V^2) given to 3 significant figures
NULL_TOL_X = 1e-9  # the first zero of J1 to 10 decimals (A&S table 9.5)
PROJECTED_TOL_M = 1e-4  # the TMS table's (u, v) are given to 4 decimals


@pytest.mark.parametrize("x, j1_table", [(1.0, 0.4400505857), (2.0, 0.5767248078),
                                         (3.0, 0.3390589585)])  # fmt: skip
def test_uniform_disk_is_two_j1_over_x(x, j1_table):
    """V = 2 J1(x)/x with J1 from A&S table 9.1."""
    assert disk_visibility(x) == pytest.approx(2 * j1_table / x, abs=2 * TABLE_TOL)


@pytest.mark.parametrize("x, v", [(1.0, 0.880101), (2.0, 0.576725), (3.0, 0.226039)])
def test_uniform_disk_checks(x, v):
    """V at x = 1, 2, 3 (CHECKS.md, computed from A&S)."""
    assert disk_visibility(x) == pytest.approx(v, abs=CHECK_TOL)


def test_uniform_disk_matches_scipy_everywhere():
    """Against scipy.special.j1 over the first lobes, and V(0) = 1 (the limit)."""
    x = np.linspace(1e-6, 12.0, 500)
    np.testing.assert_allclose(disk_visibility(x), 2 * j1(x) / x, atol=1e-12)
    assert float(disk_visibility(0.0)) == 1.0


def test_first_null_of_the_uniform_disk():
    """First zero of J1 at 3.8317059702 (A&S table 9.5): theta = 1.2197 lambda/B, i.e.
    4.151 mas for B = 100 m at 1.65 um (Born & Wolf; CHECKS.md)."""
    assert UD_FIRST_NULL_X == pytest.approx(3.8317059702, abs=NULL_TOL_X)
    assert float(first_null_x(0.0)) == pytest.approx(3.8317059702, abs=NULL_TOL_X)
    theta = UD_FIRST_NULL_X / np.pi * H_BAND_M / 100.0
    assert theta / MAS == pytest.approx(4.151, abs=1e-3)
    assert UD_FIRST_NULL_X / np.pi == pytest.approx(1.2197, abs=1e-4)
    v = uniform_disk_visibility(theta, 100.0, H_BAND_M)
    assert abs(float(v)) < 1e-9


@pytest.mark.parametrize("u, values", [
    (0.3, (0.885302, 0.593696, 0.252626)),
    (1.0, (0.903506, 0.653097, 0.345677)),
])  # fmt: skip
def test_limb_darkened_disk_checks(u, values):
    """Hanbury Brown et al. 1974 linear limb darkening at x = 1, 2, 3 (CHECKS.md)."""
    got = disk_visibility(np.array([1.0, 2.0, 3.0]), u)
    np.testing.assert_allclose(got, values, atol=CHECK_TOL)


def test_limb_darkened_disk_from_the_published_formula_with_scipy():
    """The formula written with scipy's Bessel function of order 3/2, and u = 0 equal
    to the uniform disk exactly (Hanbury Brown et al. 1974)."""
    x = np.linspace(0.05, 8.0, 200)
    for u in (0.0, 0.2, 0.55, 0.9):
        ref = ((1 - u) * jv(1, x) / x + u * np.sqrt(np.pi / 2) * jv(1.5, x) / x**1.5) / (
            (1 - u) / 2 + u / 3)
        np.testing.assert_allclose(disk_visibility(x, u), ref, atol=1e-12)
    np.testing.assert_array_equal(disk_visibility(x, 0.0), disk_visibility(x))


def test_limb_darkening_moves_the_first_null_outward():
    """Limb darkening raises V and pushes the first null past 3.8317 (the disk looks
    smaller; DOMAIN.md section 8).  The null found is a zero of the published formula."""
    x0 = float(first_null_x(0.6))
    assert x0 > UD_FIRST_NULL_X
    u = 0.6
    ref = ((1 - u) * jv(1, x0) / x0 + u * np.sqrt(np.pi / 2) * jv(1.5, x0) / x0**1.5)
    assert abs(ref) < 1e-9


@pytest.mark.parametrize("theta_mas, b_m, x, v2, sigma", [
    (1.0, 100.0, 0.92308, 0.804976, 0.0356),
    (0.44, 298.0, 1.21035, 0.685129, 0.0536),
])  # fmt: skip
def test_calibration_error_worked_values(theta_mas, b_m, x, v2, sigma):
    """sigma(V^2) for a 10 % diameter error (CHECKS.md, first-order propagation)."""
    assert np.pi * theta_mas * MAS * b_m / H_BAND_M == pytest.approx(x, abs=1e-5)
    assert float(uniform_disk_visibility(theta_mas * MAS, b_m, H_BAND_M)) ** 2 == \
        pytest.approx(v2, abs=CHECK_TOL)
    got = squared_visibility_error(theta_mas * MAS, 0.1 * theta_mas * MAS, np.array([b_m]),
                                   H_BAND_M)  # fmt: skip
    assert float(got[0]) == pytest.approx(sigma, rel=SIGMA_RTOL)


def test_calibration_error_against_an_independent_derivative():
    """The analytic derivative of (2 J1(x)/x)^2 is -8 J1(x) J2(x) / x^2 dx/dtheta (A&S
    9.1.27: d/dx [J1(x)/x] = -J2(x)/x); the error must agree with it."""
    theta = np.array([0.2, 0.8, 1.5, 2.6]) * MAS
    b = np.array([40.0, 130.0, 298.0])
    for t in theta:
        x = np.pi * t * b / H_BAND_M
        dv2 = -8 * j1(x) * jv(2, x) / x**2 * (np.pi * b / H_BAND_M)
        got = squared_visibility_error(float(t), 0.07 * float(t), b, H_BAND_M)
        np.testing.assert_allclose(got, np.abs(dv2) * 0.07 * t, rtol=1e-5, atol=1e-8)


def test_past_the_null_and_below_the_floor_are_not_usable():
    """2.0 mas on 298 m at 1.65 um: x = 5.50158, past the first null, V^2 = 0.015399
    (CHECKS.md): not usable even though V^2 is above a 0.01 floor."""
    x = np.pi * 2.0 * MAS * 298.0 / H_BAND_M
    assert x == pytest.approx(5.50158, abs=1e-5)
    assert float(disk_visibility(x)) ** 2 == pytest.approx(0.015399, abs=CHECK_TOL)
    assert not bool(usable(np.array([x]), np.array([0.0]), 0.01)[0])
    # inside the lobe: usable only at the floor or above (V^2(3.0) = 0.051094)
    assert bool(usable(np.array([3.0]), np.array([0.0]), 0.05)[0])
    assert not bool(usable(np.array([3.0]), np.array([0.0]), 0.06)[0])


@pytest.mark.parametrize("enu, h_hours, dec_deg, uvw_m, elaz, rate", TMS_ROWS)
def test_projected_baseline_is_the_length_of_u_v(enu, h_hours, dec_deg, uvw_m, elaz, rate):
    """sqrt(|B|^2 - w^2) from the stations' projected paths equals sqrt(u^2 + v^2) of the
    TMS table."""
    beams = build_beams([(0.0, 0.0, 0.0), enu])
    lat = np.radians(LAT_TMS_DEG)
    e, n, u = enu_from_hadec(np.radians(15 * h_hours), np.radians(dec_deg), lat)
    pds = projected_path(beams, np.array([e]), np.array([n]), np.array([u]))
    got = projected_baselines(beams, pds)
    assert got.shape == (1, 1)
    assert float(got[0, 0]) == pytest.approx(np.hypot(uvw_m[0], uvw_m[1]), abs=PROJECTED_TOL_M)
    assert baseline_names(beams) == ["pad-0-pad-1"]


def test_three_stations_give_three_baselines_in_pair_order():
    """n(n-1)/2 baselines; each projected length is at most its ground length (common
    practice, no source)."""
    pos = [(0.0, 0.0, 0.0), (120.0, 10.0, 0.5), (-40.0, 90.0, -0.3)]
    beams = build_beams(pos)
    e, n, u = enu_from_hadec(np.linspace(-1, 1, 7), np.radians(-35.0), np.radians(-26.0))
    got = projected_baselines(beams, projected_path(beams, e, n, u))
    assert got.shape == (3, 7)
    ground = [np.linalg.norm(np.subtract(pos[j], pos[i])) for i, j in ((0, 1), (0, 2), (1, 2))]
    assert np.all(got <= np.array(ground)[:, None] + 1e-9)
