"""Delay geometry: baseline coordinates, delay rates, and the feasible span of the
common constant K.

TMS = Thompson, Moran & Swenson, Interferometry and Synthesis in Radio Astronomy,
3rd ed. 2017, section 4.1 (formulas secondary, table numbers computed; CHECKS.md).
"""

import numpy as np
import pytest
from conftest import build_beams
from hypothesis import given, settings
from hypothesis import strategies as st

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.geometry.delay import (
    line_paths,
    max_tracking_rate_m_s,
    offset_span,
    path_rates,
    projected_path,
    uvw,
)
from scheduler.geometry.sky import OMEGA_EARTH_RAD_S, enu_from_hadec
from scheduler.inputs.array_file import parse_array

# --- tolerances --------------------------------------------------------------------
UVW_TABLE_TOL_M = 1e-4  # TMS table values are given to 4 decimals
W_DOT_TOL_M = 1e-9  # w = b . s is the same formula: rounding only (CHECKS.md)
ELAZ_TABLE_TOL_DEG = 1e-4  # table el/az given to 4 decimals
RATE_TABLE_TOL_MM_S = 1e-4  # table dw/dt given to 5 decimals in mm/s
ELLIPSE_TOL_M2 = 1e-8  # u^2 + ... = Lx^2 + Ly^2 (100 m baseline: 1e4 m^2)
PATH_TOL_M = 1e-9  # line paths inside their range when K is in the span
SPAN_TOL_M = 1e-9  # brute-force feasibility with rounding allowance
TRADE_DELAY_TOL_M = 1e-9  # B cos(alt) along the baseline: exact geometry
RATE_BOUND_RTOL = 1e-12  # |rate| <= omega B up to rounding

LAT_TMS_DEG = -24.6

TMS_ROWS = [
    # ENU baseline (m), H (h), dec (deg), (u, v, w) m, (el, az) deg, dw/dt mm/s
    ((100.0, 0.0, 0.0), 2.0, -30.0, (86.6025, -25.0000, -43.3013), (62.8817, 251.7952), -5.46909),
    ((100.0, 0.0, 0.0), 0.0, -30.0, (100.0, 0.0, 0.0), (84.6000, 180.0), -6.31516),
    ((100.0, 0.0, 0.0), -3.0, -60.0, (70.7107, 61.2372, 35.3553), (42.9980, 151.0918), -2.57815),
    ((30.0, 40.0, 5.0), 2.0, -30.0, (36.5795, 31.3731, -14.2363), (62.8817, 251.7952), -2.31005),
    ((0.0, 100.0, 0.0), 4.0, 10.0, (36.0510, 85.9280, 36.2865), (22.0506, 293.0480), -2.58894),
]  # fmt: skip


@pytest.mark.parametrize("enu, h_hours, dec_deg, uvw_m, elaz, rate", TMS_ROWS)
def test_uvw_tms_table(enu, h_hours, dec_deg, uvw_m, elaz, rate):
    """TMS section 4.1 (u, v, w) at latitude -24.6 deg (formulas secondary, numbers
    computed; CHECKS.md 'Interferometer geometry')."""
    lat, ha, dec = np.radians(LAT_TMS_DEG), np.radians(15.0 * h_hours), np.radians(dec_deg)
    got = uvw(np.array(enu), lat, ha, dec)
    np.testing.assert_allclose(got, uvw_m, rtol=0, atol=UVW_TABLE_TOL_M)


@pytest.mark.parametrize("enu, h_hours, dec_deg, uvw_m, elaz, rate", TMS_ROWS)
def test_w_is_baseline_dot_direction(enu, h_hours, dec_deg, uvw_m, elaz, rate):
    """w = b . s (TMS section 4.1, secondary): the equatorial-frame w equals the dot
    product of the ENU baseline with the ENU source direction."""
    lat, ha, dec = np.radians(LAT_TMS_DEG), np.radians(15.0 * h_hours), np.radians(dec_deg)
    w = uvw(np.array(enu), lat, ha, dec)[2]
    s = np.array(enu_from_hadec(ha, dec, lat))
    assert abs(w - np.dot(enu, s)) < W_DOT_TOL_M


