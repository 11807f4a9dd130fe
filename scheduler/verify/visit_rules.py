"""Rules on each planned visit over its samples of the sky, and on its stated carriage
paths (README.md, *The night queue*, *Inputs* and the array file's ``[limits]``;
DOMAIN.md sections 2-4; common practice, no source; the delay relation of Thompson,
Moran & Swenson, section 4.1):

- ``night``: inside the stated night, with the Sun's centre below the array's
  ``sun_altitude_max`` at every sample (and at the stated night's edges);
- ``sun``: never closer to the Sun than ``sun_separation_min``;
- ``moon``: never closer to the Moon than ``moon_separation_min`` while the Moon is up;
- ``altitude``: between ``min_altitude`` and ``max_altitude`` at every sample;
- ``horizon``: above the horizon mask of every station in use;
- ``time_window``: a time-critical target inside its catalog window;
- ``wind``: with the wind above the array's ``wind_speed_max_m_s`` and its direction
  known, no sample points within ``wind_halfwidth`` of the azimuth it comes from (the
  shortest way round);
- ``delay``: one common K puts every line inside its range at every sample;
- ``carriage_range``: ``opd_start_m`` and ``opd_end_m`` name exactly the lines in use,
  and every value lies inside its line's range;
- ``carriage_geometry``: at the stated instant (``start_s``, ``end_s``) the paths agree
  with the geometry: each line's implied ``K_i = x_i - p_i.s + a_i + f_i`` is one common
  constant, to :data:`OPD_TOL_M`.
"""

from __future__ import annotations

import math

import numpy as np

from scheduler.model.array import Limits
from scheduler.model.conditions import Conditions
from scheduler.model.targets import Targets
from scheduler.model.times import iso_utc
from scheduler.verify.declared import LineSet
from scheduler.verify.document import Entry
from scheduler.verify.geometry import (
    altaz_from_enu,
    angle_between,
    azimuth_step,
    implied_k,
    k_span,
    mask_altitude,
    projected_paths,
)
from scheduler.verify.report import Violation
from scheduler.verify.sky import Track
from scheduler.verify.tolerances import (
    ALT_TOL_RAD,
    BODY_SEP_TOL_RAD,
    OPD_TOL_M,
    RANGE_TOL_M,
    SUN_ALT_TOL_RAD,
    TIME_TOL_S,
    WIND_TOL_RAD,
)

KEYS = ("opd_start_m", "opd_end_m")


def stated_paths(v: Entry, key: str, lines: LineSet) -> np.ndarray | None:
    """The stated paths of the lines in use, in line order; None if one is missing."""
    paths = v.opd_start_m if key == "opd_start_m" else v.opd_end_m
    if any(name not in paths for name in lines.names):
        return None
    return np.array([paths[name] for name in lines.names], float)


def range_violations(v: Entry, lines: LineSet) -> list[Violation]:
    """Lines missing or extra in the stated paths, and paths outside a line's range."""
    found = []
    for key in KEYS:
        paths = v.opd_start_m if key == "opd_start_m" else v.opd_end_m
        missing = sorted(set(lines.names) - set(paths))
        extra = sorted(set(paths) - set(lines.names))
        if missing or extra:
            found.append(Violation("carriage_range", v.id, f"{key} lacks {missing} and has "
                                   f"{extra} beyond the lines in use"))  # fmt: skip
        for i, name in enumerate(lines.names):
            x = paths.get(name)
            lo, hi = float(lines.opd_min_m[i]), float(lines.opd_max_m[i])
            if x is not None and not lo - RANGE_TOL_M <= x <= hi + RANGE_TOL_M:
                found.append(Violation("carriage_range", v.id, f"{key} of {name} is {x:.6f} m, "
                                       f"outside its range {lo:g}..{hi:g} m"))  # fmt: skip
    return found


def geometry_violations(v: Entry, tr: Track, lines: LineSet) -> list[Violation]:
    """Stated paths at the visit's start and end against the geometry then."""
    found = []
    for key, k in (("opd_start_m", 0), ("opd_end_m", -1)):
        x = stated_paths(v, key, lines)
        if x is None or len(x) == 0:
            continue
        kk = implied_k(x, projected_paths(tr.s[k], lines.position_m), lines.path_m)
        spread = float(kk.max() - kk.min())
        if spread > OPD_TOL_M:
            worst = lines.names[int(np.argmax(np.abs(kk - np.median(kk))))]
            found.append(Violation("carriage_geometry", v.id, f"{key} disagrees with the geometry "
                                   f"at {key[4:-2]}: the lines imply constants {spread * 1e3:.2f}"
                                   f" mm apart (worst: {worst})"))  # fmt: skip
    return found


def _first(bad: np.ndarray, track: Track) -> str:
    """The first sample at which ``bad`` holds, as UTC."""
    return iso_utc(float(track.t_s[int(np.argmax(bad))]))


def _deg(x: float) -> str:
    return f"{math.degrees(x):.4f} deg"


def _altitude(v: Entry, tr: Track, lim: Limits) -> list[Violation]:
    low = tr.alt < lim.min_altitude_rad - ALT_TOL_RAD
    high = tr.alt > lim.max_altitude_rad + ALT_TOL_RAD
    found = []
    if low.any():
        found.append(Violation("altitude", v.id, f"at {_deg(float(tr.alt.min()))}, below the "
                               f"minimum {_deg(lim.min_altitude_rad)} from {_first(low, tr)}"))
    if high.any():
        found.append(Violation("altitude", v.id, f"at {_deg(float(tr.alt.max()))}, above the "
                               f"maximum {_deg(lim.max_altitude_rad)} from {_first(high, tr)}"))
    return found  # fmt: skip


