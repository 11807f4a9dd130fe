"""Maps of the reachable sky: one per planned choice, with the pool's tracks tonight.

The map (:func:`scheduler.geometry.reach.reach_map`) covers hour angles from -12 h to
+12 h and the declinations that rise above the altitude limit, every
:data:`HA_STEP_H` hours and :data:`DEC_STEP_DEG` degrees; a pixel is reachable when
the altitude is inside its limits and every carriage inside its range (with the
planning margin).  Station horizon masks, the Moon and the Sun are not part of the
map: it shows what the choice itself decides.  Each science target of the pool is drawn
as its track over tonight's dark hours (apparent hour angle and declination) while it
is above the altitude limit.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from scheduler.geometry.reach import ReachMap, reach_map, sky_axes
from scheduler.geometry.sky import altaz, enu_from_hadec, hour_angle
from scheduler.model.problem import NightProblem

HA_STEP_H = 0.1
DEC_STEP_DEG = 1.0
TRACK_STEP_S = 600.0
RAD_PER_H = np.pi / 12.0


@dataclass(frozen=True)
class Track:
    """A target's path across the map tonight: hour angle and declination (rad)."""

    target: str
    ha_rad: np.ndarray
    dec_rad: np.ndarray


@dataclass(frozen=True)
class ChoiceMap:
    """The reachable sky of one planned choice and the pool's tracks over it."""

    name: str
    title: str
    reach: ReachMap
    tracks: tuple[Track, ...]


def choice_map(problem: NightProblem, name: str, title: str,
               tracks: tuple[Track, ...]) -> ChoiceMap:  # fmt: skip
    """The map of ``problem``'s beams at its site, with the pool's ``tracks``
    (:func:`pool_tracks`, the same for every choice of a night)."""
    lat = problem.night.frame.latitude_rad
    lim = problem.limits
    ha, dec = sky_axes(lat, lim.min_altitude_rad, HA_STEP_H * RAD_PER_H,
                       np.radians(DEC_STEP_DEG))  # fmt: skip
    reach = reach_map(problem.beams, lat, (lim.min_altitude_rad, lim.max_altitude_rad), ha, dec,
                      problem.margins.delay_m)  # fmt: skip
    return ChoiceMap(name, title, reach, tracks)


def pool_tracks(problem: NightProblem) -> tuple[Track, ...]:
    """Science targets' tracks over the dark hours, NaN where below the altitude limit
    (targets never above it are left out)."""
    t = problem.night.grid(TRACK_STEP_S)
    lat = problem.night.frame.latitude_rad
    out = []
    for i in np.flatnonzero(problem.targets.is_science):
        ha = hour_angle(problem.ri_rad[i], problem.night.frame, t)
        dec = np.full(t.shape, float(problem.di_rad[i]))
        alt, _ = altaz(*enu_from_hadec(ha, dec, lat))
        if np.any(alt >= problem.limits.min_altitude_rad):
            ha = np.where(alt >= problem.limits.min_altitude_rad, ha, np.nan)
            out.append(Track(problem.targets.names[i], ha, dec))
    return tuple(out)


def map_document(m: ChoiceMap) -> dict[str, Any]:
    """The map as JSON: axes in hours and degrees, ``reachable`` rows of booleans (one
    row per declination, south first), ``headroom_m`` (null outside the altitude
    limits), and the tracks."""
    r = m.reach
    room = np.round(r.headroom_m, 3)
    return {
        "schema": "opdplan-reach-map/1",
        "configuration": m.name,
        "title": m.title,
        "ha_h": [round(float(x) / RAD_PER_H, 4) for x in r.ha_rad],
        "dec_deg": [round(float(np.degrees(x)), 4) for x in r.dec_rad],
        "reachable": r.reachable.tolist(),
        "headroom_m": [[None if np.isnan(v) else float(v) for v in row] for row in room],
        "tracks": [{"target": tr.target,
                    "ha_h": [None if np.isnan(x) else round(float(x) / RAD_PER_H, 4)
                             for x in tr.ha_rad],
                    "dec_deg": round(float(np.degrees(tr.dec_rad[0])), 4)}
                   for tr in m.tracks],
    }  # fmt: skip