@pytest.mark.parametrize("enu, h_hours, dec_deg, uvw_m, elaz, rate", TMS_ROWS)
def test_source_direction_tms_table(enu, h_hours, dec_deg, uvw_m, elaz, rate):
    """Source elevation and azimuth (north through east) of the TMS table rows
    (computed; CHECKS.md)."""
    from scheduler.geometry.sky import altaz

    lat, ha, dec = np.radians(LAT_TMS_DEG), np.radians(15.0 * h_hours), np.radians(dec_deg)
    alt, az = np.degrees(altaz(*enu_from_hadec(ha, dec, lat)))
    assert abs(alt - elaz[0]) < ELAZ_TABLE_TOL_DEG
    assert abs(az - elaz[1]) < ELAZ_TABLE_TOL_DEG


@pytest.mark.parametrize("enu, h_hours, dec_deg, uvw_m, elaz, rate", TMS_ROWS)
def test_delay_rate_tms_table(enu, h_hours, dec_deg, uvw_m, elaz, rate):
    """dw/dt = omega (-cos dec sin H Lx - cos dec cos H Ly) (TMS section 4.1,
    secondary; numbers computed): station 1 at the origin, station 2 at the
    baseline, the rate of w is the difference of the two lines' path rates."""
    lat, ha, dec = np.radians(LAT_TMS_DEG), np.radians(15.0 * h_hours), np.radians(dec_deg)
    beams = build_beams([(0.0, 0.0, 0.0), enu])
    rates = path_rates(beams, *enu_from_hadec(ha, dec, lat), lat)
    assert abs((rates[1] - rates[0]) * 1e3 - rate) < RATE_TABLE_TOL_MM_S


def test_uv_ellipse_tms():
    """TMS section 4.1 (secondary): u^2 + ((v - Lz cos dec)/sin dec)^2 = Lx^2 + Ly^2;
    for a 100 m east-west baseline at dec -30 deg the ellipse has semi-axes
    100 m x 50 m centred on the origin (computed)."""
    lat, dec = np.radians(LAT_TMS_DEG), np.radians(-30.0)
    ha = np.linspace(-np.pi, np.pi, 720, endpoint=False)  # a full turn, evenly
    enu = np.array([100.0, 0.0, 0.0])
    u, v, _ = uvw(enu, lat, ha, dec)
    lx, ly, lz = 0.0, 100.0, 0.0  # east-west baseline: Lx = Lz = 0, Ly = E
    lhs = u**2 + ((v - lz * np.cos(dec)) / np.sin(dec)) ** 2
    assert np.max(np.abs(lhs - (lx**2 + ly**2))) < ELLIPSE_TOL_M2
    assert np.max(np.abs(u)) == pytest.approx(100.0, abs=UVW_TABLE_TOL_M)
    assert np.max(np.abs(v)) == pytest.approx(50.0, abs=UVW_TABLE_TOL_M)
    assert abs(u.mean()) < UVW_TABLE_TOL_M and abs(v.mean()) < UVW_TABLE_TOL_M


def test_uv_ellipse_general_baseline():
    """Same TMS ellipse identity for a baseline with north and up components, at a
    northern latitude and dec +45 deg (invented test baseline)."""
    lat, dec = np.radians(37.0), np.radians(45.0)
    enu = np.array([-60.0, 80.0, 3.0])
    sl, cl = np.sin(lat), np.cos(lat)
    lx, ly, lz = -sl * enu[1] + cl * enu[2], enu[0], cl * enu[1] + sl * enu[2]
    ha = np.linspace(-np.pi, np.pi, 721)
    u, v, _ = uvw(enu, lat, ha, dec)
    lhs = u**2 + ((v - lz * np.cos(dec)) / np.sin(dec)) ** 2
    assert np.max(np.abs(lhs - (lx**2 + ly**2))) < ELLIPSE_TOL_M2


# --- the feasible span of K ------------------------------------------------------


@st.composite
def delay_problems(draw):
    """Random small invented arrays: 2-6 lines, stations within +-150 m, internal
    paths, line ranges (some lines fixed: opd_min = opd_max), and a source direction."""
    count = draw(st.integers(2, 6))
    coord = st.floats(-150.0, 150.0, allow_nan=False)
    pos = [(draw(coord), draw(coord), draw(st.floats(-3.0, 3.0))) for _ in range(count)]
    path = [draw(st.floats(0.0, 200.0)) for _ in range(count)]
    lo = [draw(st.floats(0.0, 60.0)) for _ in range(count)]
    width = [draw(st.sampled_from([0.0]) | st.floats(1.0, 150.0)) for _ in range(count)]
    hi = [a + w for a, w in zip(lo, width, strict=True)]
    az = draw(st.floats(0.0, 2 * np.pi))
    alt = draw(st.floats(0.0, np.pi / 2))
    s = (np.cos(alt) * np.sin(az), np.cos(alt) * np.cos(az), np.sin(alt))
    return build_beams(pos, path, lo, hi), s