def _horizon(v: Entry, tr: Track, lines: LineSet) -> list[Violation]:
    found = []
    for station, mask in dict(zip(lines.stations, lines.masks, strict=True)).items():
        limit = mask_altitude(mask, tr.az)
        below = tr.alt < limit - ALT_TOL_RAD
        if below.any():
            k = int(np.argmax(below))
            found.append(Violation("horizon", v.id, f"behind the horizon of station {station} at "
                                   f"{iso_utc(float(tr.t_s[k]))}: altitude {_deg(float(tr.alt[k]))}"
                                   f", the mask allows {_deg(float(limit[k]))}"))  # fmt: skip
    return found


def _delay(v: Entry, tr: Track, lines: LineSet) -> list[Violation]:
    pds = projected_paths(tr.s, lines.position_m)
    low, high = k_span(pds, lines.path_m, lines.opd_min_m, lines.opd_max_m)
    short = low - high
    bad = short > OPD_TOL_M
    if not bad.any():
        return []
    return [Violation("delay", v.id, f"no common constant puts every line in range from "
                      f"{_first(bad, tr)} (short by up to {float(short.max()) * 1e3:.1f} mm)")]


def _night(v: Entry, tr: Track, lim: Limits, night: tuple[float, float]) -> list[Violation]:
    found = []
    if v.start_s < night[0] - TIME_TOL_S or v.end_s > night[1] + TIME_TOL_S:
        found.append(Violation("night", v.id, f"{iso_utc(v.start_s)}-{iso_utc(v.end_s)} is "
                               f"outside the night {iso_utc(night[0])}-{iso_utc(night[1])}"))
    sun_alt, _ = altaz_from_enu(tr.sun)
    up = sun_alt > lim.sun_altitude_max_rad + SUN_ALT_TOL_RAD
    if up.any():
        found.append(Violation("night", v.id, f"the Sun is at {_deg(float(sun_alt.max()))}, above "
                               f"{_deg(lim.sun_altitude_max_rad)}, from {_first(up, tr)}"))
    return found  # fmt: skip


def _bodies(v: Entry, tr: Track, lim: Limits) -> list[Violation]:
    found = []
    sun_sep = angle_between(tr.s, tr.sun)
    near = sun_sep < lim.sun_separation_min_rad - BODY_SEP_TOL_RAD
    if near.any():
        found.append(Violation("sun", v.id, f"{_deg(float(sun_sep.min()))} from the Sun, less "
                               f"than {_deg(lim.sun_separation_min_rad)}, from {_first(near, tr)}"))
    moon_sep = angle_between(tr.s, tr.moon)
    moon_alt, _ = altaz_from_enu(tr.moon)
    near = (moon_sep < lim.moon_separation_min_rad - BODY_SEP_TOL_RAD) & (
        moon_alt > BODY_SEP_TOL_RAD)
    if near.any():
        found.append(Violation("moon", v.id, f"{_deg(float(moon_sep[near].min()))} from the Moon "
                               f"while it is up, less than {_deg(lim.moon_separation_min_rad)}, "
                               f"from {_first(near, tr)}"))
    return found  # fmt: skip


def _window(v: Entry, targets: Targets) -> list[Violation]:
    i = targets.index(v.target)
    lo, hi = float(targets.window_start_s[i]), float(targets.window_end_s[i])
    if math.isnan(lo) or (v.start_s >= lo - TIME_TOL_S and v.end_s <= hi + TIME_TOL_S):
        return []
    return [Violation("time_window", v.id, f"{iso_utc(v.start_s)}-{iso_utc(v.end_s)} is outside "
                      f"the window {iso_utc(lo)}-{iso_utc(hi)} of {v.target}")]  # fmt: skip


def wind_violations(v: Entry, tr: Track, lim: Limits, c: Conditions) -> list[Violation]:
    """Samples pointing into a wind stronger than the limit."""
    if c.wind_from_rad is None or not c.wind_speed_m_s > lim.wind_speed_max_m_s:
        return []
    off = azimuth_step(tr.az, c.wind_from_rad)
    into = off < lim.wind_halfwidth_rad - WIND_TOL_RAD
    if not into.any():
        return []
    return [Violation("wind", v.id, f"points {_deg(float(off.min()))} from the azimuth the "
                      f"wind ({c.wind_speed_m_s:g} m/s, above {lim.wind_speed_max_m_s:g}) comes "
                      f"from, {_deg(c.wind_from_rad % (2.0 * math.pi))}, within "
                      f"{_deg(lim.wind_halfwidth_rad)}, from {_first(into, tr)}")]  # fmt: skip


def sky_violations(v: Entry, tr: Track, targets: Targets, lim: Limits, lines: LineSet,
                   night: tuple[float, float]) -> list[Violation]:  # fmt: skip
    """Every sky rule of one planned visit over its samples ``tr``."""
    return (_night(v, tr, lim, night) + _bodies(v, tr, lim) + _altitude(v, tr, lim)
            + _horizon(v, tr, lines) + _window(v, targets) + _delay(v, tr, lines))  # fmt: skip


def night_edge_violations(edge_sun: np.ndarray, lim: Limits,
                          night: tuple[float, float]) -> list[Violation]:  # fmt: skip
    """The stated night's start and end must themselves be dark enough."""
    sun_alt, _ = altaz_from_enu(edge_sun)
    return [Violation("night", f"night.{key}_utc", f"the Sun is at {_deg(float(alt))} at "
                      f"{iso_utc(t)}, above {_deg(lim.sun_altitude_max_rad)}")
            for key, t, alt in zip(("start", "end"), night, sun_alt, strict=True)
            if alt > lim.sun_altitude_max_rad + SUN_ALT_TOL_RAD]  # fmt: skip
