"""(u, v, w) tracks and coverage figures against outside references.

- TMS = Thompson, Moran & Swenson, Interferometry and Synthesis in Radio Astronomy, 3rd
  ed., section 4.1: the (u, v, w) table of tests/test_delay.py (computed from their
  equations), the ellipse u^2 + ((v - Lz cos d) / sin d)^2 = Lx^2 + Ly^2 and, for a
  100 m east-west baseline at declination -30 deg, its 100 m x 50 m semi-axes
  (CHECKS.md);
- w equals the delay code's B . s (the difference of the stations' projected paths);
- coverage figures of hand-built samplings against their closed forms (a thin ring of
  radius R in a disk of radius R_max: radial gap max(R, R_max - R), filled area
  ((R + d)^2 - (R - d)^2) / R_max^2; an arc of 60 deg of position angle: an empty
  sector of 180 - 60 = 120 deg, folding (u, v) onto (-u, -v)): plane geometry.
"""

from __future__ import annotations

import numpy as np
import pytest
from conftest import build_beams
from test_delay import LAT_TMS_DEG, TMS_ROWS

from scheduler.geometry.delay import projected_path
from scheduler.geometry.sky import enu_from_hadec
from scheduler.geometry.uv import FILL_GRID, coverage, fill_fraction, uvw_tracks

UVW_TABLE_TOL_M = 1e-4  # the table's values are given to 4 decimals
W_TOL_M = 1e-9  # the same geometry, rounding only
ELLIPSE_TOL_M2 = 1e-6


@pytest.mark.parametrize("enu, h_hours, dec_deg, uvw_m, elaz, rate", TMS_ROWS)
def test_tracks_match_the_tms_table(enu, h_hours, dec_deg, uvw_m, elaz, rate):
    lat = np.radians(LAT_TMS_DEG)
    e, n, u = enu_from_hadec(np.radians(15 * h_hours), np.radians(dec_deg), lat)
    got = uvw_tracks(np.array([enu]), lat, np.array([e]), np.array([n]), np.array([u]))
    np.testing.assert_allclose(got[0, 0], uvw_m, atol=UVW_TABLE_TOL_M)


def test_w_is_the_delay_codes_b_dot_s():
    lat = np.radians(-26.1)
    beams = build_beams([(0.0, 0.0, 0.0), (120.0, -35.0, 0.7), (-40.0, 80.0, -0.2)])
    e, n, u = enu_from_hadec(np.linspace(-3, 3, 25), np.radians(-41.0), lat)
    pds = projected_path(beams, e, n, u)
    base = beams.position_enu_m[[1, 2, 2]] - beams.position_enu_m[[0, 0, 1]]
    w = uvw_tracks(base, lat, e, n, u)[..., 2]
    np.testing.assert_allclose(w, pds[[1, 2, 2]] - pds[[0, 0, 1]], atol=W_TOL_M)


def test_east_west_baseline_traces_the_tms_ellipse():
    """100 m east-west at dec -30: u^2 + (v / sin d)^2 = 100^2 (Lz = 0, Lx = 0, Ly =
    100): semi-axes 100 m in u and 50 m in v, centred on the origin."""
    lat, dec = np.radians(-26.1), np.radians(-30.0)
    ha = np.linspace(-np.pi, np.pi, 721)
    e, n, u = enu_from_hadec(ha, dec, lat)
    uu, vv, _ = uvw_tracks(np.array([[100.0, 0.0, 0.0]]), lat, e, n, u)[0].T
    np.testing.assert_allclose(uu**2 + (vv / np.sin(dec)) ** 2, 100.0**2, atol=ELLIPSE_TOL_M2)
    assert uu.max() == pytest.approx(100.0, abs=1e-6) and vv.max() == pytest.approx(50.0, abs=1e-3)


def _ring(radius_m: float, count: int = 2000) -> tuple[np.ndarray, np.ndarray]:
    pa = np.linspace(0.0, 2 * np.pi, count, endpoint=False)
    return radius_m * np.sin(pa), radius_m * np.cos(pa)


@pytest.mark.parametrize("radius, disk, d", [(60.0, 100.0, 5.0), (30.0, 100.0, 8.0)])
def test_ring_coverage_has_its_closed_form(radius, disk, d):
    u, v = _ring(radius)
    c = coverage(u, v, disk, d)
    assert c.radial_gap_m == pytest.approx(max(radius, disk - radius), abs=1e-9)
    assert c.position_angle_gap_rad == pytest.approx(np.pi / 1000, rel=1e-6)  # folded ring
    assert c.longest_m == pytest.approx(radius) and c.shortest_m == pytest.approx(radius)
    annulus = ((radius + d) ** 2 - (radius - d) ** 2) / disk**2
    cell = 2 * disk / (FILL_GRID - 1)  # the grid's resolution: the edges move by a cell
    slack = 2 * cell * 2 * np.pi * (radius + d) * 2 / (np.pi * disk**2)
    assert c.fill == pytest.approx(annulus, abs=slack)


def test_arc_leaves_the_rest_of_the_half_plane_empty():
    pa = np.radians(np.linspace(30.0, 90.0, 301))
    c = coverage(80.0 * np.sin(pa), 80.0 * np.cos(pa), 100.0, 5.0)
    assert np.degrees(c.position_angle_gap_rad) == pytest.approx(120.0, abs=1e-9)
    assert c.points == 301


def test_fill_of_nothing_and_of_everything():
    assert coverage(np.zeros(0), np.zeros(0), 100.0, 5.0).fill == 0.0
    axis = np.linspace(-100, 100, 81)
    gx, gy = np.meshgrid(axis, axis)
    assert fill_fraction(gx.ravel(), gy.ravel(), 100.0, 5.0) == 1.0