def _brute_force_feasible(beams, pds, k_values):
    """Direct check of every line's range for each candidate K (independent of
    offset_span): x_i = K + p_i . s - path_i within [opd_min_i, opd_max_i]."""
    x = k_values[None, :] + pds[:, None] - beams.path_m[:, None]
    ok = (x >= beams.opd_min_m[:, None] - SPAN_TOL_M) & (x <= beams.opd_max_m[:, None] + SPAN_TOL_M)
    return ok.all(axis=0)


@settings(max_examples=200, deadline=None)
@given(delay_problems())
def test_offset_span_against_brute_force(problem):
    """DOMAIN.md section 3 (x_i = K + p_i . s - a_i - f_i in [opd_min, opd_max]):
    every K in the span keeps every line in range, and the span is empty exactly when
    no sampled K is feasible.  The samples are a fine grid plus every line's own
    lower requirement (the feasible set, if any, starts at one of those)."""
    beams, (e, n, u) = problem
    pds = projected_path(beams, e, n, u)
    span = offset_span(beams, pds)
    lo, hi = float(span.low_m), float(span.high_m)

    need_lo = beams.opd_min_m + beams.path_m - pds
    k_grid = np.concatenate([np.linspace(-800.0, 800.0, 16001), need_lo])
    feasible = _brute_force_feasible(beams, pds, k_grid)
    if span.feasible():
        k_in = np.linspace(lo, hi, 11)
        x = line_paths(beams, pds[:, None], k_in[None, :])
        assert np.all(x >= beams.opd_min_m[:, None] - PATH_TOL_M)
        assert np.all(x <= beams.opd_max_m[:, None] + PATH_TOL_M)
        assert feasible.any()
    else:
        assert not feasible.any() or hi - lo > -2 * SPAN_TOL_M
    # every feasible sample lies in the span
    kf = k_grid[feasible]
    assert np.all(kf >= lo - 2 * SPAN_TOL_M) and np.all(kf <= hi + 2 * SPAN_TOL_M)


@settings(max_examples=100, deadline=None)
@given(delay_problems())
def test_offset_span_limiting_lines(problem):
    """The lines named by low_line/high_line set the bounds: at K = low, line
    low_line sits at its minimum; at K = high, high_line sits at its maximum (the
    span's documented meaning, DOMAIN.md section 3)."""
    beams, (e, n, u) = problem
    pds = projected_path(beams, e, n, u)
    span = offset_span(beams, pds)
    x_low = line_paths(beams, pds, span.low_m)
    x_high = line_paths(beams, pds, span.high_m)
    assert abs(x_low[span.low_line] - beams.opd_min_m[span.low_line]) < PATH_TOL_M
    assert abs(x_high[span.high_line] - beams.opd_max_m[span.high_line]) < PATH_TOL_M
    assert np.all(x_low >= beams.opd_min_m - PATH_TOL_M)
    assert np.all(x_high <= beams.opd_max_m + PATH_TOL_M)


def test_offset_span_vectorised_over_times():
    """offset_span over an (L, T) array of projected paths equals column-by-column
    calls (internal consistency, no outside source; invented test array)."""
    rng = np.random.default_rng(3)
    beams = build_beams(rng.uniform(-150, 150, (4, 3)), rng.uniform(0, 100, 4), 0.0, 80.0)
    ha = np.linspace(-1.5, 1.5, 25)
    pds = projected_path(beams, *enu_from_hadec(ha, np.radians(-40.0), np.radians(-26.1)))
    span = offset_span(beams, pds)
    for k in range(len(ha)):
        one = offset_span(beams, pds[:, k])
        assert one.low_m == span.low_m[k] and one.high_m == span.high_m[k]
        assert one.low_line == span.low_line[k] and one.high_line == span.high_line[k]


# --- facts of the trade (common practice, no source) -----------------------------

