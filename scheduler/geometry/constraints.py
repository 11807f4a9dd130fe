"""Every observing constraint at once, for any (target, time) pairs.

Pure numpy over a :class:`~scheduler.model.problem.NightProblem`.  The result of
:func:`evaluate` holds the geometry (altitude, azimuth, projected paths, K span) and a
reason code per pair (:mod:`scheduler.model.reasons`): OK where everything holds, else
the first limit that fails in this order: too faint for its mode tonight, altitude below
the limit, above the limit, a station's horizon mask, the Sun too close, the Moon too
close (while it is up), pointing into a strong wind, delay range, over-resolved on every
baseline, the target's own time window.  Planning margins are applied to every limit.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.geometry.bodies import moon_enu, sun_enu
from scheduler.geometry.delay import (
    OffsetSpan,
    offset_span,
    projected_baselines,
    projected_path,
)
from scheduler.geometry.horizon import mask_altitude
from scheduler.geometry.sky import altaz, enu_from_cirs, grid_enu, separation
from scheduler.geometry.visibility import usable
from scheduler.model.problem import NightProblem
from scheduler.model.reasons import Limit, delay_codes, horizon_code


@dataclass(frozen=True, eq=False)
class Evaluation:
    """Geometry and verdict for broadcast (target, time) pairs: ENU direction, altitude
    and azimuth (rad), projected paths ``p_i . s`` (L, ...) in metres, the span of the
    common constant K, and the reason code."""

    e: np.ndarray
    n: np.ndarray
    u: np.ndarray
    alt_rad: np.ndarray
    az_rad: np.ndarray
    pds_m: np.ndarray
    span: OffsetSpan
    code: np.ndarray

    @property
    def ok(self) -> np.ndarray:
        return self.code == Limit.OK


def into_wind(problem: NightProblem, az_rad: np.ndarray) -> np.ndarray:
    """Where the telescopes would point within the limit's angle of the azimuth the
    wind comes from, while it blows above the limit's speed."""
    c, lim = problem.conditions, problem.limits
    if c.wind_from_rad is None or not c.wind_speed_m_s > lim.wind_speed_max_m_s:
        return np.zeros(np.shape(az_rad), bool)
    off = np.abs(np.angle(np.exp(1j * (np.asarray(az_rad) - c.wind_from_rad))))
    return off < lim.wind_halfwidth_rad


def over_resolved(problem: NightProblem, idx: np.ndarray, pds_m: np.ndarray) -> np.ndarray:
    """Where no baseline measures the target: past the first null or V^2 below the floor
    on every projected baseline.  A target usable at the full length of the shortest
    baseline never is (projection only shortens, and V^2 falls with x inside the main
    lobe), so only the others are computed."""
    t, beams = problem.targets, problem.beams
    shape = np.broadcast_shapes(np.shape(idx), pds_m.shape[1:])
    out = np.zeros(shape, bool)
    if len(beams) < 2:
        return out
    theta = np.nan_to_num(t.diameter_rad[idx])
    lam = problem.wavelength_m[idx]
    shortest = float(np.min(np.linalg.norm(beams.position_enu_m[:, None]
                                           - beams.position_enu_m[None], axis=-1)
                            + np.eye(len(beams)) * 1e12))  # fmt: skip
    risky = ~usable(np.pi * theta * shortest / lam, t.limb_darkening[idx],
                    problem.limits.min_squared_visibility)  # fmt: skip
    if not np.any(risky):
        return out
    x = np.pi * theta * projected_baselines(beams, pds_m) / lam  # (P, ...)
    fine = usable(x, np.broadcast_to(t.limb_darkening[idx], x.shape[1:]),
                  problem.limits.min_squared_visibility)  # fmt: skip
    return np.broadcast_to(risky, shape) & ~fine.any(axis=0)


def evaluate(problem: NightProblem, idx: np.ndarray, t_s: np.ndarray) -> Evaluation:
    """Every constraint for targets ``idx`` at POSIX times ``t_s`` (broadcast)."""
    i = np.asarray(idx, int)
    t = np.asarray(t_s, float)
    e, n, u = enu_from_cirs(problem.ri_rad[i], problem.di_rad[i], problem.night.frame, t)
    return _judge(problem, i, t, e, n, u)


def evaluate_grid(problem: NightProblem, t_s: np.ndarray) -> Evaluation:
    """Every target at every time of ``t_s``: arrays of shape (N, T), by the matrix form
    of the fast path."""
    t = np.asarray(t_s, float)
    e, n, u = grid_enu(problem.ri_rad, problem.di_rad, problem.night.frame, t)
    return _judge(problem, np.arange(len(problem.targets))[:, None], t[None, :], e, n, u)


def _judge(problem: NightProblem, idx: np.ndarray, t: np.ndarray, e: np.ndarray,
           n: np.ndarray, u: np.ndarray) -> Evaluation:  # fmt: skip
    lim, m, beams = problem.limits, problem.margins, problem.beams
    alt, az = altaz(e, n, u)
    pds = projected_path(beams, e, n, u)
    span = offset_span(beams, pds)
    code = np.zeros(alt.shape, int)

    def mark(bad: np.ndarray, value: int | np.ndarray) -> None:
        np.copyto(code, value, where=(code == Limit.OK) & bad)

    mark(np.broadcast_to(problem.faint[idx] != 0, code.shape), problem.faint[idx])
    mark(alt < lim.min_altitude_rad + m.altitude_rad, Limit.LOW)
    mark(alt > lim.max_altitude_rad - m.altitude_rad, Limit.HIGH)
    for k, mask in enumerate(beams.horizons):
        if mask:
            mark(alt < mask_altitude(mask, az) + m.altitude_rad, horizon_code(k))
    # the Sun and Moon depend on time only: computed on t, broadcast against the targets
    mark(separation(e, n, u, *sun_enu(problem.night, t)) < lim.sun_separation_min_rad,
         Limit.SUN)  # fmt: skip
    me, mn, mu = moon_enu(problem.night, t)
    moon_close = separation(e, n, u, me, mn, mu) < lim.moon_separation_min_rad
    mark(moon_close & (mu > 0.0), Limit.MOON)
    mark(into_wind(problem, az), Limit.WIND)
    if len(beams):
        mark(~span.feasible(m.delay_m), delay_codes(span.high_line, span.low_line, len(beams)))
    mark(over_resolved(problem, idx, pds), Limit.RESOLVED)
    ws, we = problem.targets.window_start_s[idx], problem.targets.window_end_s[idx]
    with np.errstate(invalid="ignore"):
        mark(~np.isnan(ws) & ((t < ws) | (t > we)), Limit.TIME_WINDOW)
    return Evaluation(e, n, u, alt, az, pds, span, code)
