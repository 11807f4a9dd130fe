"""Every observing constraint at once, for any (target, time) pairs.

Pure numpy over a :class:`~scheduler.model.problem.NightProblem`.  The result of
:func:`evaluate` holds the geometry (altitude, azimuth, projected paths, K span) and a
reason code per pair (:mod:`scheduler.model.reasons`): OK where everything holds, else
the first limit that fails in this order: altitude below the limit, above the limit, a
station's horizon mask, the Sun too close, the Moon too close (while it is up), delay
range, the target's own time window.  Planning margins are applied to every limit.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from scheduler.geometry.bodies import moon_enu, sun_enu
from scheduler.geometry.delay import OffsetSpan, offset_span, projected_path
from scheduler.geometry.horizon import mask_altitude
from scheduler.geometry.sky import altaz, enu_from_cirs, grid_enu, separation
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
    if len(beams):
        mark(~span.feasible(m.delay_m), delay_codes(span.high_line, span.low_line, len(beams)))
    ws, we = problem.targets.window_start_s[idx], problem.targets.window_end_s[idx]
    with np.errstate(invalid="ignore"):
        mark(~np.isnan(ws) & ((t < ws) | (t > we)), Limit.TIME_WINDOW)
    return Evaluation(e, n, u, alt, az, pds, span, code)