RAIL_ARRAY = {
    "site": {"name": "test site", "latitude_deg": -26.1, "longitude_deg": -66.2, "height_m": 3050},
    "stations": [
        {"name": "pad-a", "east_m": 0.0, "north_m": 0.0, "up_m": 0.0, "internal_path_m": 40.0},
        {"name": "pad-b", "east_m": 200.0, "north_m": 0.0, "up_m": 0.0, "internal_path_m": 40.0},
    ],
    "delay_lines": [
        # a 60 m mechanical rail, entered as optical path 0..120 m (light passes twice)
        {"name": "line-a", "opd_min_m": 0.0, "opd_max_m": 2 * 60.0, "max_rate_m_s": 1.0},
        {"name": "line-b", "opd_min_m": 0.0, "opd_max_m": 2 * 60.0, "max_rate_m_s": 1.0},
    ],
    "configurations": [{"name": "pair", "feeds": {"line-a": "pad-a", "line-b": "pad-b"}}],
}


@pytest.mark.parametrize("bs_m, feasible", [(119.9, True), (-119.9, True), (120.1, False),
                                            (-120.1, False), (0.0, True)])  # fmt: skip
def test_sixty_metre_rail_absorbs_120_m_of_path(bs_m, feasible):
    """Common practice, no source: a carriage moving d changes the optical path by
    2d, so two lines on 60 m rails (0-120 m optical each, as the array file states
    them) absorb at most 120 m of path difference b . s between their stations."""
    beams = parse_array(RAIL_ARRAY).beams("pair")
    assert np.all(beams.opd_max_m - beams.opd_min_m == 120.0)
    pds = np.array([0.0, bs_m])  # b . s of pad-b relative to pad-a
    span = offset_span(beams, pds)
    assert bool(span.feasible()) is feasible
    assert float(span.width_m) == pytest.approx(120.0 - abs(bs_m), abs=PATH_TOL_M)


@pytest.mark.parametrize("baseline_m, alt_deg, expected_m", [(300.0, 30.0, 260.0),
                                                             (120.0, 35.0, 100.0)])  # fmt: skip
def test_geometric_delay_size(baseline_m, alt_deg, expected_m):
    """Common practice, no source: geometric delays reach ~100 m and more for
    baselines of a few hundred metres far from the zenith; exact value B cos(alt)
    for a source along the baseline (computed)."""
    beams = build_beams([(0.0, 0.0, 0.0), (baseline_m, 0.0, 0.0)])
    alt, az = np.radians(alt_deg), np.radians(90.0)  # toward the east, along the baseline
    s = (np.cos(alt) * np.sin(az), np.cos(alt) * np.cos(az), np.sin(alt))
    pds = projected_path(beams, *s)
    delay = pds[1] - pds[0]
    assert delay == pytest.approx(baseline_m * np.cos(alt), abs=TRADE_DELAY_TOL_M)
    assert delay == pytest.approx(expected_m, rel=0.02)


@pytest.mark.parametrize("enu", [(300.0, 0.0, 0.0), (0.0, 300.0, 0.0), (212.1, -212.1, 0.0)])
def test_tracking_rate_bound(enu):
    """DOMAIN.md section 3: |d(p.s)/dt| <= omega B (omega from IERS Conventions 2010,
    confirmed; 7.2921 mm/s per 100 m, computed), so a 300 m baseline tracks at no
    more than ~21.9 mm/s.  Only the baseline's component across the pole turns:
    the fastest rate above the horizon approaches omega sqrt(Lx^2 + Ly^2) (TMS
    section 4.1 dw/dt, secondary), a few mm/s per 100 m."""
    lat = np.radians(-26.1)
    beams = build_beams([(0.0, 0.0, 0.0), enu])
    b = float(np.linalg.norm(enu))
    ha, dec = np.meshgrid(np.linspace(-np.pi, np.pi, 361), np.radians(np.linspace(-89, 89, 179)))
    s = enu_from_hadec(ha, dec, lat)
    up = s[2] > 0.0
    rates = path_rates(beams, *s, lat)
    rel = np.abs(rates[1] - rates[0])[up]
    bound = max_tracking_rate_m_s(b)
    assert bound == pytest.approx(OMEGA_EARTH_RAD_S * b, rel=RATE_BOUND_RTOL)
    assert bound * 1e3 == pytest.approx(21.9 * b / 300.0, abs=0.05)
    assert rel.max() <= bound * (1.0 + RATE_BOUND_RTOL)
    e, n, u = enu
    lx, ly = -np.sin(lat) * n + np.cos(lat) * u, e
    turning = OMEGA_EARTH_RAD_S * np.hypot(lx, ly)
    assert rel.max() <= turning * (1.0 + RATE_BOUND_RTOL)
    assert rel.max() >= 0.95 * turning
    assert rel.max() * 1e3 / (b / 100.0) > 2.0  # mm/s per 100 m of baseline
