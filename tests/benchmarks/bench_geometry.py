"""Benchmark: geometry of 1000 targets x 200 times x 6 delay lines.

The fast path (apparent place once per night, then Earth rotation) against astropy's
full ICRS -> AltAz transform of the same grid, measured in the same run.  Prints wall
times, the speed ratio (goal: at least 50x), the largest disagreement in direction and in
carriage-position differences, and peak memory of each path.

Run: ``python tests/benchmarks/bench_geometry.py``
"""

from __future__ import annotations

import time
import tracemalloc

import numpy as np

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.astro.ephemeris import earth_frame, location, radec_places, to_time
from scheduler.geometry.delay import offset_span, projected_path
from scheduler.geometry.sky import altaz, grid_enu, separation
from scheduler.inputs.array_file import parse_array

N_TARGETS, N_TIMES, N_LINES = 1000, 200, 6


def bench_array():
    rng = np.random.default_rng(7)
    stations = [
        {"name": f"pad{k}", "east_m": float(e), "north_m": float(n), "up_m": 0.0,
         "internal_path_m": 50.0}
        for k, (e, n) in enumerate(rng.uniform(-150, 150, size=(N_LINES, 2)))
    ]  # fmt: skip
    lines = [{"name": f"line{k}", "opd_min_m": 0.0, "opd_max_m": 120.0, "max_rate_m_s": 1.0}
             for k in range(N_LINES)]  # fmt: skip
    data = {
        "site": {"name": "bench", "latitude_deg": -26.1, "longitude_deg": -66.2, "height_m": 3050},
        "stations": stations, "delay_lines": lines,
        "configurations": [
            {"name": "all", "feeds": {f"line{k}": f"pad{k}" for k in range(N_LINES)}}
        ],
    }  # fmt: skip
    return parse_array(data, "bench")


def fast(array, beams, ra, dec, t):
    frame = earth_frame(array.site, float(t.mean()))
    ri, di = radec_places(ra, dec, frame.t_ref_s)
    e, n, u = grid_enu(ri, di, frame, t)
    return altaz(e, n, u), projected_path(beams, e, n, u)


def full(array, beams, ra, dec, t):
    import astropy.units as au
    from astropy.coordinates import AltAz, SkyCoord

    c = SkyCoord(ra=ra * au.rad, dec=dec * au.rad)[:, None]
    aa = c.transform_to(AltAz(obstime=to_time(t)[None, :], location=location(array.site),
                              pressure=0 * au.hPa))  # fmt: skip
    alt, az = aa.alt.rad, aa.az.rad
    e, n, u = np.cos(alt) * np.sin(az), np.cos(alt) * np.cos(az), np.sin(alt)
    return (alt, az), projected_path(beams, e, n, u)


def measure(fn, *args, repeat: int = 5):
    """Best wall time of ``repeat`` runs (without tracing), then peak memory of one
    traced run (tracemalloc slows numpy, so it is kept out of the timing)."""
    walls = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn(*args)
        walls.append(time.perf_counter() - t0)
    tracemalloc.start()
    fn(*args)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return out, min(walls), peak


def main() -> None:
    array = bench_array()
    beams = array.beams("all")
    rng = np.random.default_rng(11)
    ra = rng.uniform(0, 2 * np.pi, N_TARGETS)
    dec = np.arcsin(rng.uniform(-1.0, 0.6, N_TARGETS))
    t0 = 1807749000.0  # a night in April 2027
    t = t0 + np.linspace(0.0, 10.5 * 3600.0, N_TIMES)
    fast(array, beams, ra[:10], dec[:10], t[:5])  # warm caches (ephemerides, IERS) for both
    (f_altaz, f_pds), f_wall, f_peak = measure(fast, array, beams, ra, dec, t)
    (a_altaz, a_pds), a_wall, a_peak = measure(full, array, beams, ra, dec, t)

    def enu(alt, az):
        return np.cos(alt) * np.sin(az), np.cos(alt) * np.cos(az), np.sin(alt)

    sep = np.degrees(separation(*enu(*f_altaz), *enu(*a_altaz))) * 3600.0
    diff = (f_pds - f_pds[0]) - (a_pds - a_pds[0])
    print(f"grid: {N_TARGETS} targets x {N_TIMES} times x {N_LINES} delay lines")
    print(f"fast path     : {f_wall:8.3f} s   peak memory {f_peak / 2**20:7.1f} MiB")
    print(f"astropy full  : {a_wall:8.3f} s   peak memory {a_peak / 2**20:7.1f} MiB")
    print(f"speed ratio   : {a_wall / f_wall:8.1f} x   (goal >= 50 x)")
    frame = earth_frame(array.site, float(t.mean()))
    ri, di = radec_places(ra, dec, frame.t_ref_s)
    e, n, u = grid_enu(ri, di, frame, t)
    _, span_wall, _ = measure(lambda: offset_span(beams, projected_path(beams, e, n, u)))
    print(f"K span on top : {span_wall:8.3f} s   (delay feasibility of every line, per point)")
    print(f"max direction difference        : {sep.max():.3f} arcsec (goal <= 1)")
    print(f"max carriage-difference mismatch: {np.abs(diff).max() * 1e3:.4f} mm "
          f"(goal <= 1 mm; longest baseline {beams.longest_baseline_m():.0f} m)")  # fmt: skip


if __name__ == "__main__":
    main()
